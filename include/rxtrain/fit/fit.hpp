// `rxtrain fit`: the case's own rate law fitted to lab runs by weighted
// nonlinear least squares (solvers/least_squares), each residual one run
// of the lab case edited by the sweep's machinery (sweep/case_path,
// sweep/run_point); the parameters' covariance, intervals and
// correlations; the runs' residuals. docs/fit.md gives the statistics.
//
// Parameters: A and adsorption K on a log scale (ln of the value over its
// start), everything else linear. A rate constant A is estimated as k at a
// reference temperature: the case's T_ref where it has one, else the mean
// temperature of the data (feed.T of the runs, or the case's feed T), and
// the fitted case then carries that T_ref (the same law, rewritten).
#pragma once

#include <Eigen/Dense>
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "rxtrain/case/case.hpp"
#include "rxtrain/fit/lab_data.hpp"

namespace rxtrain::fit {

enum class Scale { Linear, Log };

struct FreeParameter {
  std::size_t path = 0;                // CasePathTable index (of the lab case)
  std::optional<double> lower, upper;  // SI, from --bound
};

struct FitOptions {
  std::vector<FreeParameter> free;
  int starts = 1;          // the case's values, then starts - 1 seeded draws around them
  std::uint64_t seed = 1;  // of those draws
  std::size_t jobs = 0;    // threads for the runs; 0: every hardware thread
  // Rewrite A as k(T_ref) (above). Off: A and Ea as the case writes them,
  // which shows how correlated the plain form leaves them.
  bool reference_temperature = true;
};

struct FittedParameter {
  std::string path;
  Scale scale = Scale::Linear;
  double estimate = 0;  // SI
  double std_error =
      0;  // in the parameter's own scale (of ln A for a log-scale A); inf: unidentified
  double ci_lo = 0, ci_hi = 0;  // 95 %, SI (exp(ln x -+ t se) for log scale)
  std::string unit;             // SI
  std::optional<double> T_ref;  // a rate constant: the temperature it is k at
  bool at_bound = false;
};

struct FitRun {
  std::size_t row = 0;  // data row, from 1
  int line = 0;         // CSV line
  std::vector<double> inputs;
  std::vector<double> measured;
  std::vector<std::optional<double>> fitted;    // empty where the run failed
  std::vector<std::optional<double>> residual;  // measured - fitted, SI
  std::vector<std::optional<double>> weighted;  // residual / sigma (sigmas given)
  std::vector<double> standardized;             // residual / residual SD of its output
  std::string failure;                          // why the run failed at the estimate
};

struct LackOfFit {
  double ss_pure = 0, ss_lack = 0;  // weighted
  int dof_pure = 0, dof_lack = 0;
  double F = 0, p_value = 1;
  int groups = 0;  // sets of replicated inputs
};

struct FitResult {
  std::vector<FittedParameter> parameters;
  Eigen::MatrixXd covariance;   // own scales
  Eigen::MatrixXd correlation;  // NaN-free: 0 where a variance is infinite
  std::vector<std::string> output_names, output_units;
  std::vector<std::string> input_names;
  std::vector<double> residual_sd;  // per output: s (SI) or sqrt(chi2/dof) with sigmas
  bool weighted = false;
  int dof = 0;
  double t95 = 0;
  int rank = 0;  // of the weighted Jacobian; below the parameter count: not all identifiable
  std::vector<FitRun> runs;
  std::optional<LackOfFit> lack_of_fit;
  bool converged = false;
  int iterations = 0;
  int starts = 1;
  std::string solver_message;
  std::vector<std::string> notes;  // for the engineer: failed runs, outliers, bounds, T_ref
  Case fitted;                     // the lab case with the estimates
};

// Throws InputError for fewer residuals than parameters (no degrees of
// freedom left), a parameter given twice; SolverError when the lab case
// cannot be run at the starting values.
FitResult run_fit(const Case& lab, const sweep::CasePathTable& table, const LabData& data,
                  const FitOptions& options);

}  // namespace rxtrain::fit
