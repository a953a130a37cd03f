#include "rxtrain/stages/cstr.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <array>
#include <cmath>
#include <functional>
#include <limits>
#include <optional>
#include <span>
#include <stdexcept>

#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/models/energy_balance.hpp"
#include "rxtrain/models/tank_balances.hpp"
#include "rxtrain/models/tank_stability.hpp"
#include "rxtrain/solvers/scalar_root.hpp"
#include "rxtrain/stages/exchanger.hpp"

namespace rxtrain {

using detail::CstrBalances;

namespace {

// Bounds of the temperature unknown: the range temperature_for_enthalpy
// searches, past which no heat-capacity model means anything.
constexpr double kLowestT = 1.0;     // K
constexpr double kHighestT = 1.0e4;  // K
// Starting flows are lifted this far (relative to the inlet total flow)
// off F = 0: the fraction-to-the-boundary rule cannot move a component
// that sits exactly on its bound.
constexpr double kFlowFloor = 1e-9;
// First point of the continuation, as a fraction of the target volume:
// the tank barely reacts there, so Newton from the feed converges.
constexpr double kFirstVolumeFraction = 1e-6;
// If it still does not, the first volume is divided by 1e3 this often.
constexpr int kFirstVolumeRetries = 3;
// A continuation step that moves any scaled unknown (F / F_in,total,
// T / T_in) by more than this is retried with half the step, so the march
// follows one branch instead of hopping to another ...
constexpr double kMaxStateChange = 0.1;
// ... until it has been halved this often: then the jump is real (a turning
// point of the branch: ignition or extinction).
constexpr int kMaxHalvings = 16;
// Fractions along the line from the first start to the adiabatic limit
// used as further starts ("points between"); three reach the middle
// solution of the classic three-state case.
constexpr std::array<double, 3> kBetween{0.25, 0.5, 0.75};
// Sizing by continuation covers this many decades of volume below the
// largest one PfrOptions::max_space_time allows.
constexpr double kSizingDecades = 12;
// Bisection steps on ln V when the sizing Newton fails (2^-100 of the
// bracket is far below double precision).
constexpr int kMaxBisections = 100;

struct State {
  std::vector<double> F;  // mol/s
  double T = 0;           // K
};

struct Outcome {
  bool converged = false;
  State state;
  double V = 0;
  std::string message;
};

// Newton on the balances in scaled unknowns z = [F / F_in,total, T / T_in]
// (and ln V when sizing); rows scaled by the inlet total flow and by the
// inlet heat-capacity flow times T_in, so every residual is of order one.
// Kept in a CstrWorkspace: reset() for each tank reuses the buffers.
class CstrSolver {
 public:
  void reset(CstrBalances& b, const NewtonOptions& options) {
    b_ = &b;
    options_ = options;
    n_ = b.n();
    const Stream& in = b.inlet();
    Fs_ = in.total_flow();
    Ts_ = in.T;
    const double C = b.mechanism().heat_capacity_flow(in.T, in.F.data());
    Es_ = b.heat() == HeatMode::Adiabatic ? (C > 0 ? C * in.T : 1.0) : in.T;
    iterations_ = 0;
    solves_ = 0;
    g_.resize(n_ + 1);
    dg_.resize(n_ + 1, n_ + 2);
    F_.resize(n_);
  }

  // Balances at a fixed volume V from `start`.
  Outcome rate(const State& start, double V) {
    Outcome out;
    rate(start, V, out);
    return out;
  }
  // Same, into `out` (its buffers reused).
  void rate(const State& start, double V, Outcome& out) {
    const int m = n_ + 1;
    Eigen::VectorXd& z = z_;
    z.resize(m);
    lo_.resize(m);
    up_.resize(m);
    set_start(start, z, lo_, up_);
    auto fn = [this, V](const Eigen::VectorXd& x, Eigen::VectorXd& f, Eigen::MatrixXd* J) {
      const double T = unpack(x, F_);
      b_->eval(F_.data(), T, V, g_, J ? &dg_ : nullptr);
      scale_rows(g_, f, J ? &dg_ : nullptr, J, n_ + 1);
    };
    finish(std::cref(fn), z, lo_, up_, V, false, rate_newton_, out);
  }

  // Volume and contents together, from `start` at V_start, such that the
  // key conversion is X_target.
  Outcome size(const State& start, double V_start, const ConversionBasis& basis, double X_target) {
    const int m = n_ + 2;
    Eigen::VectorXd& z = z_;
    z.resize(m);
    lo_.resize(m);
    up_.resize(m);
    set_start(start, z, lo_, up_);
    z[n_ + 1] = std::log(V_start);
    lo_[n_ + 1] = -std::numeric_limits<double>::infinity();
    up_[n_ + 1] = std::numeric_limits<double>::infinity();
    auto fn = [&](const Eigen::VectorXd& x, Eigen::VectorXd& f, Eigen::MatrixXd* J) {
      const double T = unpack(x, F_);
      const double V = std::exp(x[n_ + 1]);
      Eigen::VectorXd& g = g_;
      Eigen::MatrixXd& dg = dg_;
      std::vector<double>& F = F_;
      b_->eval(F.data(), T, V, g, J ? &dg : nullptr);
      scale_rows(g, f, J ? &dg : nullptr, J, n_ + 1);
      f[n_ + 1] = basis.conversion(F.data()) - X_target;
      if (J) {
        for (int r = 0; r <= n_; ++r) (*J)(r, n_ + 1) = dg(r, n_ + 1) * V / row_scale(r);
        J->row(n_ + 1).setZero();
        (*J)(n_ + 1, basis.key) = -Fs_ / basis.F_key_feed;
      }
    };
    Outcome out;
    finish(std::cref(fn), z, lo_, up_, 0.0, true, size_newton_, out);
    return out;
  }

