#include "rxtrain/fit/fit.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <map>
#include <mutex>

#include "rxtrain/base/error.hpp"
#include "rxtrain/chem/thermo.hpp"
#include "rxtrain/solvers/least_squares.hpp"
#include "rxtrain/solvers/student_t.hpp"
#include "rxtrain/sweep/run_point.hpp"
#include "rxtrain/sweep/sampling.hpp"
#include "rxtrain/sweep/thread_pool.hpp"

namespace rxtrain::fit {

namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();
// The weighted residual of an output of a run that failed: far outside any
// real misfit, so Ceres turns away from the step that made it.
constexpr double kFailedResidual = 1e3;

bool log_scale(const CaseField& f) {
  return f.spec->kind == CaseFieldKind::RateA || f.spec->kind == CaseFieldKind::AdsorptionK;
}

// The size of a linear parameter's ordinary changes (difference steps and
// the spread of extra starts), by its unit.
double typical_of(const CaseField& f, double v0) {
  const std::string_view si = f.spec->si;
  if (si == "J/mol") return 1e4;
  if (si == "K") return 100;
  if (si == "1") return 1;
  return std::max(std::abs(v0), 1e-300);
}

// The lab case with every free rate constant rewritten as k(T_ref).
Case with_reference_temperatures(const Case& lab, const sweep::CasePathTable& table,
                                 const LabData& data, const FitOptions& o,
                                 std::vector<std::string>& notes) {
  Case c = lab;
  if (!o.reference_temperature) return c;
  std::vector<Reaction> rx = c.mechanism.reactions();
  bool changed = false;
  double T_mean = lab.feed.T;
  for (std::size_t i = 0; i < data.input_names.size(); ++i)
    if (data.input_names[i] == "feed.T") {
      T_mean = 0;
      for (const auto& run : data.inputs) T_mean += run[i];
      T_mean /= static_cast<double>(data.runs());
    }
  for (const FreeParameter& p : o.free) {
    const CaseField& f = table.at(p.path);
    if (f.spec->kind != CaseFieldKind::RateA) continue;
    RateLaw& law = rx[static_cast<std::size_t>(f.index)].rate;
    if (law.T_ref) continue;
    law.A *= std::exp(-law.Ea / (kGasConstant * T_mean));
    law.T_ref = T_mean;
    changed = true;
    notes.push_back(
        fmt::format("reaction {} has no T_ref: A is estimated as the rate constant at "
                    "{:.2f} K, the mean temperature of the data, and the fitted case "
                    "gives that T_ref",
                    rx[static_cast<std::size_t>(f.index)].id, T_mean));
  }
  if (changed) c.mechanism = Mechanism(c.mechanism.phase(), c.mechanism.species(), std::move(rx));
  return c;
}

struct Setup {
  const Case& base;
  const LabData& data;
  std::vector<const CaseField*> params;
  std::vector<double> v0;  // start values, SI
  std::vector<bool> log;
  sweep::CaseEditor editor;
  std::size_t jobs;
  std::size_t n_out;
  // Each worker's working case and solver state, kept from evaluation to
  // evaluation (CVODE re-initialized, not re-created).
  mutable std::vector<Case> work;
  mutable std::vector<sweep::PointWorkspace> ws;

