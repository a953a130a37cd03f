#include "rxtrain/stages/pfr.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <numbers>
#include <optional>
#include <vector>

#include "pfr_shared.hpp"
#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/models/hydraulics.hpp"
#include "rxtrain/solvers/quadrature.hpp"
#include "rxtrain/solvers/scalar_root.hpp"

namespace rxtrain {

using detail::initial_state;
using detail::PfrSystem;
using detail::same_options;
using detail::state_scale;

namespace {

// Relative volume change per 1e-6 of conversion above which a sized
// stage's size is called ill-conditioned: about where a first-order bed
// stands 1e-4 from complete conversion (common practice, no source).
constexpr double kIllConditionedSize = 1e-3;
// Relative accuracy of the quadrature that sizes a one-reaction bed, as a
// share of the integrator's rtol: far below it.
constexpr double kQuadratureShare = 1e-4;
// Its pieces, and so the bed's profile points, are at least this many
// (uniform in X, more where the integrand steepens).
constexpr int kQuadraturePieces = 100;

}  // namespace

// Everything a tubular stage needs between runs. The integrator's
// callbacks point at `sys` and `roots`, which live as long as it does.
struct PfrWorkspace::State {
  PfrSystem sys;
  std::optional<CvodeIntegrator> ode;
  SparsePattern pattern;  // of the current sparse integrator
  std::vector<double> y, ydot, scale;
  // Root functions of the current stage (see run_pfr): the target
  // conversion and the stop temperature. Neither needs the right-hand side.
  struct Roots {
    ConversionBasis basis{0, 0};
    int n = 0;
    int i_target = -1, i_stop = -1;
    double X_target = 0, T_stop = 0;
    // A bed with a pressure drop: the pressure floor (a tenth of the
    // inlet's), which ends the stage with an error.
    int i_floor = -1;
    double P_floor = 0;
    // >= 0: the target is this species' mole fraction X_target, not the
    // key's conversion.
    int fraction_of = -1;
    int count() const { return (i_target >= 0) + (i_stop >= 0) + (i_floor >= 0); }
    int eval(const double* y, double* g) const {
      if (i_target >= 0)
        g[i_target] = fraction_of >= 0 ? detail::mole_fraction(y, n, fraction_of) - X_target
                                       : basis.conversion(y) - X_target;
      if (i_stop >= 0) g[i_stop] = y[n] - T_stop;
      if (i_floor >= 0) g[i_floor] = y[n + 2] - P_floor;
      return 0;
    }
  } roots;
  std::vector<double> dky, y_turn;              // interpolated dT/dV (dX/dV) search (see run_pfr)
  std::optional<detail::PelletBinding> pellet;  // of the current stage
  std::optional<detail::HydraulicBinding> hydraulics;
  std::optional<detail::CoolingBinding> cooling;
  // A countercurrent coolant: its temperature at the process inlet (its
  // outlet), the unknown the stage shoots on (run_countercurrent).
  double counter_T_c0 = 0;
  // Binds the system to a stage and (re)starts the integrator at its inlet,
  // re-creating the integrator only when it cannot be reused. `spec` is the
  // stage's, for its pellets (effectiveness factors); null only where no
  // stage stands behind the run (a tank's adiabatic limit), and then the
  // rates are the intrinsic ones.
  CvodeIntegrator& start(const SunContext& ctx, const Mechanism& mech,
                         const std::vector<double>& multipliers, HeatMode heat, const Stream& inlet,
                         const PfrOptions& options, const ReactorSpec* spec) {
    pellet = spec ? detail::pellet_binding(mech, *spec, options.cvode.rtol) : std::nullopt;
    hydraulics = spec ? detail::hydraulic_binding(mech, *spec, inlet) : std::nullopt;
    cooling = spec ? detail::cooling_binding(*spec) : std::nullopt;
    sys.reset(mech, multipliers, heat, inlet.P, pellet ? &*pellet : nullptr,
              hydraulics ? &*hydraulics : nullptr, cooling ? &*cooling : nullptr);
    const bool sparse = uses_sparse_jacobian(options, mech.n_species());
    const bool with_P = sys.has_pressure();
    std::optional<double> T_c0;
    if (sys.has_coolant_state())
      T_c0 =
          spec->cooling->direction == CoolantFlow::Countercurrent ? counter_T_c0 : spec->cooling->T;
    state_scale(mech, inlet, scale, with_P, T_c0.has_value());
    bool reuse = ode && ode->size() == sys.size() && ode->sparse() == sparse &&
                 same_options(ode->options(), options.cvode);
    if (sparse) {
      SparsePattern pat;
      sys.build_pattern(pat);
      reuse = reuse && pat.col_start == pattern.col_start && pat.row == pattern.row;
      if (!reuse) {
        pattern = pat;
        ode.reset();
        ode.emplace(
            ctx, sys.size(),
            [s = &sys](double, const double* y, double* yd) { return s->rhs(y, yd); },
            std::move(pat),
            [s = &sys](double, const double* y, const double*, double* v, double* u, double* w) {
              return s->sparse_jac(y, v, u, w);
            },
            options.cvode, scale);
      }
    } else if (!reuse) {
      ode.reset();
      ode.emplace(
          ctx, sys.size(),
          [s = &sys](double, const double* y, double* yd) { return s->rhs(y, yd); },
          [s = &sys](double, const double* y, const double*, double* J) { return s->jac(y, J); },
          options.cvode, scale);
    }
    if (reuse) ode->set_scale(scale);
    initial_state(inlet, y, with_P, T_c0);
    ydot.resize(y.size());
    dky.resize(y.size() + 1);
    y_turn.resize(y.size() + 1);
    ode->init(0.0, y);
    return *ode;
  }
};

PfrWorkspace::PfrWorkspace(const SunContext& ctx) : ctx_(&ctx), state_(std::make_unique<State>()) {}
PfrWorkspace::~PfrWorkspace() = default;
PfrWorkspace::PfrWorkspace(PfrWorkspace&&) noexcept = default;
PfrWorkspace& PfrWorkspace::operator=(PfrWorkspace&&) noexcept = default;

bool uses_sparse_jacobian(const PfrOptions& options, int n_species) {
  switch (options.jacobian) {
    case JacobianForm::Dense:
      return false;
    case JacobianForm::Sparse:
      return true;
    case JacobianForm::Automatic:
      break;
  }
  return n_species >= kSparseJacobianMinSpecies;
}

StageResult run_pfr(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                    const ConversionBasis& basis, const SunContext& ctx,
                    const PfrOptions& options) {
  PfrWorkspace ws(ctx);
  return run_pfr(mech, spec, inlet, basis, ws, options);
}

namespace {

// Records the path of one stage: profile points, and the temperature
// extremes inside a step (several reactions), bisected on the
// interpolating polynomial's dT/dt so that T_max and T_min are the true
// extremes. t is the volume, or the conversion in the sizing tail (then
// the volume is the state at v_index); dT/dt has the sign of dT/dV either
// way, since X rises with V there.
class PathRecorder {
 public:
  PathRecorder(StageResult& res, const ConversionBasis& basis, int n, bool turns,
               std::vector<double>& dky, std::vector<double>& y_turn)
      : res_(res), basis_(basis), n_(n), turns_(turns), dky_(dky), y_turn_(y_turn) {}