  // Largest change of a scaled unknown between two states.
  double distance(const State& a, const State& b) const {
    double d = std::abs(a.T - b.T) / Ts_;
    for (int i = 0; i < n_; ++i) d = std::max(d, std::abs(a.F[i] - b.F[i]) / Fs_);
    return d;
  }
  double flow_scale() const { return Fs_; }
  double temperature_scale() const { return Ts_; }
  long iterations() const { return iterations_; }
  long solves() const { return solves_; }

 private:
  void set_start(const State& s, Eigen::VectorXd& z, Eigen::VectorXd& lo,
                 Eigen::VectorXd& up) const {
    for (int i = 0; i < n_; ++i) {
      z[i] = std::max(s.F[i], kFlowFloor * Fs_) / Fs_;
      lo[i] = 0.0;
      up[i] = std::numeric_limits<double>::infinity();
    }
    z[n_] = std::clamp(s.T, 1.01 * kLowestT, 0.99 * kHighestT) / Ts_;
    lo[n_] = kLowestT / Ts_;
    up[n_] = kHighestT / Ts_;
  }
  double unpack(const Eigen::VectorXd& x, std::vector<double>& F) const {
    for (int i = 0; i < n_; ++i) F[i] = x[i] * Fs_;
    return x[n_] * Ts_;
  }
  double row_scale(int r) const { return r < n_ ? Fs_ : Es_; }
  // f = g / row scale; J (rows 0..n) = dg / row scale * column scale.
  void scale_rows(const Eigen::VectorXd& g, Eigen::VectorXd& f, const Eigen::MatrixXd* dg,
                  Eigen::MatrixXd* J, int rows) const {
    for (int r = 0; r < rows; ++r) {
      f[r] = g[r] / row_scale(r);
      if (!J) continue;
      for (int c = 0; c < n_; ++c) (*J)(r, c) = (*dg)(r, c) / row_scale(r) * Fs_;
      (*J)(r, n_) = (*dg)(r, n_) / row_scale(r) * Ts_;
    }
  }
  // `fn` wraps a reference to the caller's lambda: a std::function holding
  // a reference_wrapper never allocates.
  void finish(const ResidualFunction& fn, Eigen::VectorXd& z, const Eigen::VectorXd& lo,
              const Eigen::VectorXd& up, double V, bool sizing, NewtonWorkspace& newton,
              Outcome& out) {
    out.converged = false;
    out.V = 0;
    out.message.clear();
    NewtonResult nr;
    try {
      nr = solve_newton(fn, z, lo, up, options_, newton);
    } catch (const std::exception& e) {
      // A property evaluated out of its domain at the start itself.
      out.state = State{};
      out.message = e.what();
      ++solves_;
      return;
    }
    ++solves_;
    iterations_ += nr.iterations;
    out.converged = nr.converged;
    out.message = nr.message;
    out.state.F.resize(n_);
    out.state.T = unpack(z, out.state.F);
    out.V = sizing ? std::exp(z[n_ + 1]) : V;
  }