  // The SI value of each parameter from the internal vector.
  std::vector<double> values(std::span<const double> u) const {
    std::vector<double> v(u.size());
    for (std::size_t i = 0; i < u.size(); ++i) v[i] = log[i] ? v0[i] * std::exp(u[i]) : u[i];
    return v;
  }
};

// Every run at every point: results[point][run].
std::vector<std::vector<sweep::PointResult>> run_points(const Setup& s,
                                                        std::span<const std::vector<double>> u) {
  const std::size_t runs = s.data.runs();
  std::vector<std::vector<sweep::PointResult>> out(u.size(), std::vector<sweep::PointResult>(runs));
  std::vector<std::vector<double>> values(u.size());
  for (std::size_t p = 0; p < u.size(); ++p) values[p] = s.values(u[p]);
  const std::size_t jobs = std::min(s.ws.size(), u.size() * runs);
  auto& work = s.work;
  auto& ws = s.ws;
  sweep::parallel_for(u.size() * runs, jobs, [&](std::size_t task, std::size_t worker) {
    const std::size_t p = task / runs, r = task % runs;
    std::vector<double> all = s.data.inputs[r];
    all.insert(all.end(), values[p].begin(), values[p].end());
    ws[worker].train.warm_starts.clear();  // every run cold: the same answer on any thread
    try {
      s.editor.apply(s.base, all, work[worker]);
    } catch (const InputError& e) {
      out[p][r].status = sweep::RunStatus::InvalidInput;
      out[p][r].message = e.what();
      return;
    }
    out[p][r] = sweep::evaluate_point(work[worker], s.data.outputs, ws[worker]);
  });
  return out;
}

bool run_ok(const sweep::PointResult& r) {
  if (!sweep::has_outputs(r.status)) return false;
  return std::all_of(r.outputs.begin(), r.outputs.end(),
                     [](const auto& v) { return v.has_value(); });
}

// Weighted residuals of one point, run-major: w_rk (measured - fitted).
void weighted_residuals(const LabData& d, const std::vector<sweep::PointResult>& results,
                        const std::vector<std::vector<double>>& w, std::span<double> out) {
  const std::size_t K = d.outputs.columns().size();
  for (std::size_t r = 0; r < d.runs(); ++r)
    for (std::size_t k = 0; k < K; ++k)
      out[r * K + k] = run_ok(results[r]) ? w[r][k] * (d.measured[r][k] - *results[r].outputs[k])
                                          : kFailedResidual;
}

// The residual SD of each output from unweighted residuals (SI).
std::vector<double> residual_sds(const LabData& d, const std::vector<sweep::PointResult>& res,
                                 int n_params) {
  const std::size_t K = d.outputs.columns().size();
  const double per_output_dof =
      static_cast<double>(d.runs()) - static_cast<double>(n_params) / static_cast<double>(K);
  std::vector<double> s(K, 0.0);
  for (std::size_t k = 0; k < K; ++k) {
    double ss = 0;
    for (std::size_t r = 0; r < d.runs(); ++r)
      if (run_ok(res[r])) {
        const double e = d.measured[r][k] - *res[r].outputs[k];
        ss += e * e;
      }
    s[k] = std::sqrt(ss / per_output_dof);
  }
  return s;
}

}  // namespace