  void record(double V, const std::vector<double>& y) { record(V, y.data()); }
  void record(double V, const double* y) {
    res_.profile.push_back(detail::profile_point(V, y, n_, basis_));
    if (with_pressure_) res_.profile.back().P = y[n_ + 2];
    if (cooled_) res_.profile.back().T_coolant = cooled_->coolant_T(y);
  }
  void set_with_pressure(bool b) { with_pressure_ = b; }
  // A cooled tube: each point records the coolant's temperature.
  void set_cooled(const PfrSystem* sys) { cooled_ = sys; }

  // After a step of `o` from t_prev to t ending at y; v_index < 0: V is t.
  void stepped(const CvodeIntegrator& o, double t_prev, double t, const std::vector<double>& y,
               int v_index) {
    if (turns_) {
      auto slope_at = [&](double at) {
        o.interpolate(at, 1, dky_.data());
        return dky_[n_];
      };
      if (const auto t_ext = detail::temperature_turn(t_prev, t, slope_, slope_at(t), slope_at)) {
        o.interpolate(*t_ext, 0, y_turn_.data());
        record(v_index < 0 ? *t_ext : y_turn_[v_index], y_turn_.data());
      }
    }
    record(v_index < 0 ? t : y[v_index], y);
  }

  double slope() const { return slope_; }
  void set_slope(double s) { slope_ = s; }