  CstrBalances* b_ = nullptr;
  NewtonOptions options_;
  int n_ = 0;
  double Fs_ = 1, Ts_ = 1, Es_ = 1;
  long iterations_ = 0;
  long solves_ = 0;
  // Buffers of the solves; rating (n + 1 unknowns) and sizing (n + 2)
  // keep separate Newton buffers so that neither resizes the other's.
  Eigen::VectorXd z_, lo_, up_, g_;
  Eigen::MatrixXd dg_;
  std::vector<double> F_;
  NewtonWorkspace rate_newton_, size_newton_;
};

// What a CstrWorkspace keeps between runs.
struct Buffers {
  explicit Buffers(const SunContext& ctx) : pfr(ctx) {}
  PfrWorkspace pfr;  // the adiabatic-limit start
  std::vector<double> beta;
  CstrBalances balances, iso_balances;
  CstrSolver solver, iso_solver;
};

struct March {
  bool ok = false;
  State state;  // last solution
  double V = 0;
  State previous;  // the one before it (the feed at V = 0 for the first)
  double V_previous = 0;
  std::string message;
};

// Natural-parameter continuation in ln V from a solution at V_from to V_to,
// each solution starting the next. A step that hops too far is halved;
// where the branch ends (a turning point) the march jumps to whichever
// solution at that volume the fallback starts reach, nearest in T. `stop`
// (optional) ends the march early when it returns true.
March march(CstrSolver& s, const State& from, double V_from, double V_to, int steps,
            const std::vector<State>& fallbacks,
            const std::function<bool(const State&, double V)>& stop) {
  March m;
  m.state = from;
  m.V = V_from;
  m.previous = from;
  m.V_previous = V_from;
  const double ln_end = std::log(V_to);
  double ln_V = std::log(V_from);
  const double h = (ln_end - ln_V) / std::max(steps, 1);
  Outcome o;  // reused by every step
  while (ln_V < ln_end) {
    double step = h;
    int halvings = 0;
    for (;;) {
      const double ln_try = (ln_V + step >= ln_end) ? ln_end : ln_V + step;
      const double V_try = (ln_try == ln_end) ? V_to : std::exp(ln_try);
      s.rate(m.state, V_try, o);
      const bool jump = o.converged && s.distance(o.state, m.state) > kMaxStateChange;
      if (o.converged && (!jump || halvings >= kMaxHalvings)) {
        m.previous = m.state;
        m.V_previous = m.V;
        m.state = o.state;
        m.V = V_try;
        ln_V = ln_try;
        break;
      }
      if (halvings < kMaxHalvings) {
        step *= 0.5;
        ++halvings;
        continue;
      }
      // The branch ends before V_try: ignition or extinction.
      std::optional<Outcome> best;
      for (const auto& f : fallbacks) {
        Outcome fo = s.rate(f, V_try);
        if (fo.converged &&
            (!best || std::abs(fo.state.T - m.state.T) < std::abs(best->state.T - m.state.T)))
          best = fo;
      }
      if (!best) {
        m.message = fmt::format("continuation stopped at V = {:.6g} m3: {}", V_try, o.message);
        return m;
      }
      m.previous = m.state;
      m.V_previous = m.V;
      m.state = best->state;
      m.V = V_try;
      ln_V = ln_try;
      break;
    }
    if (stop && stop(m.state, m.V)) break;
  }
  m.ok = true;
  return m;
}

// The branch that starts at the feed (V -> 0), continued to V_to.
March feed_branch(CstrSolver& s, const Stream& inlet, double V_first, double V_to, int steps,
                  const std::vector<State>& fallbacks,
                  const std::function<bool(const State&, double V)>& stop) {
  const State feed{inlet.F, inlet.T};
  Outcome first;
  double V0 = V_first;
  for (int k = 0; k <= kFirstVolumeRetries; ++k, V0 *= 1e-3) {
    s.rate(feed, V0, first);
    if (first.converged) break;
  }
  if (!first.converged) {
    March m;
    m.message = "continuation could not start near V = 0: " + first.message;
    return m;
  }
  if ((stop && stop(first.state, first.V)) || first.V >= V_to) {
    March m;
    m.ok = true;
    m.state = first.state;
    m.V = first.V;
    m.previous = feed;
    m.V_previous = 0;
    return m;
  }
  return march(s, first.state, first.V, V_to, steps, fallbacks, stop);
}

bool same_state(const State& a, const State& b, double distinct_T, const CstrSolver& s) {
  // Isothermal states share T; their flows are compared on the same
  // relative footing (distinct_T / T_in of the inlet total flow).
  if (std::abs(a.T - b.T) > distinct_T) return false;
  for (size_t i = 0; i < a.F.size(); ++i)
    if (std::abs(a.F[i] - b.F[i]) > distinct_T / s.temperature_scale() * s.flow_scale())
      return false;
  return true;
}

void add_distinct(std::vector<State>& states, const State& x, double distinct_T,
                  const CstrSolver& s) {
  for (const auto& y : states)
    if (same_state(x, y, distinct_T, s)) return;
  states.push_back(x);
}

struct Counts {
  long iterations = 0;
  long solves = 0;
};

struct Rating {
  std::vector<State> states;     // every distinct solution found
  std::optional<State> reached;  // the one continued from the feed
  std::string message;           // why the last failed start failed
};

Rating rate_all(CstrSolver& s, const Stream& inlet, double V, const std::vector<State>& starts,
                const CstrOptions& options) {
  Rating out;
  Outcome o;
  for (const auto& st : starts) {
    s.rate(st, V, o);
    if (o.converged)
      add_distinct(out.states, o.state, options.distinct_T, s);
    else
      out.message = o.message;
  }
  std::vector<State> fallbacks = starts;
  fallbacks.insert(fallbacks.end(), out.states.begin(), out.states.end());
  March m = feed_branch(s, inlet, V * kFirstVolumeFraction, V, options.continuation_steps,
                        fallbacks, nullptr);
  if (m.ok) {
    add_distinct(out.states, m.state, options.distinct_T, s);
    out.reached = m.state;
  } else {
    out.message = m.message;
  }
  return out;
}

State between(const State& a, const State& b, double f) {
  State s;
  s.T = (1 - f) * a.T + f * b.T;
  for (size_t i = 0; i < a.F.size(); ++i) s.F.push_back((1 - f) * a.F[i] + f * b.F[i]);
  return s;
}

// The tank's adiabatic limit (see adiabatic_limit), computed at most once
// per run: it is the costliest start (a CVODE run through a practically
// unlimited bed), and sizing asks for it up to three times.
class LimitOnce {
 public:
  LimitOnce(const Mechanism& mech, const std::vector<double>& beta, const Stream& inlet,
            HeatMode heat, PfrWorkspace& pfr, const PfrOptions& options)
      : mech_(mech), beta_(beta), inlet_(inlet), heat_(heat), pfr_(pfr), options_(options) {}
  // nullptr when the integration failed (SolverError).
  const Stream* get() {
    if (!tried_) {
      tried_ = true;
      try {
        value_ = adiabatic_limit(mech_, beta_, inlet_, heat_, pfr_, options_);
      } catch (const SolverError&) {
      }
    }
    return value_ ? &*value_ : nullptr;
  }

