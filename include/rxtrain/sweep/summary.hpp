// What a study's rows add up to: runs per status, the P5/P50/P95 of every
// output over the runs that finished (status ok or over_limit: a run past a
// temperature limit still has its numbers, and leaving it out would hide
// the hot tail), and the design margin.
//
// Design margin: for each stage sized to a target (its catalyst mass, or
// its volume without a bulk density), the P95 over the runs of the amount
// needed to meet the target: 95 % of the sampled inputs need no more. A
// run whose target is out of reach (status infeasible) needs more than any
// amount and counts as +infinity; when more than 5 % of the runs are such,
// the P95 is unbounded and reported as such. Solver failures are left out
// (their need is unknown) and counted.
#pragma once

#include <cstddef>
#include <map>
#include <optional>
#include <string>
#include <vector>

#include "rxtrain/sweep/percentiles.hpp"
#include "rxtrain/sweep/sweep.hpp"
#include "rxtrain/sweep/sweep_csv.hpp"

namespace rxtrain::sweep {

struct OutputPercentiles {
  std::string name;
  std::optional<PercentileSummary> p;  // empty when no run gave a value
  std::string unit;                    // SI, for display ("K", "-"); set by the caller
};

struct DesignMargin {
  std::string column;          // e.g. "R3.catalyst_mass"
  std::size_t ok = 0;          // runs with a value
  std::size_t infeasible = 0;  // runs counted as +infinity
  std::optional<double> p50;   // empty when unbounded
  std::optional<double> p95;   // empty when unbounded
};

struct StudySummary {
  std::size_t runs = 0;
  std::map<std::string, std::size_t> statuses;  // runs per status name
  std::vector<OutputPercentiles> percentiles;   // one per output column
  std::vector<DesignMargin> margins;            // one per sized stage among the outputs
};

StudySummary summarize_study(const std::vector<std::string>& output_names,
                             const std::vector<std::string>& margin_columns,
                             const std::vector<RunRow>& rows);

// --json: the study, every row (as in the CSV), the summary and the caution.
std::string sweep_json_text(const StudyHeader& header, const Shard& shard,
                            const std::vector<std::string>& input_names,
                            const std::vector<RunRow>& rows, const StudySummary& summary);

// The unit of an output column as set in its percentiles ("" when none or
// dimensionless).
std::string column_unit(const StudySummary& summary, const std::string& column);

}  // namespace rxtrain::sweep