FitResult run_fit(const Case& lab, const sweep::CasePathTable& table, const LabData& data,
                  const FitOptions& o) {
  FitResult out;
  const int n = static_cast<int>(o.free.size());
  const std::size_t K = data.outputs.columns().size();
  const int n_res = static_cast<int>(data.runs() * K);
  if (n == 0) throw InputError({"--free", 0, 0}, "name at least one parameter to estimate");
  for (std::size_t i = 0; i < o.free.size(); ++i) {
    for (std::size_t j = 0; j < i; ++j)
      if (o.free[i].path == o.free[j].path)
        throw InputError({"--free", 0, 0},
                         fmt::format("{} is named twice", table.at(o.free[i].path).name));
    if (std::find(data.input_paths.begin(), data.input_paths.end(), o.free[i].path) !=
        data.input_paths.end())
      throw InputError({"--free", 0, 0},
                       fmt::format("{} is a column of {} (a run's input), so it cannot be "
                                   "estimated",
                                   table.at(o.free[i].path).name, data.file));
  }
  if (n_res <= n)
    throw InputError({data.file, 0, 0},
                     fmt::format("{} runs of {} measured output(s) give {} residuals for {} "
                                 "parameters: at least {} are needed to leave a degree of freedom",
                                 data.runs(), K, n_res, n, n + 1));
  const Case base = with_reference_temperatures(lab, table, data, o, out.notes);

  std::vector<std::size_t> which = data.input_paths;
  for (const auto& p : o.free) which.push_back(p.path);
  Setup s{base, data, {}, {}, {}, sweep::CaseEditor(table, which), o.jobs, K, {}, {}};
  s.work.assign(sweep::resolve_jobs(o.jobs), base);
  s.ws.resize(s.work.size());
  for (auto& w : s.ws) {
    w.train.equilibrium_views = false;
    // The differences of the Jacobian need runs far tighter than their
    // step (docs/fit.md).
    w.train.solvers.tube.cvode.rtol = 1e-10;
  }
  std::vector<double> typical(n), lower(n, -kInf), upper(n, kInf);
  for (int i = 0; i < n; ++i) {
    const CaseField& f = table.at(o.free[i].path);
    s.params.push_back(&f);
    const double v0 = f.get(base);
    s.v0.push_back(v0);
    s.log.push_back(log_scale(f));
    const auto& b = o.free[i];
    if (s.log[i]) {
      typical[i] = 1;
      if (b.lower) lower[i] = std::log(*b.lower / v0);
      if (b.upper) upper[i] = std::log(*b.upper / v0);
    } else {
      typical[i] = typical_of(f, v0);
      if (std::isfinite(f.range.lo))
        lower[i] = f.range.lo + (f.range.lo_open ? 1e-9 * typical[i] : 0);
      if (std::isfinite(f.range.hi))
        upper[i] = f.range.hi - (f.range.hi_open ? 1e-9 * typical[i] : 0);
      if (b.lower) lower[i] = std::max(lower[i], *b.lower);
      if (b.upper) upper[i] = std::min(upper[i], *b.upper);
    }
  }
  std::vector<double> u0(n);
  for (int i = 0; i < n; ++i) u0[i] = s.log[i] ? 0.0 : s.v0[i];
  for (int i = 0; i < n; ++i)
    if (!(u0[i] >= lower[i] && u0[i] <= upper[i]))
      throw InputError({"--bound", 0, 0},
                       fmt::format("the case's value of {} ({:g} SI) lies outside its bounds: "
                                   "start inside them",
                                   s.params[i]->name, s.v0[i]));

  // Weights: 1/sigma; without sigmas, 1/scale of each output first, then
  // 1/s of each output from the first pass (one variance per output).
  std::vector<std::vector<double>> w(data.runs(), std::vector<double>(K, 1.0));
  if (data.weighted()) {
    for (std::size_t r = 0; r < data.runs(); ++r)
      for (std::size_t k = 0; k < K; ++k) w[r][k] = 1 / data.sigma[r][k];
  } else {
    for (std::size_t k = 0; k < K; ++k) {
      double mean = 0, ss = 0;
      for (const auto& m : data.measured) mean += m[k];
      mean /= static_cast<double>(data.runs());
      for (const auto& m : data.measured) ss += (m[k] - mean) * (m[k] - mean);
      double scale = std::sqrt(ss / static_cast<double>(data.runs()));
      if (!(scale > 0)) scale = std::abs(mean) > 0 ? std::abs(mean) : 1.0;
      for (auto& row : w) row[k] = 1 / scale;
    }
  }

  LeastSquaresProblem problem;
  problem.n_params = n;
  problem.n_residuals = n_res;
  problem.lower = lower;
  problem.upper = upper;
  problem.typical = typical;
  problem.evaluate = [&](std::span<const std::vector<double>> points,
                         std::span<std::vector<double>> res, std::span<char> ok) {
    const auto results = run_points(s, points);
    for (std::size_t p = 0; p < points.size(); ++p) {
      weighted_residuals(data, results[p], w, res[p]);
      ok[p] = 1;
    }
  };
  LeastSquaresOptions lso;
  // Runs solved to rtol 1e-10: a relative step of 1e-4 keeps the
  // difference's rounding (1e-10 / 1e-4) and truncation (1e-8) errors near
  // 1e-6 of the derivative.
  lso.step = 1e-4;
  lso.function_tolerance = 1e-12;
  lso.parameter_tolerance = 1e-10;
  lso.gradient_tolerance = 1e-12;
  lso.max_iterations = 100;

  const auto solve_from_starts = [&]() {
    LeastSquaresResult best = solve_least_squares(problem, u0, lso);
    for (int start = 1; start < o.starts; ++start) {
      std::vector<double> u(n);
      for (int i = 0; i < n; ++i) {
        const double z = sweep::standard_normal(o.seed, static_cast<std::uint64_t>(start),
                                                static_cast<std::uint32_t>(i));
        // Log scale: a factor of about 3 either way; linear: 30 % of the
        // parameter's typical size.
        u[i] = s.log[i] ? u0[i] + std::log(3.0) * z : u0[i] + 0.3 * typical[i] * z;
        u[i] = std::clamp(u[i], lower[i], upper[i]);
      }
      try {
        LeastSquaresResult r = solve_least_squares(problem, u, lso);
        if (r.cost < best.cost) best = std::move(r);
      } catch (const SolverError&) {
        // a start where no run can be had: the others stand
      }
    }
    return best;
  };
  LeastSquaresResult ls = solve_from_starts();
  out.iterations = ls.iterations;
  std::vector<std::vector<double>> u_final{ls.x};
  auto final_runs = run_points(s, u_final)[0];
  if (!data.weighted() && K > 1) {
    // Second pass: each output weighted by its own residual SD.
    const auto sd = residual_sds(data, final_runs, n);
    for (auto& row : w)
      for (std::size_t k = 0; k < K; ++k) row[k] = sd[k] > 0 ? 1 / sd[k] : row[k];
    u0 = ls.x;
    ls = solve_least_squares(problem, u0, lso);
    out.iterations += ls.iterations;
    u_final = {ls.x};
    final_runs = run_points(s, u_final)[0];
  }
  out.converged = ls.converged;
  out.solver_message = ls.message;
  out.starts = o.starts;
  out.weighted = data.weighted();
  out.dof = n_res - n;
  out.t95 = student_t_quantile(0.975, out.dof);
  out.output_names = data.outputs.names();
  out.output_units = data.outputs.units();
  out.input_names = data.input_names;

  // Residual SDs and the final weights: 1/s_k (estimated) or 1/sigma.
  const auto sd_plain = residual_sds(data, final_runs, n);
  std::vector<std::vector<double>> wf = w;
  if (data.weighted()) {
    out.residual_sd.assign(K, 0.0);
    const double per_output_dof =
        static_cast<double>(data.runs()) - static_cast<double>(n) / static_cast<double>(K);
    for (std::size_t k = 0; k < K; ++k) {
      double chi2 = 0;
      for (std::size_t r = 0; r < data.runs(); ++r)
        if (run_ok(final_runs[r])) {
          const double e = (data.measured[r][k] - *final_runs[r].outputs[k]) / data.sigma[r][k];
          chi2 += e * e;
        }
      out.residual_sd[k] = std::sqrt(chi2 / per_output_dof);
    }
  } else {
    out.residual_sd = sd_plain;
    for (auto& row : wf)
      for (std::size_t k = 0; k < K; ++k) row[k] = sd_plain[k] > 0 ? 1 / sd_plain[k] : row[k];
  }
  // The Jacobian of the final weighted residuals: the solver's, rescaled
  // row by row from its weights to the final ones.
  Eigen::MatrixXd J = ls.jacobian;
  for (std::size_t r = 0; r < data.runs(); ++r)
    for (std::size_t k = 0; k < K; ++k)
      J.row(static_cast<Eigen::Index>(r * K + k)) *= wf[r][k] / w[r][k];
  const GaussNewtonCovariance gn = gauss_newton_covariance(J);
  out.rank = gn.rank;
  out.covariance = gn.cov;
  out.correlation = Eigen::MatrixXd::Zero(n, n);
  for (int i = 0; i < n; ++i)
    for (int j = 0; j < n; ++j) {
      const double d = std::sqrt(gn.cov(i, i) * gn.cov(j, j));
      out.correlation(i, j) = i == j ? 1.0 : (std::isfinite(d) && d > 0 ? gn.cov(i, j) / d : 0.0);
    }
  if (gn.rank < n)
    out.notes.push_back(
        fmt::format("the data cannot tell all {} parameters apart (the "
                    "sensitivity matrix has rank {}): the standard errors of the "
                    "unidentified ones are infinite; fix some or add runs that "
                    "move them",
                    n, gn.rank));
  const std::vector<double> est = s.values(ls.x);
  for (int i = 0; i < n; ++i) {
    FittedParameter p;
    const CaseField& f = *s.params[i];
    p.path = f.name;
    p.scale = s.log[i] ? Scale::Log : Scale::Linear;
    p.estimate = est[i];
    p.std_error = std::sqrt(gn.cov(i, i));
    const double half = out.t95 * p.std_error;
    if (s.log[i]) {
      p.ci_lo = s.v0[i] * std::exp(ls.x[i] - half);
      p.ci_hi = s.v0[i] * std::exp(ls.x[i] + half);
    } else {
      p.ci_lo = est[i] - half;
      p.ci_hi = est[i] + half;
    }
    p.unit = f.unit.to_string();
    if (f.spec->kind == CaseFieldKind::RateA)
      p.T_ref = base.mechanism.reactions()[static_cast<std::size_t>(f.index)].rate.T_ref;
    const double tol = 1e-7 * std::max(1.0, std::abs(ls.x[i]));
    p.at_bound = std::abs(ls.x[i] - lower[i]) < tol || std::abs(ls.x[i] - upper[i]) < tol;
    if (p.at_bound)
      out.notes.push_back(
          fmt::format("{} ended on its bound: its standard error and interval "
                      "describe the data near the bound only",
                      p.path));
    out.parameters.push_back(std::move(p));
  }
  if (!out.converged)
    out.notes.push_back(
        fmt::format("the least-squares solver did not report convergence ({}); "
                    "treat the estimates as provisional",
                    ls.message));

  // The runs at the estimate.
  for (std::size_t r = 0; r < data.runs(); ++r) {
    FitRun run;
    run.row = r + 1;
    run.line = data.lines[r];
    run.inputs = data.inputs[r];
    run.measured = data.measured[r];
    const bool ok = run_ok(final_runs[r]);
    for (std::size_t k = 0; k < K; ++k) {
      if (ok) {
        const double fit = *final_runs[r].outputs[k];
        const double e = data.measured[r][k] - fit;
        run.fitted.emplace_back(fit);
        run.residual.emplace_back(e);
        run.weighted.push_back(data.weighted() ? std::optional<double>(e / data.sigma[r][k])
                                               : std::nullopt);
        const double z = e * wf[r][k] / (data.weighted() ? out.residual_sd[k] : 1.0);
        run.standardized.push_back(z);
        if (std::abs(e * wf[r][k]) > 3)
          out.notes.push_back(
              fmt::format("run {} (line {}): {} misses by {:.1f} {} (measured "
                          "{:.6g}, fitted {:.6g})",
                          run.row, run.line, out.output_names[k], e * wf[r][k],
                          data.weighted() ? "sigma" : "residual SDs", data.measured[r][k], fit));
      } else {
        run.fitted.emplace_back();
        run.residual.emplace_back();
        run.weighted.emplace_back();
        run.standardized.push_back(0);
      }
    }
    if (!ok) {
      run.failure = final_runs[r].message.empty() ? sweep::run_status_name(final_runs[r].status)
                                                  : final_runs[r].message;
      out.notes.push_back(
          fmt::format("run {} (line {}) cannot be computed at the estimate ({}); "
                      "it counted as a residual of {:g} in the fit",
                      run.row, run.line, run.failure, kFailedResidual));
    }
    out.runs.push_back(std::move(run));
  }

  // Lack of fit from replicated inputs (weighted by the final weights).
  std::map<std::vector<double>, std::vector<std::size_t>> groups;
  for (std::size_t r = 0; r < data.runs(); ++r) groups[data.inputs[r]].push_back(r);
  LackOfFit lof;
  for (const auto& [inputs, rows] : groups) {
    if (rows.size() < 2) continue;
    ++lof.groups;
    for (std::size_t k = 0; k < K; ++k) {
      double mean = 0;
      for (std::size_t r : rows) mean += data.measured[r][k] * wf[r][k];
      mean /= static_cast<double>(rows.size());
      for (std::size_t r : rows) {
        const double e = data.measured[r][k] * wf[r][k] - mean;
        lof.ss_pure += e * e;
      }
      lof.dof_pure += static_cast<int>(rows.size()) - 1;
    }
  }
  if (lof.groups > 0 && lof.dof_pure > 0) {
    double ssr = 0;
    for (std::size_t r = 0; r < data.runs(); ++r)
      for (std::size_t k = 0; k < K; ++k)
        if (out.runs[r].residual[k]) ssr += std::pow(*out.runs[r].residual[k] * wf[r][k], 2);
    lof.dof_lack = out.dof - lof.dof_pure;
    lof.ss_lack = ssr - lof.ss_pure;
    if (lof.dof_lack > 0 && lof.ss_pure > 0) {
      lof.F = (lof.ss_lack / lof.dof_lack) / (lof.ss_pure / lof.dof_pure);
      const double d1 = lof.dof_lack, d2 = lof.dof_pure;
      // The upper tail directly, I_{d2/(d2 + d1 F)}(d2/2, d1/2), which keeps
      // its digits where 1 - CDF would cancel to 0.
      lof.p_value = lof.F > 0 ? incomplete_beta(d2 / 2, d1 / 2, d2 / (d2 + d1 * lof.F)) : 1.0;
      out.lack_of_fit = lof;
      if (lof.p_value < 0.05)
        out.notes.push_back(
            fmt::format("lack of fit: the misfit exceeds the scatter of the "
                        "replicates (F = {:.3g}, p = {:.3g}): the rate law may "
                        "not describe these data",
                        lof.F, lof.p_value));
    }
  }

  // The lab case with the estimates.
  out.fitted = base;
  std::vector<CaseField> fields;
  for (const auto* f : s.params) fields.push_back(*f);
  set_case_fields(out.fitted, fields, est);
  return out;
}

}  // namespace rxtrain::fit