 private:
  StageResult& res_;
  const ConversionBasis& basis_;
  int n_;
  bool turns_;
  bool with_pressure_ = false;  // the state carries P (y[n + 2])
  const PfrSystem* cooled_ = nullptr;
  double slope_ = 0;  // dT/dt at the last point; 0 where unknown or flat
  std::vector<double>& dky_;
  std::vector<double>& y_turn_;
};

}  // namespace

namespace {

// Where the integration of a stage stops: its volume, or, when sized, the
// space-time bound (the target conversion's root ends it sooner).
double end_volume(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet, double X_in,
                  const PfrOptions& options) {
  if (!spec.target_conversion) return spec.volume.value();
  if (*spec.target_conversion <= X_in)
    throw InputError(spec.where, fmt::format("stage {}: target conversion {:.4f} is not above the "
                                             "conversion at its inlet ({:.4f})",
                                             spec.id, *spec.target_conversion, X_in));
  return options.max_space_time * mech.volumetric_flow(inlet.T, inlet.P, inlet.F.data());
}

// A bed with a pressure drop stops where P falls to a tenth of its inlet
// value: Ergun's P(z) falls ever faster as the gas expands, and below that
// the bed is no design (common practice, no source).
constexpr double kPressureFloor = 0.1;

// Arms the pressure floor's root (a bed with a pressure drop), after the
// other roots; st.y holds the inlet state.
void arm_floor(PfrWorkspace::State& st, int n) {
  if (!st.sys.has_pressure()) return;
  st.roots.i_floor = st.roots.count();
  st.roots.P_floor = kPressureFloor * st.y[n + 2];
}

bool floor_found(const PfrWorkspace::State& st, const std::vector<int>& found) {
  return st.roots.i_floor >= 0 && found[st.roots.i_floor] != 0;
}

// A bed whose pressure falls to the floor (diameter: auto takes it as a
// diameter far too small).
class PressureFloorError : public InfeasibleError {
 public:
  using InfeasibleError::InfeasibleError;
};

[[noreturn]] void pressure_floor_error(const PfrWorkspace::State& st, const ReactorSpec& spec,
                                       double V) {
  const double P_in = st.roots.P_floor / kPressureFloor;
  throw PressureFloorError(
      spec.where,
      fmt::format("stage {}: the pressure falls below a tenth of its inlet value ({:.4g} bar) at "
                  "V = {:.6g} m3, {:.4g} m into the bed: the bed is too long or too narrow for "
                  "this flow, or its pellets too small; widen the bed, shorten it or use larger "
                  "pellets",
                  spec.id, P_in / 1e5, V, V / st.hydraulics->area));
}

// Roots: the target conversion when sizing, and the stop temperature.
// Temperature extremes (dT/dV = 0) are found after each step from the
// integrator's interpolating polynomial instead (PathRecorder): as a root
// function dT/dV would cost one more right-hand side per step. Always
// set, so that a reused integrator drops the last stage's roots.
void arm_roots(PfrWorkspace::State& st, CvodeIntegrator& ode, const ConversionBasis& basis, int n,
               std::optional<double> X_target, std::optional<double> T_stop) {
  auto& rt = st.roots;
  rt = {};
  rt.basis = basis;
  rt.n = n;
  std::vector<int> directions;
  if (X_target) {
    rt.X_target = *X_target;
    rt.i_target = 0;
    directions = {1};
  }
  if (T_stop) {
    rt.T_stop = *T_stop;
    rt.i_stop = rt.count();
    directions.push_back(0);
  }
  arm_floor(st, n);
  if (rt.i_floor >= 0) directions.push_back(0);
  ode.set_roots(
      rt.count(), [r = &rt](double, const double* y, double* g) { return r->eval(y, g); },
      directions);
}

// How the integration of a stage ended.
struct Walk {
  double V = 0;          // m3
  bool reached = false;  // the target conversion's root
  bool stopped = false;  // the stop temperature's root (or an inlet past it)
};

// Integrates the stage from its inlet to V_end or a root, recording the
// path (every step, or only the ends and turns).
Walk walk_stage(PfrWorkspace::State& st, CvodeIntegrator& ode, PathRecorder& path,
                const ReactorSpec& spec, const Stream& inlet, int n, double V_end, bool every_step,
                std::optional<double> T_stop) {
  std::vector<double>& y = st.y;
  path.record(0.0, y);
  Walk w;
  if (spec.heat == HeatMode::Adiabatic && st.sys.rhs(y.data(), st.ydot.data()) == 0)
    path.set_slope(st.ydot[n]);
  if (T_stop) {
    // A root at the inlet itself is not reported by CVODE: an inlet at or
    // past the stop temperature, on the side T moves to, ends the stage here.
    const double s = path.slope();
    if ((s > 0 && inlet.T >= *T_stop) || (s < 0 && inlet.T <= *T_stop)) w.stopped = true;
  }
  while (!w.stopped) {
    CvodeIntegrator::Event ev;
    const double V_prev = w.V;
    try {
      ev = every_step ? ode.step(V_end, w.V, y) : ode.advance(V_end, w.V, y);
    } catch (const SolverError& e) {
      throw SolverError(fmt::format(
          "{} at V = {:.6g} m3 (of {:.6g} m3): {}; try: check the units and size of A and Ea "
          "(a rate far too fast or too slow), split the stage at that volume, or loosen --rtol",
          spec.id, w.V, V_end, e.what()));
    }
    path.stepped(ode, V_prev, w.V, y, -1);
    if (ev == CvodeIntegrator::Event::Stop) break;
    if (ev != CvodeIntegrator::Event::Root) continue;
    const auto found = ode.roots_found();
    const auto& rt = st.roots;
    if (rt.i_target >= 0 && found[rt.i_target] != 0) {
      w.reached = true;
      break;
    }
    if (rt.i_stop >= 0 && found[rt.i_stop] != 0) {
      w.stopped = true;
      break;
    }
    if (floor_found(st, found)) pressure_floor_error(st, spec, w.V);
  }
  return w;
}

}  // namespace

namespace {

// The volume at which `spec`'s outlet mole fraction of t.species falls to
// t.x, from a rated stage: a CVODE root on the mole fraction along the
// path brackets it, then Brent's method polishes it on whole ratings of
// the stage, so that rating the size found gives the target back to the
// integrator's own consistency rather than to the root's interpolation.
// A purity the path does not reach before the space-time bound (or the
// stop temperature) is refused with the least mole fraction it reaches.
double volume_for_outlet(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                         const ConversionBasis& basis, PfrWorkspace& ws,
                         const PfrOptions& options) {
  const int n = mech.n_species();
  const OutletTarget& t = *spec.target_outlet;
  const std::string& sp = mech.species()[t.species].id;
  const double x_in = detail::mole_fraction(inlet.F.data(), n, t.species);
  if (!(t.x < x_in))
    throw InputError(
        spec.where, fmt::format("stage {}: outlet target {} = {:.6g} ppm is not below its value at "
                                "the stage inlet ({:.6g} ppm)",
                                spec.id, sp, t.x * 1e6, x_in * 1e6));
  PfrWorkspace::State& st = ws.state();
  const auto multipliers = rate_multipliers(mech, spec);
  const double V_end =
      options.max_space_time * mech.volumetric_flow(inlet.T, inlet.P, inlet.F.data());
  std::optional<double> T_stop;
  if (spec.heat == HeatMode::Adiabatic) T_stop = options.stop_temperature;

  // The path, step by step, to the first crossing of the target.
  CvodeIntegrator& ode =
      st.start(ws.context(), mech, multipliers, spec.heat, inlet, options, &spec);
  ode.set_stop_time(V_end);
  arm_roots(st, ode, basis, n, t.x, T_stop);
  st.roots.fraction_of = t.species;
  ode.set_roots(
      st.roots.count(),
      [r = &st.roots](double, const double* y, double* g) { return r->eval(y, g); },
      std::vector<int>(st.roots.count(), 0));
  std::vector<double>& y = st.y;
  double V = 0, V_prev = 0, x_min = x_in, V_min = 0;
  bool reached = false;
  for (;;) {
    V_prev = V;
    const auto ev = ode.step(V_end, V, y);
    const double x = detail::mole_fraction(y.data(), n, t.species);
    if (x < x_min) {
      x_min = x;
      V_min = V;
    }
    if (ev == CvodeIntegrator::Event::Stop) break;
    if (ev != CvodeIntegrator::Event::Root) continue;
    const auto found = ode.roots_found();
    if (floor_found(st, found)) pressure_floor_error(st, spec, V);
    if (found[st.roots.i_target] != 0 && x <= t.x * (1 + 1e-6)) {
      reached = true;
      break;
    }
    if (st.roots.i_stop >= 0 && found[st.roots.i_stop] != 0) break;
  }
  if (!reached)
    throw InfeasibleError(
        spec.where,
        fmt::format("stage {}: outlet target {} = {:.6g} ppm is out of reach; the least this stage "
                    "can reach is {:.6g} ppm (at V = {:.6g} m3{})",
                    spec.id, sp, t.x * 1e6, x_min * 1e6, V_min,
                    V >= V_end            ? ", the path followed to the space-time bound"
                    : T_stop && V < V_end ? ", the stop temperature"
                                          : ""),
        x_min, "mole fraction of " + sp);

  // Outlet mole fraction less the target, of the stage rated at volume v.
  auto excess = [&](double v) {
    CvodeIntegrator& o =
        st.start(ws.context(), mech, multipliers, spec.heat, inlet, options, &spec);
    arm_roots(st, o, basis, n, std::nullopt, std::nullopt);
    o.set_stop_time(v);
    double at = 0;
    for (auto ev = o.advance(v, at, y); ev != CvodeIntegrator::Event::Stop;
         ev = o.advance(v, at, y))
      if (floor_found(st, o.roots_found())) pressure_floor_error(st, spec, at);
    return detail::mole_fraction(y.data(), n, t.species) - t.x;
  };
  double a = V_prev, b = V;
  double fa = a > 0 ? excess(a) : x_in - t.x, fb = excess(b);
  // The root's interpolation and a whole rating differ by the integration
  // error: widen the bracket until the ratings straddle the target.
  for (int k = 0; k < 20 && fb > 0 && b < V_end; ++k) {
    a = b;
    fa = fb;
    b = std::min(V_end, b + (b - V_prev) * (1 << k) + 1e-9 * b);
    fb = excess(b);
  }
  for (int k = 0; k < 20 && fa < 0; ++k) {
    b = a;
    fb = fa;
    a = 0.5 * a;
    fa = excess(a);
  }
  if (!(fa >= 0 && fb <= 0))
    throw SolverError(
        fmt::format("{}: the volume for outlet {} = {:.6g} ppm could not be "
                    "bracketed between {:.6g} and {:.6g} m3",
                    spec.id, sp, t.x * 1e6, a, b));
  const ScalarRoot r = brent_root(excess, a, b, fa, fb, 1e-14, 200);
  return r.x;
}

// A cooled stage's coolant (ends, duty, the largest process-minus-coolant
// difference) and its hot spot, from the state at the outlet and the
// profile (every step, with T's turns: its peak is a point of it).
void add_coolant(const PfrWorkspace::State& st, const ReactorSpec& spec, StageResult& res) {
  const CoolingSpec& c = *spec.cooling;
  CoolantResult cr;
  cr.direction = c.direction;
  cr.U = c.U;
  const double d = spec.geometry->diameter;
  cr.area = res.volume.value_or(0) * 4 / d;
  cr.duty = res.duty;
  const double T_c_end = st.sys.coolant_T(st.y.data());
  const double T_c_start = res.profile.empty() ? c.T : res.profile.front().T_coolant.value_or(c.T);
  cr.T_in = c.direction == CoolantFlow::Countercurrent ? T_c_end : T_c_start;
  cr.T_out = c.direction == CoolantFlow::Countercurrent ? T_c_start : T_c_end;
  cr.dT_max = -std::numeric_limits<double>::infinity();
  HotSpot hs{res.inlet.T, 0, 0};
  for (const auto& p : res.profile) {
    const double dT = p.T - p.T_coolant.value_or(c.T);
    if (dT > cr.dT_max) {
      cr.dT_max = dT;
      cr.V_dT_max = p.V;
    }
    if (p.T > hs.T) hs = HotSpot{p.T, p.V, 0};
  }
  hs.z = hs.V / spec.geometry->flow_area();
  res.coolant = cr;
  res.hot_spot = hs;
}

// Each reaction's effectiveness factor at every profile point, and its
// range over the stage (the pellet model as the stage ran it).
void add_effectiveness(PfrWorkspace::State& st, const ReactorSpec& spec, StageResult& res) {
  res.pellet = spec.pellet;
  const int nr = static_cast<int>(st.sys.eta().size());
  std::vector<double> y;
  for (auto& p : res.profile) {
    y.assign(p.F.begin(), p.F.end());
    y.push_back(p.T);
    y.push_back(0.0);
    if (p.P) y.push_back(*p.P);
    if (p.T_coolant) y.push_back(*p.T_coolant);
    if (st.sys.update_eta(p.T, y.data()) != 0)
      throw SolverError(
          fmt::format("{}: effectiveness factors at V = {:.6g} m3 failed", spec.id, p.V));
    p.eta = st.sys.eta();
  }
  res.effectiveness.assign(nr, EffectivenessRange{});
  for (int j = 0; j < nr && !res.profile.empty(); ++j) {
    auto& e = res.effectiveness[j];
    e.min = e.max = e.outlet = res.profile.back().eta[j];
    for (const auto& p : res.profile) {
      e.min = std::min(e.min, p.eta[j]);
      e.max = std::max(e.max, p.eta[j]);
    }
  }
}

}  // namespace

namespace {

// `diameter: auto`: the smallest diameter whose pressure drop does not
// exceed dP_max, each trial a whole rating (or sizing) of the stage: dP
// falls as the diameter grows, so a bracket by doubling, then Brent's
// method on the diameter; a trial whose pressure reaches the floor counts
// as too narrow. Returns the stage at the diameter found.
StageResult run_auto_diameter(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                              const ConversionBasis& basis, PfrWorkspace& ws,
                              const PfrOptions& options) {
  const double dP_max = *spec.geometry->dP_max;
  if (!(dP_max < (1 - kPressureFloor) * inlet.P))
    throw InputError(spec.geometry->where,
                     fmt::format("stage {}: dP_max = {:.4g} bar is not below 90 % of the stage's "
                                 "inlet pressure ({:.4g} bar), where a bed stops (its pressure "
                                 "may not fall below a tenth of the inlet's)",
                                 spec.id, dP_max / 1e5, inlet.P / 1e5));
  ReactorSpec trial = spec;
  trial.geometry->dP_max.reset();
  const int count = std::max(spec.geometry->tubes, 1);
  auto excess = [&](double D) {
    trial.geometry->diameter = D;
    try {
      const StageResult r = run_pfr(mech, trial, inlet, basis, ws, options);
      return *r.hydraulics->dP - dP_max;
    } catch (const PressureFloorError&) {
      return std::numeric_limits<double>::infinity();
    }
  };
  // Start where the inlet's superficial velocity is 1 m/s (a mid value for
  // gas beds; only a start).
  const double v0 = mech.volumetric_flow(inlet.T, inlet.P, inlet.F.data());
  double b = std::sqrt(4 * v0 / (std::numbers::pi * count));
  double fb = excess(b);
  for (int k = 0; k < 60 && fb > 0; ++k) fb = excess(b *= 2);
  double a = b / 2, fa = excess(a);
  for (int k = 0; k < 60 && fa <= 0; ++k) {
    b = a;
    fb = fa;
    fa = excess(a /= 2);
  }
  if (!(fb <= 0 && fa > 0))
    throw InfeasibleError(spec.geometry->where,
                          fmt::format("stage {}: no diameter found whose pressure drop stays "
                                      "within dP_max = {:.4g} bar",
                                      spec.id, dP_max / 1e5));
  // Brent needs finite values: halve towards b past the floor.
  for (int k = 0; k < 200 && !std::isfinite(fa); ++k) {
    const double m = 0.5 * (a + b), fm = excess(m);
    (fm > 0 ? a : b) = m;
    (fm > 0 ? fa : fb) = fm;
  }
  if (!std::isfinite(fa))
    throw SolverError(
        fmt::format("{}: the diameter for dP_max = {:.4g} bar could not be "
                    "bracketed away from the pressure floor",
                    spec.id, dP_max / 1e5));
  const ScalarRoot r = brent_root(excess, a, b, fa, fb, 1e-12, 200);
  double D = r.x;
  // The side that keeps within dP_max: Brent's last point may lie a hair
  // on the other.
  for (int k = 0; k < 10 && excess(D) > 0; ++k) D *= 1 + 1e-9 * (1 << k);
  trial.geometry->diameter = D;
  StageResult res = run_pfr(mech, trial, inlet, basis, ws, options);
  res.hydraulics->dP_max = dP_max;
  return res;
}

}  // namespace

namespace {

// One integration of a stage from its inlet (rated, or sized to a target
// conversion); a countercurrent coolant starts at st.counter_T_c0.
StageResult integrate_pfr(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                          const ConversionBasis& basis, PfrWorkspace& ws,
                          const PfrOptions& options) {
  const int n = mech.n_species();
  PfrWorkspace::State& st = ws.state();
  CvodeIntegrator& ode =
      st.start(ws.context(), mech, rate_multipliers(mech, spec), spec.heat, inlet, options, &spec);

  StageResult res;  // its profile, while the stage runs (see the end)
  const bool sizing = spec.target_conversion.has_value();
  const double V_end = end_volume(mech, spec, inlet, basis.conversion(inlet), options);
  ode.set_stop_time(V_end);
  const bool adiabatic = spec.heat == HeatMode::Adiabatic;
  // The stop temperature only matters where T moves.
  const std::optional<double> T_stop =
      adiabatic ? options.stop_temperature : std::optional<double>{};
  arm_roots(st, ode, basis, n, spec.target_conversion, T_stop);

  // With one reaction dT/dV = -dH r / sum F cp: r keeps its sign along a
  // bed (the reaction approaches its equilibrium without crossing it) and
  // so does dH over the few hundred kelvin of one bed, so T is monotonic
  // and its extremes are the end points (isothermal: T is constant).
  // A cooled tube's T rises to a hot spot and falls: never monotonic.
  const bool monotonic = !spec.cooling && (!adiabatic || mech.n_reactions() == 1);
  PathRecorder path(res, basis, n, !monotonic, st.dky, st.y_turn);
  path.set_with_pressure(st.sys.has_pressure());
  if (spec.cooling) path.set_cooled(&st.sys);
  const Walk w =
      walk_stage(st, ode, path, spec, inlet, n, V_end, options.full_profile || !monotonic, T_stop);
  double V = w.V;
  if (sizing && !w.reached && !w.stopped) {
    const StageReach reach = pfr_reach(mech, spec, inlet, basis, ws, options);
    throw InfeasibleError(spec.where, out_of_reach_text(spec, *spec.target_conversion, reach, mech),
                          reach.X_max, "conversion");
  }

  // The quadrature reads the intrinsic rate: with effectiveness factors
  // the volume integration's root stands.
  // So does a bed with a pressure drop: the quadrature's path is at constant P.
  // So does a cooled tube: the quadrature's path is the adiabatic one.
  if (w.reached && mech.n_reactions() == 1 && !st.pellet && !st.hydraulics && !spec.cooling) {
    // One reaction: the volume by quadrature along the exact path (see
    // size_by_quadrature); the volume integration above told that the target is
    // met before the stop temperature.
    res.profile.resize(1);
    V = detail::size_by_quadrature(mech, spec, inlet, basis, *spec.target_conversion,
                                   options.cvode.rtol, options.full_profile, res, st.y);
  }

  std::vector<ProfilePoint> profile = std::move(res.profile);
  res = detail::pfr_result(mech, spec, inlet, basis, sizing, V, st.y.data());
  res.profile = std::move(profile);
  res.T_max = res.T_min = inlet.T;
  for (const auto& p : res.profile) {
    res.T_max = std::max(res.T_max, p.T);
    res.T_min = std::min(res.T_min, p.T);
  }
  res.stats = ode.stats();
  if (w.stopped)
    res.stats.message = fmt::format("stopped at the stop temperature {} at V = {:.6g} m3",
                                    temperature_words(*T_stop), V);
  if (st.pellet) add_effectiveness(st, spec, res);
  if (w.reached) {
    std::vector<double> beta = rate_multipliers(mech, spec);
    if (st.pellet && st.sys.update_eta(st.y[n], st.y.data()) == 0)
      for (std::size_t j = 0; j < beta.size(); ++j) beta[j] *= st.sys.eta()[j];
    detail::add_size_sensitivity(mech, beta, basis, res);
  }
  if (spec.cooling) add_coolant(st, spec, res);
  return res;
}

// A countercurrent coolant enters at the process outlet at its T_in; its
// temperature at the process inlet (its outlet) is the unknown of a
// two-point problem. Shooting: each trial integrates the whole stage from
// a guess of that outlet; the miss is the coolant's temperature at the
// process outlet less its T_in. The guesses scanned span the coolant's and
// the process inlet's temperatures and kScanAbove above the higher (a
// coolant can leave no hotter than the hottest process point, and a bed
// rises by at most its adiabatic rise); every sign change of the miss is a
// solution. None: refused; several: refused with each, since the stage
// then has several steady states and which one a plant runs at depends on
// its start-up. One: Brent's method on the bracket. Two solutions closer
// together than the scan's step (kScanStep) can hide between two guesses:
// every message names the step, and the docs say so.
constexpr double kScanAbove = 400;   // K (common practice, no source)
constexpr double kScanBelow = 10;    // K below the lower inlet: a solution right at it
constexpr double kScanStep = 2;      // K between guesses
constexpr int kEdgeBisections = 30;  // to 2 K / 2^30, far below a kelvin

StageResult run_countercurrent(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                               const ConversionBasis& basis, PfrWorkspace& ws,
                               const PfrOptions& options) {
  PfrWorkspace::State& st = ws.state();
  const double T_in = spec.cooling->T;
  const int ic = mech.n_species() + 2 + (spec.has_pressure_drop() ? 1 : 0);
  int trials = 0;
  auto miss = [&](double T0) {
    ++trials;
    st.counter_T_c0 = T0;
    try {
      integrate_pfr(mech, spec, inlet, basis, ws, options);
    } catch (const InfeasibleError&) {
      throw;  // the bed itself (its pressure drop), whatever the coolant
    } catch (const SolverError&) {
      return std::numeric_limits<double>::quiet_NaN();  // a guess the bed cannot run from
    }
    return st.y[ic] - T_in;
  };
  const double lo = std::min(T_in, inlet.T) - kScanBelow;
  const double hi = std::max(T_in, inlet.T) + kScanAbove;
  const int kScanPoints = static_cast<int>(std::ceil((hi - lo) / kScanStep)) + 1;
  // (guess, miss) in increasing guess; NaN where the bed cannot run from
  // the guess (the coolant drives T to absolute zero when the guess is far
  // off: integrated against its flow, a coolant's error grows along the bed).
  std::vector<std::pair<double, double>> pts;
  for (int k = 0; k < kScanPoints; ++k) {
    const double t = lo + (hi - lo) * k / (kScanPoints - 1);
    pts.emplace_back(t, miss(t));
  }
  // Where a guess that runs meets one that does not, the edge is bisected
  // to a guess that runs close to it: the sign of the miss there says
  // which way the failed guesses lie.
  const std::size_t scanned = pts.size();
  for (std::size_t k = 0; k + 1 < scanned; ++k) {
    const bool a_ok = std::isfinite(pts[k].second), b_ok = std::isfinite(pts[k + 1].second);
    if (a_ok == b_ok) continue;
    double good = a_ok ? pts[k].first : pts[k + 1].first;
    double bad = a_ok ? pts[k + 1].first : pts[k].first;
    double f_good = a_ok ? pts[k].second : pts[k + 1].second;
    for (int it = 0; it < kEdgeBisections; ++it) {
      const double m = 0.5 * (good + bad), fm = miss(m);
      if (std::isfinite(fm)) {
        good = m;
        f_good = fm;
      } else {
        bad = m;
      }
    }
    pts.emplace_back(good, f_good);
  }
  std::sort(pts.begin(), pts.end());
  std::vector<std::pair<std::size_t, std::size_t>> brackets;  // between finite neighbours
  for (std::size_t k = 0; k < pts.size(); ++k) {
    if (!std::isfinite(pts[k].second)) continue;
    if (pts[k].second == 0) {
      brackets.emplace_back(k, k);
      continue;
    }
    if (k + 1 < pts.size() && std::isfinite(pts[k + 1].second) && pts[k + 1].second != 0 &&
        (pts[k].second < 0) != (pts[k + 1].second < 0))
      brackets.emplace_back(k, k + 1);
  }
  if (brackets.empty())
    throw InfeasibleError(
        spec.cooling->where,
        fmt::format("stage {}: no countercurrent solution found: shooting on the coolant's "
                    "outlet temperature from {:.2f} to {:.2f} K in steps of {:g} K brackets no "
                    "coolant inlet at {:.2f} K (two solutions closer than a step would hide "
                    "between guesses; check the coolant's flow, cp and T_in, and U)",
                    spec.id, lo, hi, kScanStep, T_in),
        0.0, "coolant outlet temperature");
  std::vector<double> roots;
  for (const auto& [a, b] : brackets) {
    if (a == b) {
      roots.push_back(pts[a].first);
      continue;
    }
    roots.push_back(
        brent_root(miss, pts[a].first, pts[b].first, pts[a].second, pts[b].second, 1e-14, 200).x);
  }
  if (roots.size() > 1) {
    std::string list;
    for (double r : roots) list += fmt::format("{}{:.2f} K", list.empty() ? "" : ", ", r);
    throw InfeasibleError(
        spec.cooling->where,
        fmt::format("stage {}: the countercurrent coolant has {} solutions (coolant outlet at "
                    "{}; scanned in steps of {:g} K): the stage has several steady states, and "
                    "which one it runs at depends on its start-up; rate it with a constant or "
                    "cocurrent coolant, or change U or the coolant flow",
                    spec.id, roots.size(), list, kScanStep),
        0.0, "coolant outlet temperature");
  }
  st.counter_T_c0 = roots.front();
  StageResult res = integrate_pfr(mech, spec, inlet, basis, ws, options);
  res.coolant->shooting_trials = trials + 1;
  res.stats.message = fmt::format(
      "countercurrent coolant: its outlet found by shooting, one solution on a scan of {:.2f} to "
      "{:.2f} K in steps of {:g} K ({} trials)",
      lo, hi, kScanStep, trials + 1);
  return res;
}

}  // namespace

StageResult run_pfr(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                    const ConversionBasis& basis, PfrWorkspace& ws, const PfrOptions& options) {
  if (spec.geometry && spec.geometry->dP_max)
    return run_auto_diameter(mech, spec, inlet, basis, ws, options);
  if (spec.target_outlet) {
    // Sized to a purity: rated at the volume found, so that the result is
    // exactly that of a rated stage of that size.
    ReactorSpec rated = spec;
    rated.target_outlet.reset();
    rated.volume = volume_for_outlet(mech, spec, inlet, basis, ws, options);
    StageResult res = run_pfr(mech, rated, inlet, basis, ws, options);
    res.sized = true;
    res.outlet_target = spec.target_outlet;
    return res;
  }
  if (spec.cooling && spec.cooling->direction == CoolantFlow::Countercurrent)
    return run_countercurrent(mech, spec, inlet, basis, ws, options);
  return integrate_pfr(mech, spec, inlet, basis, ws, options);
}

StageReach pfr_reach(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                     const ConversionBasis& basis, PfrWorkspace& ws, const PfrOptions& options,
                     const ReachHints& known) {
  const int n = mech.n_species();
  PfrWorkspace::State& st = ws.state();
  CvodeIntegrator& ode =
      st.start(ws.context(), mech, rate_multipliers(mech, spec), spec.heat, inlet, options, &spec);
  PfrSystem& sys = st.sys;
  // One reaction: X rises monotonically along the path, so nothing before
  // a known point of it can stand above what lies beyond; go on from
  // there. Not with a temperature stop (the point may lie past it) nor a
  // pressure state (the reach is at the inlet's pressure).
  const bool go_on = known.V_from && known.state_from && mech.n_reactions() == 1 &&
                     !options.stop_temperature && !sys.has_pressure() && *known.V_from > 0;
  double V0 = 0;
  if (go_on) {
    V0 = *known.V_from;
    initial_state(*known.state_from, st.y, false);
    ode.init(V0, st.y);
  }
  const double V_end =
      options.max_space_time * mech.volumetric_flow(inlet.T, inlet.P, inlet.F.data());
  ode.set_stop_time(V_end);
  auto& rt = st.roots;
  rt = {};
  rt.basis = basis;
  rt.n = n;
  const bool stop_at_T = spec.heat == HeatMode::Adiabatic && options.stop_temperature.has_value();
  if (stop_at_T) {
    rt.T_stop = *options.stop_temperature;
    rt.i_stop = 0;
  }
  arm_floor(st, n);
  ode.set_roots(
      rt.count(), [r = &rt](double, const double* y, double* g) { return r->eval(y, g); },
      std::vector<int>(rt.count(), 0));

  std::vector<double>& y = st.y;
  std::vector<double>& ydot = st.ydot;
  std::vector<double>& dky = st.dky;
  const double X_in = basis.conversion(inlet);
  // dX/dV of the interpolating polynomial of the last step at V.
  auto rise_at = [&](double at) {
    ode.interpolate(at, 1, dky.data());
    return -dky[basis.key] / basis.F_key_feed;
  };
  StageReach reach;
  reach.X_max = go_on ? basis.conversion(*known.state_from) : X_in;
  reach.V_at_X_max = V0;
  reach.T_at_X_max = go_on ? known.state_from->T : inlet.T;
  auto consider = [&](double V, const double* state) {
    const double X = basis.conversion(state);
    if (X > reach.X_max) {
      reach.X_max = X;
      reach.V_at_X_max = V;
      reach.T_at_X_max = state[n];
    }
  };
  double rise = 0;
  if (sys.rhs(y.data(), ydot.data()) == 0) rise = -ydot[basis.key] / basis.F_key_feed;
  bool stopped = false;
  if (stop_at_T && sys.rhs(y.data(), ydot.data()) == 0) {
    const double s = ydot[n];
    stopped = (s > 0 && inlet.T >= rt.T_stop) || (s < 0 && inlet.T <= rt.T_stop);
  }
  // One reaction: X is monotonic along the path, its most is the end.
  const bool several = mech.n_reactions() > 1;
  double V = V0;
  while (!stopped) {
    const double V_prev = V;
    CvodeIntegrator::Event ev;
    try {
      ev = several ? ode.step(V_end, V, y) : ode.advance(V_end, V, y);
    } catch (const SolverError& e) {
      throw SolverError(
          fmt::format("{}: what the stage can reach, at V = {:.6g} m3: {}", spec.id, V, e.what()));
    }
    if (several) {
      const double r_now = rise_at(V);
      if (rise > 0 && r_now < 0) {
        const double V_peak = bisect_sign_change(V_prev, V, rise, rise_at);
        ode.interpolate(V_peak, 0, st.y_turn.data());
        consider(V_peak, st.y_turn.data());
      }
      if (r_now != 0) rise = r_now;
    }
    consider(V, y.data());
    if (ev == CvodeIntegrator::Event::Stop) break;
    if (ev == CvodeIntegrator::Event::Root) {
      if (floor_found(st, ode.roots_found())) pressure_floor_error(st, spec, V);
      stopped = true;
    }
  }
  reach.X_end = basis.conversion(y.data());
  reach.T_end = y[n];
  if (stopped) {
    reach.end = ReachEnd::TemperatureStop;
  } else {
    // Still moving: as far again at the end's rate would add over 1e-6.
    double g_end = 0;
    if (sys.rhs(y.data(), ydot.data()) == 0) g_end = -ydot[basis.key] / basis.F_key_feed;
    classify_reach_end(mech, inlet, y.data(), basis.key, g_end * V > 1e-6, reach);
  }
  // A cooled path ends on no adiabatic or isothermal line.
  if (!spec.cooling) exact_equilibrium_end(mech, inlet, spec.heat, basis, reach, known);
  finish_reach(reach, V);
  return reach;
}

Stream adiabatic_limit(const Mechanism& mech, const std::vector<double>& multipliers,
                       const Stream& inlet, HeatMode heat, const SunContext& ctx,
                       const PfrOptions& options) {
  PfrWorkspace ws(ctx);
  return adiabatic_limit(mech, multipliers, inlet, heat, ws, options);
}

Stream adiabatic_limit(const Mechanism& mech, const std::vector<double>& multipliers,
                       const Stream& inlet, HeatMode heat, PfrWorkspace& ws,
                       const PfrOptions& options) {
  const int n = mech.n_species();
  PfrWorkspace::State& st = ws.state();
  CvodeIntegrator& ode = st.start(ws.context(), mech, multipliers, heat, inlet, options, nullptr);
  ode.set_roots(0, nullptr, {});
  const double V_end =
      options.max_space_time * mech.volumetric_flow(inlet.T, inlet.P, inlet.F.data());
  ode.set_stop_time(V_end);
  std::vector<double>& y = st.y;
  double V = 0;
  while (ode.advance(V_end, V, y) != CvodeIntegrator::Event::Stop) {
  }
  Stream out{y[n], inlet.P, std::vector<double>(y.begin(), y.begin() + n)};
  for (auto& f : out.F) f = std::max(f, 0.0);
  return out;
}

namespace detail {

// The pellet binding of a stage with effectiveness factors: rates per m3
// of pellet = activity x pellet density x the per-catalyst rate. Empty
// without a pellet or without D_eff (a pellet for pressure drop only).
std::optional<PelletBinding> pellet_binding(const Mechanism& mech, const ReactorSpec& spec,
                                            double rtol) {
  if (!spec.pellet || spec.pellet->D_eff.empty()) return std::nullopt;
  const PelletSpec& ps = *spec.pellet;
  PelletBinding b;
  b.spec = &ps;
  // The grid tolerance follows the ODE's, floored where the grid would
  // grow past what a right-hand side can afford (PelletSolveOptions).
  b.rtol = std::max(rtol, 1e-7);
  for (const auto& rx : mech.reactions()) {
    if (rx.rate.basis != RateBasis::Catalyst)
      throw InputError(ps.where, fmt::format("stage {}: effectiveness factors need per-catalyst "
                                             "rates (per: catalyst); reaction {} is per volume",
                                             spec.id, rx.id));
    if (!ps.density)
      throw InputError(ps.where,
                       fmt::format("stage {}: the pellet needs a density (e.g. density: 1400 "
                                   "kg/m3) to turn the per-catalyst rate of {} into a rate per "
                                   "pellet volume; this stage gives no void fraction to infer it "
                                   "from the bulk density",
                                   spec.id, rx.id));
    b.multipliers.push_back(spec.activity * *ps.density);
  }
  return b;
}

double mole_fraction(const double* F, int n, int i) {
  double total = 0;
  for (int j = 0; j < n; ++j) total += F[j];
  return total > 0 ? F[i] / total : 0.0;
}

ProfilePoint profile_point(double V, const double* y, int n, const ConversionBasis& basis) {
  return ProfilePoint{V, y[n], basis.conversion(y), std::vector<double>(y, y + n), {}};
}

StageResult pfr_result(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                       const ConversionBasis& basis, bool sized, double V, const double* y) {
  const int n = mech.n_species();
  StageResult res;
  res.id = spec.id;
  res.kind = StageKind::Pfr;
  res.heat = spec.heat;
  res.inlet = inlet;
  res.bulk_density = spec.bulk_density;
  res.activity = spec.activity;
  res.volume = V;
  res.sized = sized;
  if (spec.bulk_density) res.catalyst_mass = V * *spec.bulk_density;
  res.outlet =
      Stream{y[n], spec.has_pressure_drop() ? y[n + 2] : inlet.P, std::vector<double>(y, y + n)};
  for (auto& f : res.outlet.F) f = std::max(f, 0.0);  // solver round-off below zero
  res.duty = y[n + 1];
  res.conversion = basis.conversion(res.outlet);
  add_space_velocities(mech, res);
  if (spec.geometry) add_hydraulics(mech, spec, res);
  return res;
}

std::optional<CoolingBinding> cooling_binding(const ReactorSpec& spec) {
  if (!spec.cooling) return std::nullopt;
  const CoolingSpec& c = *spec.cooling;
  if (!spec.geometry || spec.geometry->tubes == 0 || !(spec.geometry->diameter > 0))
    throw InputError(c.where, fmt::format("stage {} is cooled but gives no tubes; the heat goes "
                                          "through the tube walls: give tubes",
                                          spec.id));
  CoolingBinding b;
  b.Ua = c.U * 4 / spec.geometry->diameter;
  b.T_c = c.T;
  if (c.direction != CoolantFlow::Constant) {
    b.inv_mcp = 1 / (c.flow.value() * c.cp.value());
    b.sign = c.direction == CoolantFlow::Cocurrent ? 1 : -1;
  }
  return b;
}

std::optional<HydraulicBinding> hydraulic_binding(const Mechanism& mech, const ReactorSpec& spec,
                                                  const Stream& inlet) {
  if (!spec.has_pressure_drop()) return std::nullopt;
  HydraulicBinding h;
  h.area = spec.geometry->flow_area();
  h.mass_flow = mech.mass_flow(inlet.F.data());
  h.d_p = particle_diameter(*spec.pellet);
  h.eps = spec.geometry->void_fraction;
  h.mu = *spec.viscosity;
  return h;
}

namespace {

// The range of Ergun's (1952) data in the modified particle Reynolds
// number G d_p / (mu (1 - eps)): roughly 1 to 2000 (from memory).
constexpr double kErgunReMin = 1, kErgunReMax = 2000;
// A pressure drop above this share of the inlet pressure is flagged:
// the bed then changes the rates and equilibrium of what follows
// noticeably (common practice, no source).
constexpr double kLargePressureDrop = 0.10;

}  // namespace

void add_hydraulics(const Mechanism& mech, const ReactorSpec& spec, StageResult& res) {
  StageHydraulics h;
  h.geometry = *spec.geometry;
  h.flow_area = h.geometry.flow_area();
  h.length = res.volume.value_or(0) / h.flow_area;
  const bool all_mw = std::all_of(mech.species().begin(), mech.species().end(),
                                  [](const Species& sp) { return sp.mw.has_value(); });
  if (all_mw) h.mass_flux = mech.mass_flow(res.inlet.F.data()) / h.flow_area;
  h.velocity_in = mech.volumetric_flow(res.inlet.T, res.inlet.P, res.inlet.F.data()) / h.flow_area;
  h.velocity_out =
      mech.volumetric_flow(res.outlet.T, res.outlet.P, res.outlet.F.data()) / h.flow_area;
  if (spec.pellet) h.particle_diameter = particle_diameter(*spec.pellet);
  if (h.particle_diameter && h.mass_flux && spec.viscosity)
    h.reynolds_particle =
        particle_reynolds(*h.mass_flux, *h.particle_diameter, spec.viscosity->at(res.inlet.T));
  if (spec.has_pressure_drop()) {
    h.dP = res.inlet.P - res.outlet.P;
    if (*h.dP > kLargePressureDrop * res.inlet.P)
      res.warnings.push_back(fmt::format(
          "stage {}: the pressure drop {:.4g} bar is {:.0f} % of the inlet pressure (above 10 %, "
          "common practice, no source); the bed's diameter or pellets deserve a second look",
          res.id, *h.dP / 1e5, 100 * *h.dP / res.inlet.P));
    const double re_mod = *h.reynolds_particle / (1 - h.geometry.void_fraction);
    if (re_mod < kErgunReMin || re_mod > kErgunReMax)
      res.warnings.push_back(fmt::format(
          "stage {}: the modified particle Reynolds number G d_p / (mu (1 - eps)) = {:.3g} lies "
          "outside the range of Ergun's 1952 data (about {:g} to {:g}, from memory); the pressure "
          "drop is extrapolated",
          res.id, re_mod, kErgunReMin, kErgunReMax));
  } else {
    res.warnings.push_back(fmt::format(
        "stage {}: its pressure drop is not computed ({}); the stage runs at constant pressure",
        res.id,
        !spec.pellet ? "no pellet is given, so the bed has no particle size"
                     : "no fluid viscosity is given"));
  }
  res.hydraulics = std::move(h);
}

// A one-reaction bed sized to X_target: V = integral of dV/dX =
// F_key,feed / (-nu_key R) over X from the inlet, with the flows from the
// stoichiometry and T from the energy balance (the inlet's T when
// isothermal), exact at every X. Integrating over V instead, the crossing
// of X_target moves by the state's error times dV/dX: large where the bed
// lights off, and without bound near what the stage can reach (where
// dV/dX does). Appends the profile from the quadrature's pieces and
// returns the volume; y = [F, T, Q] at the end.
double size_by_quadrature(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                          const ConversionBasis& basis, double X_target, double rtol,
                          bool full_profile, StageResult& res, std::vector<double>& y) {
  const auto& nu = mech.reactions()[0].nu;
  const double beta = rate_multipliers(mech, spec)[0];
  const double X_in = basis.conversion(inlet);
  const double per_X = basis.F_key_feed / -nu[basis.key];  // extent per unit of X
  double T_last = inlet.T;  // Newton's start for the next temperature
  Stream s;                 // the state at X, its buffers reused
  auto state_at = [&](double X) -> const Stream& {
    stream_after_extent(mech, inlet, spec.heat, 0, (X - X_in) * per_X, T_last, s);
    T_last = s.T;
    return s;
  };
  double r = 0;
  auto dV_dX = [&](double X) {
    state_at(X);
    mech.rates(s.T, s.P, s.F.data(), &r);
    const double R = beta * r;
    if (!(R > 0))
      throw SolverError(
          fmt::format("{}: the rate is not positive at X = {:.8f} below the target", spec.id, X));
    return basis.F_key_feed / (-nu[basis.key] * R);
  };
  QuadratureOptions qo;
  qo.rel_tolerance = std::max(kQuadratureShare * rtol, 1e-14);
  qo.max_width = (X_target - X_in) / kQuadraturePieces;
  const QuadratureResult q = integrate(dV_dX, X_in, X_target, qo);
  // Within a hair of equilibrium the integrand's round-off (1 - Q/K as a
  // difference of nearly equal numbers) can stop the quadrature short of
  // its own tolerance; it still counts while far inside the integrator's.
  if (!q.converged && !(q.error <= rtol * q.value))
    throw SolverError(
        fmt::format("{}: the volume to X = {:.8f} did not converge (quadrature "
                    "error {:.3g} of {:.6g} m3)",
                    spec.id, X_target, q.error, q.value));
  // Heat taken out when isothermal: dH(T_in) per unit extent.
  const double dH = spec.heat == HeatMode::Isothermal ? mech.dH(0, inlet.T) : 0.0;
  double V = 0;
  for (const auto& piece : q.pieces) {
    V += piece.value;
    // Every piece's state, kept or not, so that the end's Newton starts
    // from the same guess with or without the profile.
    const Stream& at = state_at(piece.b);
    if (!full_profile && &piece != &q.pieces.back()) continue;
    y.assign(at.F.begin(), at.F.end());
    y.push_back(at.T);
    y.push_back(dH * (piece.b - X_in) * per_X);
    res.profile.push_back(ProfilePoint{V, at.T, piece.b, at.F, {}});
  }
  return V;
}

void add_size_sensitivity(const Mechanism& mech, const std::vector<double>& multipliers,
                          const ConversionBasis& basis, StageResult& res) {
  if (!res.volume || !(*res.volume > 0)) return;
  std::vector<double> r(mech.n_reactions());
  mech.rates(res.outlet.T, res.outlet.P, res.outlet.F.data(), r.data());
  double g = 0;  // dX/dV
  for (int j = 0; j < mech.n_reactions(); ++j)
    g -= mech.reactions()[j].nu[basis.key] * multipliers[j] * r[j] / basis.F_key_feed;
  if (!(g > 0) || !std::isfinite(g)) return;
  const double s = 1e-6 / (g * *res.volume);
  res.size_sensitivity = s;
  if (s > kIllConditionedSize)
    res.warnings.push_back(fmt::format(
        "stage {}: the target X = {:.10g} lies so close to the most this stage can reach that "
        "its size is ill-conditioned: each 1e-6 of conversion changes the volume by {} %",
        res.id, res.conversion,
        100 * s < 10 ? fmt::format("{:.2g}", 100 * s) : fmt::format("{:.0f}", 100 * s)));
}

void pfr_jacobians(const Mechanism& mech, const std::vector<double>& multipliers, HeatMode heat,
                   double P, const std::vector<double>& y, std::vector<double>& f,
                   std::vector<double>& J_dense, std::vector<double>& J_sparse) {
  PfrSystem sys;
  sys.reset(mech, multipliers, heat, P);
  const int N = sys.size();
  f.assign(N, 0.0);
  if (sys.rhs(y.data(), f.data()) != 0) throw SolverError("pfr_jacobians: RHS failed");
  J_dense.assign(static_cast<std::size_t>(N) * N, 0.0);
  if (sys.jac(y.data(), J_dense.data()) != 0) throw SolverError("pfr_jacobians: dense failed");
  SparsePattern pat;
  sys.build_pattern(pat);
  std::vector<double> values(pat.nonzeros()), u(N, 0.0), w(N, 0.0);
  if (sys.sparse_jac(y.data(), values.data(), u.data(), w.data()) != 0)
    throw SolverError("pfr_jacobians: sparse failed");
  J_sparse.assign(static_cast<std::size_t>(N) * N, 0.0);
  for (int k = 0; k < N; ++k)
    for (int p = pat.col_start[k]; p < pat.col_start[k + 1]; ++p)
      J_sparse[pat.row[p] + static_cast<std::size_t>(N) * k] = values[p];
  for (int k = 0; k < N; ++k)
    for (int i = 0; i < N; ++i) J_sparse[i + static_cast<std::size_t>(N) * k] += u[i] * w[k];
}

}  // namespace detail

}  // namespace rxtrain
