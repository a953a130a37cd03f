// What a study runs: a full grid over varied case paths, or a Monte Carlo
// set of sampled inputs, and which slice of it a shard takes.
//
// Run order (the order of rows in every output):
//   grid: row-major over the --vary options in the order given, the last
//         varying fastest (as nested loops written in that order);
//   Monte Carlo: run 0 .. runs-1, the inputs of run r drawn from the
//         counter-based generator of sampling.hpp with (seed, r, input
//         position), so any run can be computed alone.
// Shard K of N (1-based) takes the contiguous block of runs
//   [floor((K-1) M / N), floor(K M / N))   of the M runs,
// so shards 1..N together hold every run once, in order.
//
// Chains: the runs are cut into fixed chains of `chain` consecutive runs,
// [0, L), [L, 2L), ... In a chain every run's stirred tanks are
// warm-started from the previous run's steady states; a chain's first run
// (and any run after a failed one) starts cold. Where the train has
// tubular stages only, a chain is instead a batch of runs integrated
// together (sweep.hpp). The chains depend only on the study and its case,
// never on --jobs or --shard, so every run is computed the same way
// however the study is split, and its row is the same.
#pragma once

#include <Eigen/Dense>
#include <algorithm>
#include <cstddef>
#include <cstdint>
#include <optional>
#include <span>
#include <string>
#include <utility>
#include <vector>

#include "rxtrain/base/units.hpp"
#include "rxtrain/sweep/case_path.hpp"
#include "rxtrain/sweep/sampling.hpp"

namespace rxtrain::sweep {

// Runs per chain of a grid over a case with a stirred tank: neighbouring
// grid points are close, so the previous point's steady states are good
// Newton starts. Long chains cost parallelism (a thread takes a whole
// chain) and recomputation (a shard that starts inside a chain reruns its
// earlier runs, up to L - 1), short ones cold starts; 16 keeps both small
// for sweeps of a few hundred runs.
inline constexpr std::size_t kGridChainLength = 16;

// One grid axis: n values from start to stop (SI), evenly spaced, or
// evenly spaced in ln for a logarithmic axis; the ends are exact.
struct Axis {
  std::size_t path = 0;  // index in the CasePathTable
  std::string name;
  double start = 0, stop = 0;
  std::size_t n = 1;
  bool log = false;

  double value(std::size_t i) const;
};

struct SampledInput {
  std::size_t path = 0;
  std::string name;
  Distribution dist;
};

// Parameters drawn together from the multivariate normal of a fit's
// estimate and covariance (`--sample-fit FIT.json`, written by `rxtrain
// fit --json`): y = L z, z standard normal (draws `first_input + i` of the
// run), L the lower Cholesky factor of the covariance in each parameter's
// own scale; a log-scale parameter is exp(ln estimate + y_i), lognormal.
// A rate constant the fit estimated at its T_ref is rewritten for the
// case's own law at each draw: A_case = A_fit exp(-Ea/R (1/T_ref,case -
// 1/T_ref,fit)), or A_fit exp(Ea/(R T_ref,fit)) for a case without T_ref,
// with the drawn Ea of the same reaction where the fit estimated it, else
// the case's.
struct FittedDraws {
  struct Param {
    std::size_t path = 0;  // index in the CasePathTable
    std::string name;
    bool log = false;
    double estimate = 0;    // SI
    double T_ref_fit = 0;   // > 0: a rate constant to rewrite as above
    double T_ref_case = 0;  // 0: the case's law has no T_ref
    int ea_param = -1;      // the drawn Ea of the same reaction, or -1
    double Ea = 0;          // the case's Ea, where none is drawn
  };
  std::vector<Param> params;
  Eigen::MatrixXd L;
  std::string source;  // the FIT.json as named on the command line

  // values (SI, params order) of run `run`.
  void draw(std::uint64_t seed, std::uint64_t run, std::uint32_t first_input,
            std::span<double> values) const;
};

// Reads `rxtrain fit --json` output (`text`, named `file` in messages) for
// the case `c`. Throws InputError at `file` for JSON that is not a fit's,
// a parameter path the case lacks (with the nearest one), a covariance
// that is not positive definite (unidentified parameters).
FittedDraws read_fitted_draws(const std::string& text, const std::string& file,
                              const CasePathTable& table, const Case& c);

struct Study {
  std::vector<Axis> axes;             // a grid study
  std::vector<SampledInput> samples;  // or a Monte Carlo study
  std::optional<FittedDraws> fitted;  // with or without samples: Monte Carlo
  std::size_t runs = 0;               // Monte Carlo: number of runs
  std::uint64_t seed = 0;             // Monte Carlo: the generator's seed
  // Runs per chain: kGridChainLength for a grid over a case with a
  // stirred tank; 1 (every run cold, each handed out alone) for a case
  // without one, which has nothing to warm-start, and for Monte Carlo,
  // whose consecutive runs are independent draws, so a neighbour's state
  // is no better a start than a cold one. The sweep command then sets
  // kBatchRuns where the runs can be batched (batched_study, sweep.hpp).
  std::size_t chain = 1;

  bool monte_carlo() const { return !samples.empty() || fitted.has_value(); }
  std::size_t run_count() const;
  std::size_t chain_length() const { return std::max<std::size_t>(chain, 1); }
  std::vector<std::size_t> paths() const;        // table indices, input order
  std::vector<std::string> input_names() const;  // the paths, input order
  // The inputs (SI) of run `run`, in input order; out.size() == inputs.
  void inputs(std::size_t run, std::span<double> out) const;
  // Canonical description, one line each (SI, shortest round-trip
  // numbers): what two shards must share to belong to one study.
  std::vector<std::string> definition() const;
};

// Most runs one study may hold (a grid's product or --runs): beyond it a
// typo such as a missing colon would silently ask for years of work.
inline constexpr std::size_t kMaxRuns = 100'000'000;

// Parses --vary "PATH=START:STOP:N" ("PATH=log:START:STOP:N" or
// "log:PATH=START:STOP:N" for a logarithmic axis) and --sample
// "PATH=normal(MEAN,SD)" | "uniform(LO,HI)" | "lognormal(MEDIAN,SIGMA)"
// (SIGMA a plain number, the SD of ln X). Values carry units of the
// field's dimension; an SD is a difference, so "5 degC" there is 5 K.
// Throws InputError located at the option for an unknown path, a unit of
// the wrong dimension, a value outside the field's range, a malformed
// spec, a path given twice, --vary with --sample, or neither.
// With `fitted`, the fit's parameters are drawn after the --sample inputs
// (a path in both is refused).
Study parse_study(const std::vector<std::string>& vary, const std::vector<std::string>& sample,
                  std::size_t runs, std::uint64_t seed, const CasePathTable& table,
                  const UnitParser& units, std::optional<FittedDraws> fitted = std::nullopt);

// A value for path p given as text ("420 degC", a bare number is SI), in
// SI. Throws InputError located at `option` for a unit of the wrong
// dimension. (The range is checked when the value is applied.)
double path_value(const std::string& text, const CasePath& p, const UnitParser& units,
                  const std::string& option);

inline constexpr std::size_t kMaxShards = 1'000'000;

// A slice of the runs, "K/N" with 1 <= K <= N.
struct Shard {
  std::size_t k = 1, n = 1;

  // Throws InputError located at "--shard" when malformed.
  static Shard parse(const std::string& text);
  // [first, last) run indices of this shard among `total` runs.
  std::pair<std::size_t, std::size_t> range(std::size_t total) const;
  std::string to_string() const;
};

}  // namespace rxtrain::sweep
