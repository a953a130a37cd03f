// The report of a study (--report DIR): report.html, self-contained and
// well-formed XML like the run report, with one SVG figure per output
// column. Grid: the output against the first varied input, one line per
// combination of the other inputs (at most 8 lines; a failed run breaks
// its line). Monte Carlo: a histogram of the output over the runs that
// succeeded (Sturges' rule for the bin count: Sturges, J. Amer. Statist.
// Assoc. 21 (1926) 65-66), with P5, P50 and P95 marked. Values in SI.
#pragma once

#include <string>
#include <vector>

#include "rxtrain/report/figures.hpp"
#include "rxtrain/sweep/summary.hpp"

namespace rxtrain::sweep {

// SI units of the study's columns, for axis labels ("K", "m3", "-").
struct ColumnUnits {
  std::vector<std::string> inputs;   // input order
  std::vector<std::string> outputs;  // output order
};

std::vector<Figure> sweep_figures(const Study& study, const std::vector<std::string>& outputs,
                                  const ColumnUnits& units, const std::vector<RunRow>& rows);

// `as_given`: the study's options as the user wrote them (--vary ...,
// --sample ...), shown above the definition in SI that the CSV header holds.
std::string sweep_report_html(const std::string& title, const std::string& case_file,
                              const std::vector<std::string>& as_given, const StudyHeader& header,
                              const Shard& shard, const StudySummary& summary, bool monte_carlo,
                              const std::vector<Figure>& figures);

}  // namespace rxtrain::sweep