 private:
  const Mechanism& mech_;
  const std::vector<double>& beta_;
  const Stream& inlet_;
  HeatMode heat_;
  PfrWorkspace& pfr_;
  const PfrOptions& options_;
  bool tried_ = false;
  std::optional<Stream> value_;
};

// The guesses, then `first`, the adiabatic limit and points between them.
std::vector<State> starts_from(std::span<const SteadyState> guesses, const State& first,
                               const Stream& inlet, LimitOnce& limit) {
  std::vector<State> starts;
  starts.reserve(guesses.size() + 2 + kBetween.size());
  for (const auto& g : guesses) {
    if (g.F.size() != inlet.F.size())
      throw std::invalid_argument("CstrOptions::guesses: a guess has the wrong number of flows");
    starts.push_back(State{g.F, g.T});
  }
  starts.push_back(first);
  // Without the limit start, the others and the continuation remain.
  if (const Stream* lim = limit.get()) {
    const State limit_state{lim->F, lim->T};
    starts.push_back(limit_state);
    for (double f : kBetween) starts.push_back(between(first, limit_state, f));
  }
  return starts;
}

// Every steady state of a tank of volume V, and the one reached from the
// feed. Starts: (a) the isothermal solution at T_in (the feed itself for
// an isothermal tank), (b) the adiabatic limit, (c) points between; the
// continuation from V -> 0 runs in any case. Warm starts
// (options.guesses) come first. `extra` counts the solves of the
// isothermal pre-solve.
Rating rate_tank(const Mechanism& mech, HeatMode heat, const Stream& inlet, double V,
                 const CstrOptions& options, Buffers& ws, LimitOnce& limit, Counts& extra) {
  const State feed{inlet.F, inlet.T};
  State first = feed;
  if (heat == HeatMode::Adiabatic) {
    ws.iso_balances.reset(mech, ws.beta, HeatMode::Isothermal, inlet);
    ws.iso_solver.reset(ws.iso_balances, options.newton);
    Rating r = rate_all(ws.iso_solver, inlet, V, {feed}, options);
    extra.iterations += ws.iso_solver.iterations();
    extra.solves += ws.iso_solver.solves();
    if (r.reached) first = *r.reached;
  }
  std::vector<State> starts = starts_from(options.guesses, first, inlet, limit);
  if (heat == HeatMode::Adiabatic) {
    // Where the feed is too cold for the plug-flow limit to light off, that
    // limit is cold too, and the ignited state of the tank (its outlet
    // near the adiabatic rise) would be missed: each reaction run alone
    // to nearly its whole extent on the adiabatic line, and points
    // between, are further starts.
    for (int j = 0; j < mech.n_reactions(); ++j) {
      const auto& nu = mech.reactions()[j].nu;
      double xi = std::numeric_limits<double>::infinity();
      for (int i = 0; i < mech.n_species(); ++i)
        if (nu[i] < 0) xi = std::min(xi, inlet.F[i] / -nu[i]);
      if (!(xi > 0) || !std::isfinite(xi)) continue;
      try {
        const Stream o = stream_after_extent(mech, inlet, HeatMode::Adiabatic, j, 0.999 * xi);
        const State burnt{o.F, o.T};
        starts.push_back(burnt);
        for (double f : kBetween) starts.push_back(between(first, burnt, f));
      } catch (const SolverError&) {
        // No temperature closes that balance: not a start.
      }
    }
  }
  return rate_all(ws.solver, inlet, V, starts, options);
}

// "300.72 K, 334.79 K and 499.99 K"
std::string temperature_list(const std::vector<State>& states) {
  std::string list;
  for (size_t k = 0; k < states.size(); ++k) {
    if (k > 0) list += (k + 1 == states.size()) ? " and " : ", ";
    list += temperature_words(states[k].T);
  }
  return list;
}

}  // namespace

struct CstrWorkspace::State : Buffers {
  using Buffers::Buffers;
};

CstrWorkspace::CstrWorkspace(const SunContext& ctx) : state_(std::make_unique<State>(ctx)) {}
CstrWorkspace::~CstrWorkspace() = default;
CstrWorkspace::CstrWorkspace(CstrWorkspace&&) noexcept = default;
CstrWorkspace& CstrWorkspace::operator=(CstrWorkspace&&) noexcept = default;

StageResult run_cstr(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                     const ConversionBasis& basis, const SunContext& ctx,
                     const CstrOptions& options) {
  CstrWorkspace ws(ctx);
  return run_cstr(mech, spec, inlet, basis, ws, options);
}

namespace {

// One tank's run: what its steps share. The workspace's balances and
// solver are bound to this tank.
struct Tank {
  const Mechanism& mech;
  const ReactorSpec& spec;
  const Stream& inlet;
  const ConversionBasis& basis;
  CstrWorkspace& workspace;
  const CstrOptions& options;
  Buffers& ws;
  CstrBalances& balances;
  CstrSolver& solver;
  LimitOnce limit;
  Counts extra;  // the isothermal pre-solve
  // The outcome: the reported state, the volume, every steady state found.
  State out;
  double V = 0;
  std::vector<State> states;
  std::vector<std::string> warnings;

