// What `rxtrain sweep` prints: the grid's rows (up to a limit), the counts
// per status, the Monte Carlo percentiles and the design margin, and the
// first run with a note, past a limit and failed. In display units (°C,
// bar, kW; see quantity.hpp); the CSV and JSON keep SI.
#pragma once

#include <string>
#include <vector>

#include "rxtrain/report/sweep_report.hpp"
#include "rxtrain/sweep/summary.hpp"

namespace rxtrain::sweep {

// Grids of at most this many rows are printed whole.
inline constexpr std::size_t kMaxPrintedRows = 100;

// The whole text after the title lines, the caution excluded.
std::string sweep_text(const std::vector<std::string>& inputs,
                       const std::vector<std::string>& outputs, const ColumnUnits& units,
                       const std::vector<RunRow>& rows, const StudySummary& summary,
                       bool monte_carlo);

}  // namespace rxtrain::sweep
