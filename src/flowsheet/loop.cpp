#include "rxtrain/flowsheet/loop.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <variant>

#include "rxtrain/base/units.hpp"
#include "rxtrain/flowsheet/yields.hpp"
#include "rxtrain/models/heat_exchange.hpp"
#include "rxtrain/solvers/scalar_root.hpp"
#include "rxtrain/stages/run_stage.hpp"

namespace rxtrain {

namespace {

const InterchangerSpec& the_interchanger(const Case& c) {
  const InterchangerSpec* x = c.interchanger();
  if (!x) throw InputError({c.file, 0, 0}, "the case has no interchanger, so no loop");
  return *x;
}

// F cp of a stream's flows at T, W/K.
double heat_capacity_flow(const Mechanism& mech, const std::vector<double>& F, double T) {
  double C = 0;
  for (int i = 0; i < mech.n_species(); ++i) C += F[i] * mech.cp(i, T);
  return C;
}

// An upper bound of the heat the reactions can add to the stream arriving
// at the cold side, as a temperature rise of that stream (K): each
// exothermic reaction run to the end of its scarcest reactant, summed. A
// reaction whose reactants are all formed inside the loop adds nothing
// here; the scan's own passes then set the range (solve_loop).
double reaction_heat_bound(const Mechanism& mech, const std::vector<double>& F, double T) {
  double Q = 0;
  for (int j = 0; j < mech.n_reactions(); ++j) {
    const double dH = mech.dH(j, T);
    if (!(dH < 0)) continue;
    double extent = std::numeric_limits<double>::infinity();
    for (int i = 0; i < mech.n_species(); ++i) {
      const double nu = mech.reactions()[j].nu[i];
      if (nu < 0) extent = std::min(extent, F[i] / -nu);
    }
    if (std::isfinite(extent)) Q += -dH * extent;
  }
  return Q / heat_capacity_flow(mech, F, T);
}

}  // namespace

LoopMap::LoopMap(const Case& c, const TrainOptions& options, TrainWorkspace& ws)
    : c_(c), options_(options), ws_(ws), x_(the_interchanger(c)) {
  for (std::size_t k = 0; k < c.train.size(); ++k) {
    if (stage_id(c.train[k]) == x_.id) cold_ = k;
    if (stage_id(c.train[k]) == x_.hot_from) hot_ = k;
  }
  if (!(hot_ > cold_))
    throw InputError(x_.where, fmt::format("stage {}: hot_from {} must name a stage after it",
                                           x_.id, x_.hot_from));
}

LoopPass LoopMap::operator()(double T_assumed) const { return pass(T_assumed, nullptr); }

LoopPass LoopMap::run(double T_assumed, TrainResult& result) const {
  return pass(T_assumed, &result);
}

double LoopMap::cold_inlet_temperature() const {
  // Any tear runs the stages before the interchanger alike; the feed's
  // temperature is a safe one to assume.
  return pass(c_.feed.T, nullptr).T_cold_in;
}

double LoopMap::gain(double T, double h) const {
  return (pass(T + h, nullptr).T_computed - pass(T - h, nullptr).T_computed) / (2 * h);
}

// The stage walk of run_train (train.cpp), with the interchanger's two
// sides: the cold outlet at the assumed tear, the hot side's exchange
// after `hot_from`.
LoopPass LoopMap::pass(double T_assumed, TrainResult* result) const {
  const Mechanism& mech = c_.mechanism;
  const ConversionBasis basis = c_.conversion_basis();
  Stream stream = c_.feed;
  const double rest = 1 - c_.quench_shares();
  for (auto& f : stream.F) f *= rest;
  ConversionBasis fed{basis.key, stream.F[basis.key]};
  const CstrOptions tank = options_.solvers.tank();
  LoopPass p;
  p.T_assumed = T_assumed;
  p.T_peak = stream.T;
  Stream cold_in;
  std::size_t cold_row = 0;
  for (std::size_t k = 0; k < c_.train.size(); ++k) {
    const StageSpec& spec = c_.train[k];
    if (k == cold_) {
      cold_in = stream;
      p.T_cold_in = stream.T;
      stream.T = T_assumed;
      p.T_peak = std::max(p.T_peak, T_assumed);
      if (result) {
        StageResult r;
        r.id = x_.id;
        r.kind = StageKind::Interchanger;
        r.inlet = cold_in;
        r.outlet = stream;
        r.conversion = fed.conversion(stream);
        r.F_key_fed = fed.F_key_feed;
        cold_row = result->stages.size();
        result->stages.push_back(std::move(r));
      }
      continue;
    }
    const StageContext ctx{mech, fed, ws_.pfr(), ws_.cstr(), options_.solvers.tube, tank, &c_.feed};
    StageResult r = run_stage(spec, stream, ctx);
    if (r.side_stream) fed.F_key_feed += r.side_stream->F[basis.key];
    r.F_key_fed = fed.F_key_feed;
    p.T_peak = std::max({p.T_peak, r.T_max, r.outlet.T});
    stream = r.outlet;
    if (result) {
      if (!c_.space_velocity_basis.empty()) add_space_velocities(mech, r, c_.space_velocity_basis);
      for (const auto& w : r.warnings) result->warnings.push_back(w);
      result->stages.push_back(std::move(r));
    }
    if (k != hot_) continue;
    p.T_hot_in = stream.T;
    const Stream hot_in = stream;
    const TwoStreamExchange x = exchange_heat(
        x_.arrangement, x_.UA, cold_in.T, hot_in.T,
        [&](double T) { return heat_capacity_flow(mech, cold_in.F, T); },
        [&](double T) { return heat_capacity_flow(mech, hot_in.F, T); });
    p.T_computed = x.T_cold_out;
    p.heat_bound = reaction_heat_bound(mech, cold_in.F, cold_in.T);
    stream.T = x.T_hot_out;
    if (!result) continue;
    InterchangerResult ir;
    ir.hot_from = x_.hot_from;
    ir.arrangement = x_.arrangement;
    ir.UA = x_.UA;
    ir.effectiveness = x.effectiveness;
    ir.NTU = x.NTU;
    ir.C_cold = x.C_cold;
    ir.C_hot = x.C_hot;
    ir.T_cold_in = cold_in.T;
    ir.T_cold_out = T_assumed;  // the state's: equal to x.T_cold_out at a steady state
    ir.T_hot_in = hot_in.T;
    ir.T_hot_out = x.T_hot_out;
    ir.duty = x.duty;
    StageResult& cold = result->stages[cold_row];
    cold.duty = x.duty;
    cold.T_min = std::min(cold.inlet.T, cold.outlet.T);
    cold.T_max = std::max(cold.inlet.T, cold.outlet.T);
    cold.interchanger = ir;
  }
  p.conversion = fed.conversion(stream);
  if (result) {
    result->outlet = stream;
    result->conversion = p.conversion;
  }
  return p;
}

LoopSolution solve_loop(const LoopMap& g, const LoopOptions& options) {
  LoopSolution sol;
  struct Point {
    double T, F;
  };
  std::vector<Point> pts;
  double a_max = 0, rise_max = 0;
  auto eval = [&](double T) {
    const LoopPass p = g(T);
    ++sol.passes;
    // The share of the hot-minus-cold inlet difference the cold side gains,
    // and what the stages add between the cold outlet and the hot inlet:
    // a root needs T - T_cold_in = a rise / (1 - a).
    const double span = p.T_hot_in - p.T_cold_in;
    if (span > 0) a_max = std::max(a_max, (p.T_computed - p.T_cold_in) / span);
    rise_max = std::max({rise_max, p.T_hot_in - T, p.heat_bound});
    pts.push_back({T, p.T_computed - T});
    return p;
  };
  const double T_lo = g.cold_inlet_temperature();
  eval(T_lo);
  // The top of the range: the bound on a root from the largest a and rise
  // seen so far, 2 % and 5 K beyond it, recomputed as the scan climbs.
  auto top = [&] {
    if (a_max >= 1) return kLoopCeiling;
    return std::min(kLoopCeiling, T_lo + 1.02 * a_max * rise_max / (1 - a_max) + 5);
  };
  double T_hi = top();
  const double step =
      std::max(options.scan_step, (T_hi - T_lo) / std::max(1, options.max_scan_points - 1));
  double T = T_lo;
  while (T < T_hi) {
    T = std::min(T + step, T_hi);
    eval(T);
    T_hi = std::max(T_hi, top());
  }
  sol.T_low = T_lo;
  sol.T_high = T_hi;
  sol.capped = T_hi >= kLoopCeiling;

  auto F = [&](double x) { return g(x).T_computed - x; };
  std::vector<double> roots;
  if (pts.front().F == 0) roots.push_back(pts.front().T);
  for (std::size_t k = 0; k + 1 < pts.size(); ++k) {
    const Point &l = pts[k], &r = pts[k + 1];
    if (r.F == 0) {
      roots.push_back(r.T);
      continue;
    }
    if (l.F == 0 || (l.F > 0) == (r.F > 0)) continue;
    const ScalarRoot root = brent_root(F, l.T, r.T, l.F, r.F, options.root_tolerance, 200);
    if (!root.converged)
      throw SolverError(
          fmt::format("loop: the steady state between {:.6g} K and {:.6g} K did not "
                      "converge",
                      l.T, r.T));
    roots.push_back(root.x);
  }
  if (roots.empty())
    throw SolverError(fmt::format(
        "the loop has no steady state: scanned the interchanger's cold outlet from {:.2f} K to "
        "{:.2f} K and the temperature fed back never equals the one assumed{}",
        T_lo, T_hi,
        pts.front().F < 0 ? " (its hot side arrives colder than its cold side's inlet)" : ""));
  for (double r : roots) {
    const LoopPass p = g(r);
    LoopState s;
    s.T_cold_out = r;
    s.conversion = p.conversion;
    s.T_peak = p.T_peak;
    s.gain = g.gain(r, options.gain_step);
    sol.states.push_back(s);
  }
  // The cold start: successive substitution from the tear's inlet. With g
  // increasing and g(T_lo) >= T_lo the passes climb to the lowest state
  // and never pass it; it is the state they come to rest at or below.
  double x = T_lo;
  for (int k = 0; k < options.max_passes; ++k) {
    const double next = g(x).T_computed;
    ++sol.passes;
    const bool settled = std::abs(next - x) < 1e-9 * std::max(1.0, std::abs(x));
    x = next;
    if (settled) break;
  }
  sol.cold_start = 0;
  double best = std::abs(roots[0] - x);
  for (std::size_t k = 0; k < roots.size(); ++k) {
    if (roots[k] >= x - 1e-6) {
      sol.cold_start = static_cast<int>(k);
      break;
    }
    if (std::abs(roots[k] - x) < best) {
      best = std::abs(roots[k] - x);
      sol.cold_start = static_cast<int>(k);
    }
  }
  return sol;
}

TrainResult run_loop_train(const Case& c, const TrainOptions& options, TrainWorkspace& ws) {
  const LoopMap g(c, options, ws);
  const LoopSolution sol = solve_loop(g, options.loop);
  TrainResult result = TrainResult::for_case(c);
  g.run(sol.states[sol.cold_start].T_cold_out, result);
  result.loop_states = sol.states;
  result.loop_cold_start = sol.cold_start;
  result.loop_T_low = sol.T_low;
  result.loop_T_high = sol.T_high;
  // Said with the interchanger's stage, so that every row of a sweep
  // carries it too: which state a plant sits in depends on how it started.
  if (sol.states.size() > 1) {
    std::string states;
    for (const auto& s : sol.states)
      states += fmt::format("{}{:.2f} °C (X = {:.4f}, {})", states.empty() ? "" : ", ",
                            s.T_cold_out - kZeroCelsius, s.conversion,
                            s.stable() ? "stable" : "unstable");
    const std::string w = fmt::format(
        "the loop of interchanger {} has {} steady states (its cold outlet at {}); the stages "
        "shown are the cold-start one at {:.2f} °C, and a disturbance or a hot start can move the "
        "plant to another (rxtrain stability shows where they exist)",
        c.interchanger()->id, sol.states.size(), states,
        sol.states[sol.cold_start].T_cold_out - kZeroCelsius);
    for (auto& s : result.stages)
      if (s.kind == StageKind::Interchanger) s.warnings.push_back(w);
    result.warnings.push_back(w);
  }
  result.limit_check = check_limits(c, options, result.stages);
  add_product_yields(c, result);
  if (options.equilibrium_views) add_equilibrium_views(c, options, result);
  return result;
}

}  // namespace rxtrain