  Tank(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
       const ConversionBasis& basis, CstrWorkspace& workspace, const CstrOptions& options)
      : mech(mech),
        spec(spec),
        inlet(inlet),
        basis(basis),
        workspace(workspace),
        options(options),
        ws(workspace.state()),
        balances(ws.balances),
        solver(ws.solver),
        limit(mech, (ws.beta = rate_multipliers(mech, spec)), inlet, spec.heat, ws.pfr,
              options.pfr) {
    balances.reset(mech, ws.beta, spec.heat, inlet, spec.tank_cooling);
    solver.reset(balances, options.newton);
  }

  // A target out of reach: the message quotes what the tank can reach.
  [[noreturn]] void refuse(double X_t) {
    std::optional<StageReach> reach;
    try {
      reach = cstr_reach(mech, spec, inlet, basis, workspace, options);
    } catch (const SolverError&) {
    }
    if (reach)
      throw InfeasibleError(spec.where, out_of_reach_text(spec, X_t, *reach, mech), reach->X_max,
                            "conversion");
    throw InfeasibleError(spec.where,
                          fmt::format("stage {}: target conversion {:.4f} is out of reach: the "
                                      "net rate there is zero or negative",
                                      spec.id, X_t));
  }

  void size(double X_t) {
    const double X_in = basis.conversion(inlet);
    if (X_t <= X_in)
      throw InputError(spec.where,
                       fmt::format("stage {}: target conversion {:.4f} is not above the "
                                   "conversion at its inlet ({:.4f})",
                                   spec.id, X_t, X_in));
    if (mech.n_reactions() == 1)
      size_one_reaction(X_t, X_in);
    else
      size_by_continuation(X_t);
    states.push_back(out);
    search_other_states();
  }

  void size_one_reaction(double X_t, double X_in) {
    const int n = mech.n_species();
    // One reaction: the target fixes the extent, hence the outlet flows;
    // the energy balance then fixes T and the rate there fixes V.
    const auto& nu = mech.reactions()[0].nu;
    const double nu_key = nu[basis.key];
    if (!(nu_key < 0)) refuse(X_t);
    const double extent = (X_t - X_in) * basis.F_key_feed / -nu_key;
    for (int i = 0; i < n; ++i)  // a reactant would run out first
      if (inlet.F[i] + nu[i] * extent < -1e-12 * inlet.total_flow()) refuse(X_t);
    try {
      const Stream o = stream_after_extent(mech, inlet, spec.heat, 0, extent);
      out.F = o.F;
      out.T = o.T;
    } catch (const SolverError& e) {
      throw SolverError(
          fmt::format("{}: outlet temperature at X = {:.4f}: {}", spec.id, X_t, e.what()));
    }
    const double R = balances.volumetric_rate(out.F.data(), out.T, 0);
    if (!(R > 0) || !std::isfinite(R)) refuse(X_t);
    V = extent / R;
  }

  void size_by_continuation(double X_t) {
    // Several reactions: follow the feed branch in volume until the
    // target is passed, then solve F, T and ln V together.
    const double v0 = mech.volumetric_flow(inlet.T, inlet.P, inlet.F.data());
    const double V_end = options.pfr.max_space_time * v0;
    auto reached = [&](const State& st, double) { return basis.conversion(st.F.data()) >= X_t; };
    // Where the branch turns (ignition), these starts find where it lands.
    const std::vector<State> fallbacks = starts_from({}, State{inlet.F, inlet.T}, inlet, limit);
    March m = feed_branch(solver, inlet, V_end * std::pow(10.0, -kSizingDecades), V_end,
                          options.continuation_steps, fallbacks, reached);
    if (!m.ok)
      throw SolverError(
          fmt::format("{}: sizing by continuation in volume failed ({}); try: a lower target "
                      "conversion, a different feed temperature, or give a volume to rate",
                      spec.id, m.message));
    if (!reached(m.state, m.V)) refuse(X_t);
    // Start from the point interpolated linearly in X inside the bracket.
    const double X0 = basis.conversion(m.previous.F.data());
    const double X1 = basis.conversion(m.state.F.data());
    const double f = X1 > X0 ? (X_t - X0) / (X1 - X0) : 1.0;
    const double V_lo = m.V_previous > 0 ? m.V_previous : m.V * 1e-3;
    const double ln_V0 = (1 - f) * std::log(V_lo) + f * std::log(m.V);
    Outcome o = solver.size(between(m.previous, m.state, f), std::exp(ln_V0), basis, X_t);
    if (!o.converged) o = solver.size(m.state, m.V, basis, X_t);
    if (!o.converged) {
      // Bisection on ln V with rated tanks, each started from the lower end.
      double lo = std::log(V_lo), hi = std::log(m.V);
      State lo_state = m.previous;
      o = Outcome{};
      for (int k = 0; k < kMaxBisections; ++k) {
        const double mid = 0.5 * (lo + hi);
        Outcome t = solver.rate(lo_state, std::exp(mid));
        if (!t.converged) break;
        o = t;
        const double X = basis.conversion(t.state.F.data());
        if (std::abs(X - X_t) <= 1e-12) break;
        if (X < X_t) {
          lo = mid;
          lo_state = t.state;
        } else {
          hi = mid;
        }
      }
      if (!o.converged)
        throw SolverError(fmt::format(
            "{}: Newton did not converge when sizing for X = {:.4f} (between V = {:.6g} and "
            "{:.6g} m3); try: a slightly different target conversion, or rate a given volume "
            "instead",
            spec.id, X_t, V_lo, m.V));
    }
    out = o.state;
    V = o.V;
  }

