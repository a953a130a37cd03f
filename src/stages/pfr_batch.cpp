#include "rxtrain/stages/pfr_batch.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <optional>
#include <stdexcept>
#include <vector>

#include "pfr_shared.hpp"
#include "rxtrain/base/error.hpp"

namespace rxtrain {

struct PfrBatchWorkspace::State {
  std::vector<detail::PfrSystem> sys;  // one per item
  std::vector<double> length;          // V_b of each item, m3
  std::optional<CvodeIntegrator> ode;
  CvodeOptions ode_options;
  int N = 0;  // states per item
  std::vector<double> y, y0, scale, block, dky;
  std::vector<double> T_max, T_min, slope;  // per item; slope: last nonzero dT/ds
  std::vector<char> watch;                  // items whose T may turn inside a bed
  std::vector<double> target;               // sizing: each item's target conversion
  std::vector<char> done;                   // item has reached its end
  std::vector<double> end;                  // where (V when sizing, else s = 1)
  std::vector<double> out;                  // the items' states there

  // Right-hand side and Jacobian blocks on s = V / V_b. A recoverable
  // failure of one block (a trial state out of range) is the batch's:
  // CVODE shortens the common step.
  int rhs(const double* yy, double* ydot) {
    for (std::size_t b = 0; b < sys.size(); ++b) {
      const std::size_t o = b * N;
      if (const int rc = sys[b].rhs(yy + o, ydot + o); rc != 0) return rc;
      for (int i = 0; i < N; ++i) ydot[o + i] *= length[b];
    }
    return 0;
  }
  int jac(const double* yy, double* blocks) {
    const std::size_t NN = static_cast<std::size_t>(N) * N;
    for (std::size_t b = 0; b < sys.size(); ++b) {
      double* J = blocks + b * NN;
      if (const int rc = sys[b].jac(yy + b * N, J); rc != 0) return rc;
      for (std::size_t k = 0; k < NN; ++k) J[k] *= length[b];
    }
    return 0;
  }
};

PfrBatchWorkspace::PfrBatchWorkspace(const SunContext& ctx)
    : ctx_(&ctx), state_(std::make_unique<State>()) {}
PfrBatchWorkspace::~PfrBatchWorkspace() = default;
PfrBatchWorkspace::PfrBatchWorkspace(PfrBatchWorkspace&&) noexcept = default;
PfrBatchWorkspace& PfrBatchWorkspace::operator=(PfrBatchWorkspace&&) noexcept = default;

// A stage sized to an outlet purity is never batched (it has neither a
// volume nor a conversion target): its size is polished on whole ratings
// of the lone stage (pfr.cpp), which a batch cannot share.
bool pfr_batchable(const Mechanism& mech, const ReactorSpec& spec, const PfrOptions& options) {
  // Effectiveness factors take the lone path (run_pfr), which binds them.
  if (spec.pellet && !spec.pellet->D_eff.empty()) return false;
  // So does a pressure drop (the state P).
  if (spec.has_pressure_drop()) return false;
  // So does a cooled tube (the wall's heat, the coolant's state).
  if (spec.cooling) return false;
  return spec.type == ReactorType::Pfr &&
         (spec.target_conversion || (spec.volume && *spec.volume > 0)) && !options.full_profile &&
         !options.stop_temperature && !uses_sparse_jacobian(options, mech.n_species()) &&
         mech.n_species() + 2 <= kMaxBlockSize;
}

namespace {

// Binds each item's system to the batch's state, starts the integrator at
// every inlet (re-created only when it cannot be reused).
CvodeIntegrator& bind_batch(std::span<const PfrBatchItem> items, PfrBatchWorkspace& ws,
                            const PfrOptions& options, bool sizing) {
  PfrBatchWorkspace::State& st = ws.state();
  const int m = static_cast<int>(items.size());
  const int N = items[0].mech->n_species() + 2;
  st.sys.resize(m);
  st.length.resize(m);
  st.y0.clear();
  st.scale.clear();
  for (int b = 0; b < m; ++b) {
    const PfrBatchItem& it = items[b];
    st.sys[b].reset(*it.mech, rate_multipliers(*it.mech, *it.spec), it.spec->heat, it.inlet.P);
    // Sized beds share V itself (each stops at its own root), beds of given
    // volume run on s = V / V_b.
    st.length[b] = sizing ? 1.0 : *it.spec->volume;
    detail::initial_state(it.inlet, st.block);
    st.y0.insert(st.y0.end(), st.block.begin(), st.block.end());
    detail::state_scale(*it.mech, it.inlet, st.block);
    st.scale.insert(st.scale.end(), st.block.begin(), st.block.end());
  }
  const CvodeOptions& co = options.cvode;
  const bool reuse =
      st.ode && st.ode->blocks() == m && st.N == N && detail::same_options(st.ode_options, co);
  if (!reuse) {
    st.ode.reset();
    st.ode.emplace(
        ws.context(), m, N,
        [s = &st](double, const double* y, double* yd) { return s->rhs(y, yd); },
        [s = &st](double, const double* y, double* J) { return s->jac(y, J); }, co, st.scale);
    st.N = N;
    st.ode_options = co;
  } else {
    st.ode->set_scale(st.scale);
  }
  CvodeIntegrator& ode = *st.ode;
  ode.init(0.0, st.y0);
  return ode;
}

// Sizing: each run's target conversion is a root of its own; returns where
// the integration stops (s = 1, or the longest space-time limit).
double set_batch_roots(std::span<const PfrBatchItem> items, PfrBatchWorkspace::State& st,
                       CvodeIntegrator& ode, const PfrOptions& options, bool sizing) {
  const int m = static_cast<int>(items.size());
  const int N = st.N;
  // The integration goes on until every run has met its target,
  // at most to the
  // longest of the runs' space-time limits (as run_pfr).
  double s_end = 1.0;
  st.target.assign(m, 0.0);
  if (sizing) {
    s_end = 0;
    for (int b = 0; b < m; ++b) {
      const PfrBatchItem& it = items[b];
      st.target[b] = *it.spec->target_conversion;
      // run_pfr's input error; the caller reruns the run alone for it.
      if (st.target[b] <= it.basis.conversion(it.inlet))
        throw SolverError("batch: a target conversion not above its inlet's");
      s_end =
          std::max(s_end, options.max_space_time *
                              it.mech->volumetric_flow(it.inlet.T, it.inlet.P, it.inlet.F.data()));
    }
    // The integrator keeps this function until the next batch replaces it;
    // it holds the span by value, called only inside this function.
    ode.set_roots(
        m,
        [&st, items, N](double, const double* y, double* g) {
          for (std::size_t b = 0; b < items.size(); ++b)
            g[b] = items[b].basis.conversion(y + b * N) - st.target[b];
          return 0;
        },
        std::vector<int>(m, 1));
  } else {
    ode.set_roots(0, nullptr, {});
  }
  ode.set_stop_time(s_end);
  return s_end;
}

// Integrates the batch to s_end: each run's end (its root, or s = 1) and
// its temperature extremes. Throws SolverError, for the batch as a whole.
void integrate_batch(std::span<const PfrBatchItem> items, PfrBatchWorkspace::State& st,
                     CvodeIntegrator& ode, double s_end, bool sizing) {
  const int m = static_cast<int>(items.size());
  const int N = st.N;
  const int n = N - 2;
  st.done.assign(m, 0);
  st.end.assign(m, 1.0);
  st.out.resize(st.y0.size());
  // T_max and T_min: the ends, where T is monotonic (one reaction, or
  // isothermal); with several reactions in an adiabatic bed also every
  // step and every extreme inside one, as run_pfr finds them (a sign change
  // of dT/ds on CVODE's interpolating polynomial, bisected).
  st.T_max.resize(m);
  st.T_min.resize(m);
  st.slope.assign(m, 0.0);
  st.watch.assign(m, 0);
  bool any_watch = false;
  for (int b = 0; b < m; ++b) {
    const PfrBatchItem& it = items[b];
    st.T_max[b] = st.T_min[b] = it.inlet.T;
    if (it.spec->heat != HeatMode::Adiabatic || it.mech->n_reactions() == 1) continue;
    st.watch[b] = 1;
    any_watch = true;
    st.block.resize(N);
    if (st.sys[b].rhs(st.y0.data() + static_cast<std::size_t>(b) * N, st.block.data()) == 0)
      st.slope[b] = st.block[n];
  }
  st.dky.resize(st.y0.size());
  const auto dT_ds = [&](double at, int b) {
    ode.interpolate(at, 1, st.dky.data());
    return st.dky[static_cast<std::size_t>(b) * N + n];
  };
  const auto extreme = [&](int b, double at) {
    ode.interpolate(at, 0, st.dky.data());
    const double T = st.dky[static_cast<std::size_t>(b) * N + n];
    st.T_max[b] = std::max(st.T_max[b], T);
    st.T_min[b] = std::min(st.T_min[b], T);
  };
  // A run's end: its state there is its outlet.
  int ended = 0;
  const auto finish = [&](int b, double at) {
    st.done[b] = 1;
    st.end[b] = at;
    const std::size_t o = static_cast<std::size_t>(b) * N;
    std::copy(st.y.begin() + o, st.y.begin() + o + N, st.out.begin() + o);
    ++ended;
  };
  double s = 0;
  try {
    double s_prev = 0;
    for (;;) {
      // Step by step only where a temperature may turn inside a bed.
      const CvodeIntegrator::Event ev =
          any_watch ? ode.step(s_end, s, st.y) : ode.advance(s_end, s, st.y);
      for (int b = 0; b < m && any_watch; ++b) {
        if (!st.watch[b] || st.done[b]) continue;
        if (const auto at = detail::temperature_turn(s_prev, s, st.slope[b], dT_ds(s, b),
                                                     [&](double x) { return dT_ds(x, b); }))
          extreme(b, *at);
        const double T = st.y[static_cast<std::size_t>(b) * N + n];
        st.T_max[b] = std::max(st.T_max[b], T);
        st.T_min[b] = std::min(st.T_min[b], T);
      }
      s_prev = s;
      if (ev == CvodeIntegrator::Event::Root) {
        const std::vector<int> found = ode.roots_found();
        for (int b = 0; b < m; ++b)
          if (found[b] != 0 && !st.done[b]) finish(b, s);
        if (ended == m) break;
      } else if (ev == CvodeIntegrator::Event::Stop) {
        break;
      }
    }
  } catch (const SolverError& e) {
    throw SolverError(fmt::format("{} (batch of {} runs) at {:.6g} of {:.6g}: {}",
                                  items[0].spec->id, m, s, s_end, e.what()));
  }
  // The caller reruns each run alone for its own message.
  if (sizing && ended < m) throw SolverError("batch: a target conversion out of reach");
  for (int b = 0; b < m; ++b)
    if (!st.done[b]) finish(b, 1.0);
}

std::vector<StageResult> batch_results(std::span<const PfrBatchItem> items,
                                       const PfrBatchWorkspace::State& st,
                                       const PfrOptions& options, bool sizing,
                                       const SolverStats& stats) {
  const int m = static_cast<int>(items.size());
  const int N = st.N;
  const int n = N - 2;
  std::vector<StageResult> out(m);
  for (int b = 0; b < m; ++b) {
    const PfrBatchItem& it = items[b];
    const ReactorSpec& spec = *it.spec;
    const double* yb = st.out.data() + static_cast<std::size_t>(b) * N;
    const double* y0 = st.y0.data() + static_cast<std::size_t>(b) * N;
    StageResult& res = out[b];
    if (sizing && it.mech->n_reactions() == 1) {
      // As run_pfr: the volume by quadrature along the exact path.
      StageResult path;
      path.profile.push_back(detail::profile_point(0.0, y0, n, it.basis));
      std::vector<double> y_end;
      const double V =
          detail::size_by_quadrature(*it.mech, spec, it.inlet, it.basis, *spec.target_conversion,
                                     options.cvode.rtol, false, path, y_end);
      res = detail::pfr_result(*it.mech, spec, it.inlet, it.basis, true, V, y_end.data());
      res.profile = std::move(path.profile);
      res.T_max = std::max(it.inlet.T, res.outlet.T);
      res.T_min = std::min(it.inlet.T, res.outlet.T);
    } else {
      const double V_out = sizing ? st.end[b] : st.length[b];
      res = detail::pfr_result(*it.mech, spec, it.inlet, it.basis, sizing, V_out, yb);
      // The profile run_pfr keeps without full_profile: inlet and outlet.
      res.profile.push_back(detail::profile_point(0.0, y0, n, it.basis));
      res.profile.push_back(detail::profile_point(V_out, yb, n, it.basis));
      res.T_max = std::max(st.T_max[b], yb[n]);
      res.T_min = std::min(st.T_min[b], yb[n]);
    }
    if (sizing)
      detail::add_size_sensitivity(*it.mech, rate_multipliers(*it.mech, spec), it.basis, res);
    res.stats = stats;
  }
  return out;
}

}  // namespace

std::vector<StageResult> run_pfr_batch(std::span<const PfrBatchItem> items, PfrBatchWorkspace& ws,
                                       const PfrOptions& options) {
  if (items.empty()) return {};
  const int n = items[0].mech->n_species();
  const bool sizing = items[0].spec->target_conversion.has_value();
  for (const auto& it : items)
    if (it.mech->n_species() != n || !pfr_batchable(*it.mech, *it.spec, options) ||
        it.spec->target_conversion.has_value() != sizing)
      throw std::invalid_argument("run_pfr_batch: an item that cannot be batched");
  CvodeIntegrator& ode = bind_batch(items, ws, options, sizing);
  PfrBatchWorkspace::State& st = ws.state();
  const double s_end = set_batch_roots(items, st, ode, options, sizing);
  integrate_batch(items, st, ode, s_end, sizing);
  return batch_results(items, st, options, sizing, ode.stats());
}

}  // namespace rxtrain
