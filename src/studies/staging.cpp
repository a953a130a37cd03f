#include "rxtrain/studies/staging.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <stdexcept>
#include <type_traits>

#include "rxtrain/analysis/train_warnings.hpp"
#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/stages/exchanger.hpp"

namespace rxtrain {

namespace {

// Where the train's conversion and temperature limit stand, shared by the
// two halves of the check.
struct Setup {
  const Case& c;
  const Mechanism& mech;
  ConversionBasis basis;
  double target = 0;
  bool exothermic = true;
  // The limit a bed's temperature moves towards: T_max (exothermic) or
  // T_in_min (endothermic); empty when the case gives none.
  std::optional<double> T_limit;
  StagingLimit limit_kind = StagingLimit::TMax;
  const char* limit_label = "T_max";
  // The first reactor's, given to every staged bed.
  std::optional<double> bulk_density;
  SourceLocation bed_where;
  double activity = 1;                 // of every staged bed (the case's reactors')
  const LayoutCase* layout = nullptr;  // the first reactor's bed, pellet and viscosity
};

TrainResult empty_result(const Case& c) {
  TrainResult r = TrainResult::for_case(c);
  r.warnings.clear();  // the caller sets them (the as-given run carries the case's)
  r.outlet = c.feed;
  r.conversion = c.conversion_basis().conversion(c.feed);
  return r;
}

void append(TrainResult& t, StageResult r, const Case& c) {
  if (!c.space_velocity_basis.empty()) add_space_velocities(c.mechanism, r, c.space_velocity_basis);
  for (const auto& w : r.warnings) t.warnings.push_back(w);
  t.outlet = r.outlet;
  t.conversion = c.conversion_basis().conversion(r.outlet);
  t.stages.push_back(std::move(r));
}

// Past the limit, in the direction the bed's temperature moves.
bool beyond(const Setup& s, const StageResult& r) {
  if (!s.T_limit) return false;
  return s.exothermic ? r.T_max > *s.T_limit : r.T_min < *s.T_limit;
}

// The point where a tubular stage first meets the temperature limit: the
// stage re-run with the limit as its stop temperature. `spec` sets the
// volume or target of the re-run.
std::optional<LimitPoint> limit_crossing(const Setup& s, const ReactorSpec& spec,
                                         const Stream& inlet, const SunContext& ctx,
                                         const PfrOptions& pfr) {
  PfrOptions o = pfr;
  o.stop_temperature = s.T_limit;
  const StageResult r = run_pfr(s.mech, spec, inlet, s.basis, ctx, o);
  if (std::abs(r.outlet.T - *s.T_limit) > 1e-6 * *s.T_limit &&
      !(s.exothermic ? inlet.T >= *s.T_limit : inlet.T <= *s.T_limit))
    return std::nullopt;
  return LimitPoint{r.conversion, r.volume.value_or(0.0), r.outlet.T, false};
}

// ---- the train as given ---------------------------------------------------

StageKind kind_of(const StageSpec& spec) {
  if (std::holds_alternative<ExchangerSpec>(spec)) return StageKind::Exchanger;
  return std::get<ReactorSpec>(spec).type == ReactorType::Cstr ? StageKind::Cstr : StageKind::Pfr;
}

StageNote note(StageNoteKind kind) {
  StageNote n;
  n.kind = kind;
  return n;
}

AsGivenStage& stage_of(StagingResult& res, const std::string& id) {
  return *std::find_if(res.as_given.begin(), res.as_given.end(),
                       [&](const AsGivenStage& a) { return a.id == id; });
}

// The last reactor that ran, with its spec and inlet.
struct LastReactor {
  const ReactorSpec* spec = nullptr;
  Stream inlet;
  std::optional<double> X_ad_eq;
};

// Runs the stages in order until a sized stage whose own target lies
// beyond its X_ad_eq (that stage limits the train: Equilibrium); the
// stages after it are listed as not run.
LastReactor walk_as_given(const Setup& s, const StagingOptions& o, const SunContext& ctx,
                          StagingResult& res) {
  const Mechanism& mech = s.mech;
  res.as_given_run = empty_result(s.c);
  res.as_given_run.warnings = s.c.warnings;
  Stream stream = s.c.feed;
  std::string infeasible_stage;
  LastReactor last;
  for (const auto& spec : s.c.train) {
    AsGivenStage a;
    a.id = stage_id(spec);
    a.kind = kind_of(spec);
    a.T_in = stream.T;
    a.X_in = s.basis.conversion(stream);
    if (!infeasible_stage.empty()) {
      a.notes.push_back(note(StageNoteKind::NotRun));
      a.notes.back().blocked_by = infeasible_stage;
      res.as_given.push_back(std::move(a));
      continue;
    }
    StageResult r;
    if (const auto* x = std::get_if<ExchangerSpec>(&spec)) {
      r = run_exchanger(mech, *x, stream, s.basis);
    } else {
      const auto& rs = std::get<ReactorSpec>(spec);
      if (const auto eq =
              adiabatic_equilibrium(mech, stream, rs.heat, s.basis, {}, o.solvers.equilibrium)) {
        a.X_ad_eq = eq->X;
        a.T_ad_eq = eq->stream.T;
      }
      if (rs.target_conversion && a.X_ad_eq && *rs.target_conversion >= *a.X_ad_eq) {
        a.notes.push_back(note(StageNoteKind::OwnTargetBeyondEquilibrium));
        a.notes.back().own_target = *rs.target_conversion;
        infeasible_stage = a.id;
        res.as_given.push_back(std::move(a));
        if (res.limiting_stage.empty()) {
          res.limited_by = StagingLimit::Equilibrium;
          res.limiting_stage = rs.id;
        }
        continue;
      }
      r = rs.type == ReactorType::Pfr ? run_pfr(mech, rs, stream, s.basis, ctx, o.solvers.tube)
                                      : run_cstr(mech, rs, stream, s.basis, ctx, o.solvers.tank());
      last = {&rs, stream, a.X_ad_eq};
    }
    a.ran = true;
    a.T_out = r.outlet.T;
    a.T_max = r.T_max;
    a.T_min = r.T_min;
    a.X_out = r.conversion;
    a.volume = r.volume;
    stream = r.outlet;
    res.as_given.push_back(std::move(a));
    append(res.as_given_run, std::move(r), s.c);
  }
  res.as_given_conversion = s.basis.conversion(stream);
  return last;
}

// The first stage that meets the temperature limit, and where: its note
// tells it whatever limits the train first. Empty id when none does.
std::pair<std::string, LimitPoint> first_crossing(const Setup& s, const StagingOptions& o,
                                                  const SunContext& ctx, StagingResult& res) {
  for (const StageResult& r : res.as_given_run.stages) {
    if (!is_reactor(r.kind) || !beyond(s, r)) continue;
    LimitPoint p{r.conversion, r.volume.value_or(0.0), r.outlet.T, false};
    if (r.kind == StageKind::Pfr) {
      const auto& rs = std::get<ReactorSpec>(
          *std::find_if(s.c.train.begin(), s.c.train.end(),
                        [&](const StageSpec& sp) { return stage_id(sp) == r.id; }));
      if (auto q = limit_crossing(s, rs, r.inlet, ctx, o.solvers.tube)) p = *q;
    }
    p.T = *s.T_limit;
    StageNote n = note(StageNoteKind::PassesLimit);
    n.at = p;
    if (p.V == 0 && (s.exothermic ? r.inlet.T >= *s.T_limit : r.inlet.T <= *s.T_limit))
      n.kind = StageNoteKind::FedPastLimit;
    n.before_target = p.X < s.target - kReachTolerance;
    stage_of(res, r.id).notes = {n};
    return {r.id, p};
  }
  return {};
}

// Size: more catalyst in the last reactor would do, unless the larger bed
// would meet the temperature limit first.
void judge_size(const Setup& s, const StagingOptions& o, const SunContext& ctx,
                const LastReactor& last, StagingResult& res) {
  AsGivenStage& a = stage_of(res, last.spec->id);
  res.limited_by = StagingLimit::Size;
  res.limiting_stage = last.spec->id;
  if (last.spec->type != ReactorType::Pfr || !(s.target > s.basis.conversion(last.inlet))) {
    a.notes = {note(StageNoteKind::NeedsVolume)};
    return;
  }
  ReactorSpec bigger = *last.spec;
  bigger.volume.reset();
  bigger.catalyst_mass.reset();
  bigger.target_conversion = s.target;
  PfrOptions po = o.solvers.tube;
  po.stop_temperature = s.T_limit;
  const StageResult r = run_pfr(s.mech, bigger, last.inlet, s.basis, ctx, po);
  if (r.conversion < s.target - kReachTolerance) {
    const LimitPoint p{r.conversion, r.volume.value_or(0.0), *s.T_limit, true};
    a.notes = {note(StageNoteKind::EnlargedPassesLimit)};
    a.notes.back().at = p;
    res.limited_by = s.limit_kind;
    res.limit_point = p;
  } else {
    res.volume_needed = r.volume;
    a.notes = {note(StageNoteKind::NeedsCatalyst)};
    a.notes.back().volume_needed = *r.volume;
    a.notes.back().catalyst_needed = r.catalyst_mass;
  }
}

// What limits the train as given, first of: equilibrium (a stage's own
// target, or the train's target beyond the last reactor's X_ad_eq), the
// temperature limit, the size; None when it reaches the target.
void check_as_given(const Setup& s, const StagingOptions& o, const SunContext& ctx,
                    StagingResult& res) {
  const LastReactor last = walk_as_given(s, o, ctx, res);
  const auto [crossing_stage, crossing] = first_crossing(s, o, ctx, res);
  if (res.limited_by == StagingLimit::Equilibrium) return;

  const bool short_of_target = res.as_given_conversion < s.target - kReachTolerance;
  if (!last.spec) {
    res.limited_by = StagingLimit::Size;  // no reactor: the words say so
    return;
  }
  if (short_of_target && last.X_ad_eq && s.target > *last.X_ad_eq) {
    // Before what else holds it (kept as "also").
    auto& notes = stage_of(res, last.spec->id).notes;
    notes.insert(notes.begin(), note(StageNoteKind::TargetBeyondEquilibrium));
    res.limited_by = StagingLimit::Equilibrium;
    res.limiting_stage = last.spec->id;
    return;
  }
  if (!crossing_stage.empty()) {
    res.limited_by = s.limit_kind;
    res.limiting_stage = crossing_stage;
    res.limit_point = crossing;
    return;
  }
  if (short_of_target) {
    judge_size(s, o, ctx, last, res);
    return;
  }
  res.limited_by = StagingLimit::None;
}

// ---- the staged answer ------------------------------------------------------

// The maximum-rate temperature at conversion X, clipped to the window.
double max_rate_return(const Setup& s, const StagingOptions& o, double X) {
  const auto& lim = s.c.limits;
  const double lo = lim.T_in_min.value_or(o.solvers.equilibrium.T_min);
  const double hi = lim.T_max.value_or(o.solvers.equilibrium.T_max);
  const auto p = max_rate_temperature(s.mech, s.c.feed, s.basis, X, lo, hi, o.solvers.equilibrium);
  // Empty: the reaction runs backwards at every allowed temperature; the
  // next bed then cannot progress and the loop says so.
  return p ? std::clamp(p->T, lo, hi) : s.c.feed.T;
}

// Temperature an exchanger returns the stream to before the next bed, at
// conversion X after a bed from T_in to T_out. Max-rate: T_opt, or further
// where T_opt would take back less than min_return of the bed's change.
double return_temperature(const Setup& s, const StagingOptions& o, double X, double T_in,
                          double T_out) {
  if (o.return_to == ReturnTo::Inlet) return s.c.feed.T;
  const double T_opt = max_rate_return(s, o, X);
  const double floor = T_out - o.min_return * (T_out - T_in);
  const double T = s.exothermic ? std::min(T_opt, floor) : std::max(T_opt, floor);
  const double lo = s.c.limits.T_in_min.value_or(o.solvers.equilibrium.T_min);
  const double hi = s.c.limits.T_max.value_or(o.solvers.equilibrium.T_max);
  return std::clamp(T, lo, hi);
}

// Max-rate floor: how far short of min_return of the bed's temperature
// change the return to T_opt falls at conversion X on the adiabatic line
// from `inlet` (> 0: short; <= 0: the floor is met). Rises with X: the bed
// moves away from T_opt, which falls with X. Empty where the line ends.
std::optional<double> floor_shortfall(const Setup& s, const StagingOptions& o, const Stream& inlet,
                                      double X_in, double X) {
  const auto line = adiabatic_line(s.mech, inlet, s.basis, X_in, X, 2, o.solvers.equilibrium);
  if (line.truncated || line.points.size() < 2) return std::nullopt;
  const double T = line.points.back().T;
  const double back = s.exothermic ? T - max_rate_return(s, o, X) : max_rate_return(s, o, X) - T;
  return o.min_return * std::abs(T - inlet.T) - back;
}

// Where a bed that ended at X_stop on its approach runs on to under the
// max-rate floor: X_stop when the floor is met there, else the first X
// where it is (bisection), at most 1 - (1 - approach)^2 of the way to X_eq.
double run_on_end(const Setup& s, const StagingOptions& o, const Stream& inlet, double X_in,
                  double X_eq, double X_stop) {
  if (o.return_to != ReturnTo::MaxRate || o.min_return <= 0) return X_stop;
  const auto at_stop = floor_shortfall(s, o, inlet, X_in, X_stop);
  if (!at_stop || *at_stop <= 0) return X_stop;
  const double X_cap = X_in + (1 - (1 - o.approach) * (1 - o.approach)) * (X_eq - X_in);
  const auto at_cap = floor_shortfall(s, o, inlet, X_in, X_cap);
  if (!at_cap || *at_cap > 0) return X_cap;
  double a = X_stop, b = X_cap;
  // 60 halvings: far below any conversion the tables show.
  for (int i = 0; i < 60 && b - a > 1e-12; ++i) {
    const double m = 0.5 * (a + b);
    const auto g = floor_shortfall(s, o, inlet, X_in, m);
    (g && *g <= 0 ? b : a) = m;
  }
  return b;
}

void build_staged(const Setup& s, const StagingOptions& o, const SunContext& ctx,
                  StagingResult& res) {
  const Mechanism& mech = s.mech;
  res.staged_run = empty_result(s.c);
  ReactorSpec bed = bed_stage("", s.bulk_density, s.activity, s.bed_where);
  // Every new bed as the first reactor is built: its pressure drop counts.
  bed.geometry = s.layout->geometry;
  bed.pellet = s.layout->pellet;
  bed.viscosity = s.layout->viscosity;
  PfrOptions po = o.solvers.tube;
  po.stop_temperature = s.T_limit;
  const char* exchanger_prefix = s.exothermic ? "C" : "H";

  Stream stream = s.c.feed;
  double X = s.basis.conversion(stream);
  for (int k = 1; k <= o.max_beds; ++k) {
    if (k > 1) {
      const ExchangerSpec x = interstage_stage(
          fmt::format("{}{}", exchanger_prefix, k - 1),
          return_temperature(s, o, X, res.beds.back().T_in, res.beds.back().T_out), s.bed_where);
      StageResult r = run_exchanger(mech, x, stream, s.basis);
      res.coolers.push_back({x.id, r.inlet.T, r.outlet.T, r.duty});
      stream = r.outlet;
      append(res.staged_run, std::move(r), s.c);
    }
    if (s.T_limit && (s.exothermic ? stream.T >= *s.T_limit : stream.T <= *s.T_limit)) {
      res.stop = {StagedStopKind::FedPastLimit, k, stream.T, X};
      break;
    }
    const auto eq = adiabatic_equilibrium(mech, stream, HeatMode::Adiabatic, s.basis, {},
                                          o.solvers.equilibrium);
    if (!eq || eq->X - X <= kBedNoProgress) {
      res.stop = {StagedStopKind::NoProgress, k, stream.T, X};
      break;
    }
    const double X_stop = approach_end(X, eq->X, o.approach);
    const double X_run = X_stop < s.target ? run_on_end(s, o, stream, X, eq->X, X_stop) : X_stop;
    const double X_bed = std::min(X_run, s.target);
    bed.id = fmt::format("B{}", k);
    bed.target_conversion = X_bed;
    StageResult r = run_pfr(mech, bed, stream, s.basis, ctx, po);
    StagedBed b;
    b.id = bed.id;
    b.T_in = stream.T;
    b.T_out = r.outlet.T;
    b.T_max = r.T_max;
    b.T_min = r.T_min;
    b.X_in = X;
    b.X_out = r.conversion;
    b.X_ad_eq = eq->X;
    b.T_ad_eq = eq->stream.T;
    b.volume = r.volume.value_or(0.0);
    b.catalyst_mass = r.catalyst_mass;
    if (r.conversion < X_bed - kReachTolerance)
      b.ended_by = s.limit_label;
    else
      b.ended_by = X_bed == s.target ? "target" : X_bed > X_stop ? "floor" : "approach";
    res.beds.push_back(b);
    stream = r.outlet;
    X = r.conversion;
    append(res.staged_run, std::move(r), s.c);
    if (X >= s.target - kReachTolerance) {
      res.target_reached = true;
      res.beds_needed = k;
      break;
    }
    if (b.volume <= 0) {
      res.stop = {StagedStopKind::EndsAtInlet, k, b.T_in, b.X_in};
      break;
    }
  }
  // A trailing exchanger with no bed after it is no part of the answer.
  if (res.coolers.size() >= res.beds.size() && !res.coolers.empty()) {
    res.coolers.pop_back();
    res.staged_run.stages.pop_back();
    if (!res.staged_run.stages.empty()) res.staged_run.outlet = res.staged_run.stages.back().outlet;
  }
  res.staged_conversion = res.beds.empty() ? s.basis.conversion(s.c.feed) : res.beds.back().X_out;
  res.staged_run.conversion = res.staged_conversion;

  if (o.return_to == ReturnTo::Inlet)
    res.conversion_limit =
        equilibrium_conversion(mech, s.c.feed, s.c.feed.T, s.basis, {}, o.solvers.equilibrium);
}

}  // namespace

const char* limit_name(StagingLimit l) {
  switch (l) {
    case StagingLimit::Equilibrium:
      return "equilibrium";
    case StagingLimit::TMax:
      return "T_max";
    case StagingLimit::TInMin:
      return "T_in_min";
    case StagingLimit::Size:
      return "size";
    case StagingLimit::None:
      break;
  }
  return "";
}

const char* return_to_name(ReturnTo r) { return r == ReturnTo::Inlet ? "inlet" : "max-rate"; }

std::string StagingOptions::validate() const {
  if (!(approach > 0 && approach < 1))
    return fmt::format("approach must lie strictly between 0 and 1, got {:g}", approach);
  if (auto e = limit_check.validate(); !e.empty()) return "limit_check: " + e;
  if (!(min_return >= 0 && min_return < 1))
    return fmt::format("min_return must lie in [0, 1), got {:g}", min_return);
  if (max_beds < 1 || max_beds > 100)
    return fmt::format("max_beds must lie between 1 and 100, got {}", max_beds);
  if (auto e = solvers.validate(); !e.empty()) return "solvers." + e;
  return {};
}

StagingResult run_staging(const Case& c, const StagingOptions& options) {
  if (const auto e = options.validate(); !e.empty())
    throw std::invalid_argument("StagingOptions: " + e);
  const Mechanism& mech = c.mechanism;
  const LayoutCase lc = check_layout_case(c, LayoutStudy::Staging);
  const int j = lc.reaction;
  const std::string& key = lc.key;
  const bool exo = lc.exothermic;
  const Setup s{c,
                mech,
                c.conversion_basis(),
                lc.target,
                exo,
                exo ? c.limits.T_max : c.limits.T_in_min,
                exo ? StagingLimit::TMax : StagingLimit::TInMin,
                exo ? "T_max" : "T_in_min",
                lc.bulk_density,
                lc.bed_where,
                lc.activity,
                &lc};
  if (options.return_to == ReturnTo::MaxRate && !s.exothermic && !c.limits.T_max)
    throw InputError(
        c.limits.where,
        fmt::format("--return-to max-rate with the endothermic reaction {} needs limits: "
                    "{{T_max: ...}}: its rate rises with temperature without a maximum, so the "
                    "best reheat temperature is the highest the catalyst allows",
                    mech.reactions()[j].id));

  StagingResult res;
  res.title = c.title;
  res.key = key;
  res.target = s.target;
  res.limits = c.limits;
  res.exothermic = s.exothermic;
  res.feed_T = c.feed.T;
  res.dT_ad = adiabatic_temperature_change(c);
  res.approach = options.approach;
  res.return_to = options.return_to;
  res.min_return = options.min_return;
  res.max_beds = options.max_beds;

  SunContext ctx;
  check_as_given(s, options, ctx, res);
  res.reachable = res.limited_by == StagingLimit::None;
  build_staged(s, options, ctx, res);

  LimitCheckOptions lo = options.limit_check;
  lo.locate = lo.locate && options.solvers.tube.full_profile;
  res.as_given_run.limit_check = check_temperature_limits(c.limits, res.as_given_run.stages, lo);
  res.staged_run.limit_check = check_temperature_limits(c.limits, res.staged_run.stages, lo);

  res.warnings = res.as_given_run.warnings;
  auto add_unique = [&](const std::string& w) {
    if (std::find(res.warnings.begin(), res.warnings.end(), w) == res.warnings.end())
      res.warnings.push_back(w);
  };
  for (const auto& w : design_warnings(c, res.as_given_run)) add_unique(w);
  for (const auto& w : res.staged_run.warnings) add_unique(w);
  for (const auto& w : design_warnings(c, res.staged_run)) add_unique(w);
  if (options.equilibrium_views) {
    TrainOptions views;
    views.solvers = options.solvers;
    for (TrainResult* t : {&res.as_given_run, &res.staged_run})
      if (!t->stages.empty()) add_equilibrium_views(c, views, *t);
  }
  return res;
}

}  // namespace rxtrain