  // An outlet-purity target: follow the feed branch in volume until the
  // species' mole fraction falls to the target, then Brent on ln V with
  // tanks rated from the branch's last state before the crossing.
  void size_to_purity(const OutletTarget& t) {
    const std::string& sp = mech.species()[t.species].id;
    auto fraction = [&](const State& st) {
      double total = 0;
      for (double f : st.F) total += std::max(f, 0.0);
      return total > 0 ? std::max(st.F[t.species], 0.0) / total : 0.0;
    };
    const double x_in = fraction(State{inlet.F, inlet.T});
    if (!(t.x < x_in))
      throw InputError(spec.where,
                       fmt::format("stage {}: outlet target {} = {:.6g} ppm is not below its "
                                   "value at the stage inlet ({:.6g} ppm)",
                                   spec.id, sp, t.x * 1e6, x_in * 1e6));
    const double v0 = mech.volumetric_flow(inlet.T, inlet.P, inlet.F.data());
    const double V_end = options.pfr.max_space_time * v0;
    auto reached = [&](const State& st, double) { return fraction(st) <= t.x; };
    const std::vector<State> fallbacks = starts_from({}, State{inlet.F, inlet.T}, inlet, limit);
    March m = feed_branch(solver, inlet, V_end * std::pow(10.0, -kSizingDecades), V_end,
                          options.continuation_steps, fallbacks, reached);
    if (!m.ok)
      throw SolverError(fmt::format(
          "{}: sizing to an outlet purity by continuation in volume failed ({}); try: a looser "
          "purity, a different feed temperature, or give a volume to rate",
          spec.id, m.message));
    if (!reached(m.state, m.V))
      throw InfeasibleError(
          spec.where,
          fmt::format("stage {}: outlet target {} = {:.6g} ppm is out of reach; the least this "
                      "tank reaches is {:.6g} ppm (at V = {:.6g} m3, the space-time bound)",
                      spec.id, sp, t.x * 1e6, fraction(m.state) * 1e6, m.V));
    const double V_lo = m.V_previous > 0 ? m.V_previous : m.V * 1e-3;
    const State from = m.V_previous > 0 ? m.previous : State{inlet.F, inlet.T};
    Outcome last;
    auto excess = [&](double ln_V) {
      last = solver.rate(from, std::exp(ln_V));
      if (!last.converged)
        throw SolverError(
            fmt::format("{}: Newton did not converge when sizing for outlet {} = "
                        "{:.6g} ppm (at V = {:.6g} m3); try: rate a given volume",
                        spec.id, sp, t.x * 1e6, std::exp(ln_V)));
      return fraction(last.state) - t.x;
    };
    const double a = std::log(V_lo), b = std::log(m.V);
    const ScalarRoot r = brent_root(excess, a, b, excess(a), excess(b), 1e-14, kMaxBisections);
    excess(r.x);  // the state at the root found
    out = last.state;
    V = last.V;
    states.push_back(out);
    search_other_states();
  }

  void search_other_states() {
    // The target fixes the state; the tank of that volume may still have
    // other steady states, and start-up from the feed may settle in one of
    // them. Rating it tells the designer (a failure here is told, not fatal).
    try {
      Rating r = rate_tank(mech, spec.heat, inlet, V, options, ws, limit, extra);
      for (const auto& st : r.states) add_distinct(states, st, options.distinct_T, solver);
      if (states.size() > 1) {
        const bool reached = r.reached && same_state(*r.reached, out, options.distinct_T, solver);
        std::sort(states.begin(), states.end(),
                  [](const State& a, const State& b) { return a.T < b.T; });
        warnings.push_back(fmt::format(
            "stage {}: {} steady states found at the sized volume (T = {}); reporting the one "
            "at the target conversion ({}), which start-up from the feed {}",
            spec.id, states.size(), temperature_list(states), temperature_words(out.T),
            reached ? "reaches" : "does not reach"));
      }
    } catch (const SolverError& e) {
      warnings.push_back(fmt::format(
          "stage {}: other steady states of the tank at its sized volume were not searched "
          "(rating it failed: {}); start-up from the feed may settle elsewhere",
          spec.id, e.what()));
    }
  }

  void rate() {
    V = spec.volume
            ? *spec.volume
            : (spec.catalyst_mass && spec.bulk_density ? *spec.catalyst_mass / *spec.bulk_density
                                                       : 0.0);
    if (!(V > 0) || !std::isfinite(V))
      throw InputError(spec.where,
                       fmt::format("stage {}: a stirred tank needs a volume above 0 m3 (e.g. "
                                   "volume: 2 m3), a catalyst_mass with bulk_density, or a "
                                   "target_conversion",
                                   spec.id));
    Rating r = rate_tank(mech, spec.heat, inlet, V, options, ws, limit, extra);
    if (r.states.empty())
      throw SolverError(fmt::format(
          "{} at V = {:.6g} m3: Newton did not converge from any start ({}); try: check the "
          "units and size of A and Ea, change the feed temperature or the volume, or model the "
          "stage as a pfr",
          spec.id, V, r.message));
    states = r.states;
    // The reported outlet is the state reached by continuation from V -> 0:
    // a tank filled and started up from the feed side follows that branch,
    // so this is the state it physically settles in. Without it, the state
    // nearest the inlet temperature stands in (and a warning says so).
    if (r.reached) {
      out = *r.reached;
    } else {
      out = *std::min_element(states.begin(), states.end(), [&](const State& a, const State& b) {
        return std::abs(a.T - inlet.T) < std::abs(b.T - inlet.T);
      });
      warnings.push_back(fmt::format(
          "stage {}: continuation in volume from the feed failed ({}); reporting the steady "
          "state nearest the inlet temperature",
          spec.id, r.message));
    }
    std::sort(states.begin(), states.end(),
              [](const State& a, const State& b) { return a.T < b.T; });
    if (states.size() > 1) {
      warnings.push_back(fmt::format(
          "stage {}: {} steady states found (T = {}); reporting the one reached from the feed "
          "by continuation in volume",
          spec.id, states.size(), temperature_list(states)));
    }
  }

  StageResult result() const {
    const bool sizing = spec.sized();
    const double X_in = basis.conversion(inlet);
    StageResult res;
    res.outlet_target = spec.target_outlet;
    res.id = spec.id;
    res.kind = StageKind::Cstr;
    res.heat = spec.heat;
    res.sized = sizing;
    res.inlet = inlet;
    res.bulk_density = spec.bulk_density;
    res.activity = spec.activity;
    res.volume = V;
    if (spec.bulk_density) res.catalyst_mass = V * *spec.bulk_density;
    res.outlet = Stream{out.T, inlet.P, out.F};
    for (auto& f : res.outlet.F) f = std::max(f, 0.0);  // solver round-off below zero
    res.cooling = spec.heat == HeatMode::Adiabatic ? spec.tank_cooling : std::nullopt;
    res.duty = spec.heat == HeatMode::Isothermal ? balances.duty(out.F.data(), out.T, V)
               : res.cooling                     ? balances.wall_duty(out.T)
                                                 : 0.0;
    res.conversion = basis.conversion(res.outlet);
    res.T_max = std::max(inlet.T, out.T);
    res.T_min = std::min(inlet.T, out.T);
    res.profile.push_back(ProfilePoint{0.0, inlet.T, X_in, inlet.F, {}});
    res.profile.push_back(ProfilePoint{V, res.outlet.T, res.conversion, res.outlet.F, {}});
    std::vector<std::string> stability_notes;
    for (const auto& st : states) {
      SteadyState ss;
      ss.T = st.T;
      ss.F = st.F;
      for (auto& f : ss.F) f = std::max(f, 0.0);
      ss.X = basis.conversion(ss.F.data());
      ss.outlet = same_state(st, out, options.distinct_T, solver);
      // The state stands without its stability (said so) rather than the
      // run failing over it.
      try {
        const TankStability stab =
            tank_stability(balances, ss.F.data(), ss.T, V, spec.heat_capacity.value_or(0.0));
        ss.eigenvalues = stab.eigenvalues;
        ss.kind = stab.kind;
      } catch (const SolverError& e) {
        stability_notes.push_back(
            fmt::format("stage {}: the stability of the steady state at {} was not computed ({})",
                        spec.id, temperature_words(ss.T), e.what()));
      }
      res.steady_states.push_back(std::move(ss));
    }
    res.stats.newton_iters = solver.iterations() + extra.iterations;
    res.stats.message =
        fmt::format("{}Newton: {} solves, {} iterations; {} steady state(s)",
                    spec.target_conversion && mech.n_reactions() == 1
                        ? "sized in closed form from the stoichiometry; "
                        : "",
                    solver.solves() + extra.solves, res.stats.newton_iters, states.size());
    res.warnings = warnings;
    res.warnings.insert(res.warnings.end(), stability_notes.begin(), stability_notes.end());
    add_space_velocities(mech, res);
    return res;
  }
};

}  // namespace

StageResult run_cstr(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                     const ConversionBasis& basis, CstrWorkspace& workspace,
                     const CstrOptions& options) {
  Tank t(mech, spec, inlet, basis, workspace, options);
  if (spec.target_outlet)
    t.size_to_purity(*spec.target_outlet);
  else if (spec.target_conversion)
    t.size(*spec.target_conversion);
  else
    t.rate();
  return t.result();
}

namespace {

// A reactant of a reaction that consumes the key that a tank runs out of
// only as its volume grows without bound: in a tank the outlet is the
// contents, so such a reactant's flow falls like a power of 1/V (1/V when
// the rate is first order in it) and at the largest volume searched is
// small but far above the 1e-6 of its inlet flow a tubular path reaches.
// Taken as vanishing when under 1e-2 of its inlet flow and falling at
// least like V^-0.4 over the last step of the march (an equilibrium-bound
// reactant levels off instead); the one with least left, or -1.
int reactant_vanishing_in_tank(const Mechanism& mech, const Stream& inlet, const March& m,
                               int key) {
  if (!(m.V_previous > 0 && m.V > m.V_previous)) return -1;
  const double ln_V = std::log(m.V / m.V_previous);
  int found = -1;
  double least = 1e-2;
  for (const auto& rx : mech.reactions()) {
    if (!(rx.nu[key] < 0)) continue;
    for (int i = 0; i < mech.n_species(); ++i) {
      if (!(rx.nu[i] < 0) || !(inlet.F[i] > 0)) continue;
      const double left = m.state.F[i] / inlet.F[i];
      const double left_before = m.previous.F[i] / inlet.F[i];
      if (!(left > 0 && left < least && left_before > left)) continue;
      if (std::log(left_before / left) / ln_V < 0.4) continue;
      least = left;
      found = i;
    }
  }
  return found;
}

}  // namespace

StageReach cstr_reach(const Mechanism& mech, const ReactorSpec& spec, const Stream& inlet,
                      const ConversionBasis& basis, CstrWorkspace& workspace,
                      const CstrOptions& options) {
  Buffers& ws = workspace.state();
  ws.beta = rate_multipliers(mech, spec);
  ws.balances.reset(mech, ws.beta, spec.heat, inlet, spec.tank_cooling);
  ws.solver.reset(ws.balances, options.newton);
  LimitOnce limit(mech, ws.beta, inlet, spec.heat, ws.pfr, options.pfr);
  const double V_end =
      options.pfr.max_space_time * mech.volumetric_flow(inlet.T, inlet.P, inlet.F.data());
  StageReach reach;
  reach.X_max = basis.conversion(inlet);
  reach.V_at_X_max = 0.0;
  reach.T_at_X_max = inlet.T;
  // Every solution of the march, as the volume grows: the largest
  // conversion of the branch. The march stops once the branch has gone
  // flat (the tank's balances are ever harder to solve at volumes far
  // past that).
  const double X_in = reach.X_max;
  std::optional<State> last;
  auto track = [&](const State& st, double V) {
    const double X = basis.conversion(st.F.data());
    if (X > reach.X_max) {
      reach.X_max = X;
      reach.V_at_X_max = V;
      reach.T_at_X_max = st.T;
    }
    const bool flat = last && std::abs(X - X_in) > 1e-6 &&
                      std::abs(X - basis.conversion(last->F.data())) <= 1e-13 &&
                      std::abs(st.T - last->T) <= 1e-9 * st.T;
    last = st;
    return flat;
  };
  const std::vector<State> fallbacks = starts_from({}, State{inlet.F, inlet.T}, inlet, limit);
  const March m = feed_branch(ws.solver, inlet, V_end * std::pow(10.0, -kSizingDecades), V_end,
                              options.continuation_steps, fallbacks, track);
  // No solution at all (a volume range that is not finite, from a feed
  // whose volumetric flow is not): nothing is known of the branch.
  if (m.state.F.size() != inlet.F.size() || m.previous.F.size() != inlet.F.size())
    throw SolverError(
        fmt::format("{}: what the tank can reach: continuation in volume found no "
                    "solution ({})",
                    spec.id, m.message.empty() ? "none tried" : m.message));
  // A march that fails far out along the branch still tells where it went,
  // if it had stopped moving.
  const double X_prev = basis.conversion(m.previous.F.data());
  const double X_last = basis.conversion(m.state.F.data());
  const bool still_rising = m.V_previous > 0 && m.V > m.V_previous &&
                            (X_last - X_prev) / std::log(m.V / m.V_previous) * std::log(2.0) > 1e-6;
  if (!m.ok && (m.V_previous <= 0 || still_rising))
    throw SolverError(fmt::format("{}: what the tank can reach: continuation in volume failed ({})",
                                  spec.id, m.message));
  reach.X_end = X_last;
  reach.T_end = m.state.T;
  classify_reach_end(mech, inlet, m.state.F.data(), basis.key, still_rising, reach);
  if (reach.end == ReachEnd::SpaceTimeBound || reach.end == ReachEnd::RateVanishes) {
    if (const int i = reactant_vanishing_in_tank(mech, inlet, m, basis.key); i >= 0) {
      reach.end = ReachEnd::ReactantUsedUp;
      reach.species = i;
    }
  }
  // One reaction: the tank's outlet runs along the same adiabatic (or
  // isothermal) line as a tube's, to the same equilibrium point. A cooled
  // tank's outlet is on neither line (the wall takes heat out): its end
  // stays the one the continuation approached.
  if (!(spec.tank_cooling && spec.heat == HeatMode::Adiabatic))
    exact_equilibrium_end(mech, inlet, spec.heat, basis, reach);
  finish_reach(reach, m.V);
  return reach;
}

}  // namespace rxtrain
