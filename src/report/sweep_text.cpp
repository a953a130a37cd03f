#include "rxtrain/report/sweep_text.hpp"

#include <fmt/format.h>

#include <algorithm>

#include "rxtrain/report/quantity.hpp"
#include "rxtrain/report/text_format.hpp"

namespace rxtrain::sweep {

namespace {

// The grid's rows: inputs and outputs in display units, a second header
// line with each column's unit.
std::string grid_table(const std::vector<std::string>& inputs,
                       const std::vector<std::string>& outputs, const ColumnUnits& units,
                       const std::vector<RunRow>& rows) {
  std::vector<Quantity> qi, qo;
  for (std::size_t k = 0; k < inputs.size(); ++k)
    qi.push_back(column_quantity(inputs[k], k < units.inputs.size() ? units.inputs[k] : ""));
  for (std::size_t k = 0; k < outputs.size(); ++k)
    qo.push_back(column_quantity(outputs[k], k < units.outputs.size() ? units.outputs[k] : ""));
  std::vector<std::vector<std::string>> table;
  std::vector<std::string> head{"run"}, unit_line{""};
  for (std::size_t k = 0; k < inputs.size(); ++k) {
    head.push_back(inputs[k]);
    unit_line.push_back("[" + qi[k].unit + "]");
  }
  for (std::size_t k = 0; k < outputs.size(); ++k) {
    head.push_back(outputs[k]);
    unit_line.push_back("[" + qo[k].unit + "]");
  }
  head.push_back("status");
  unit_line.push_back("");
  table.push_back(head);
  table.push_back(unit_line);
  for (const auto& r : rows) {
    std::vector<std::string> line{fmt::format("{}", r.run)};
    for (std::size_t k = 0; k < r.inputs.size(); ++k) line.push_back(qi[k].text(r.inputs[k]));
    for (std::size_t k = 0; k < r.result.outputs.size(); ++k) {
      const auto& v = r.result.outputs[k];
      line.push_back(v ? qo[k].text(*v) : "-");
    }
    line.push_back(run_status_name(r.result.status));
    table.push_back(std::move(line));
  }
  return render_columns(table, 0);
}

std::string percentile_table(const StudySummary& s) {
  std::vector<std::vector<std::string>> table{{"output", "unit", "n", "P5", "P50", "P95"}};
  for (const auto& p : s.percentiles) {
    const Quantity q = column_quantity(p.name, p.unit);
    if (!p.p) {
      table.push_back({p.name, q.unit, "0", "-", "-", "-"});
      continue;
    }
    table.push_back({p.name, q.unit, fmt::format("{}", p.p->n), q.text(p.p->p5), q.text(p.p->p50),
                     q.text(p.p->p95)});
  }
  return render_columns(table, 2);
}

std::string margin_lines(const StudySummary& s) {
  std::string out =
      "\nDesign margin (amount that meets the target in 95 % of the runs; an infeasible run "
      "counts as unbounded):\n";
  for (const auto& m : s.margins) {
    const Quantity q = column_quantity(m.column, column_unit(s, m.column));
    const auto with_unit = [&](const std::optional<double>& v) {
      return v ? q.text(*v) + " " + q.unit : std::string("unbounded");
    };
    out += fmt::format("  {}: P50 {}, P95 {} ({} runs with a value, {} infeasible)\n", m.column,
                       with_unit(m.p50), with_unit(m.p95), m.ok, m.infeasible);
  }
  return out;
}

// The first run of each kind worth a look, with its message.
std::string first_runs(const std::vector<RunRow>& rows) {
  std::string text;
  const auto noted = std::count_if(rows.begin(), rows.end(), [](const RunRow& r) {
    return r.result.status == RunStatus::Ok && !r.result.message.empty();
  });
  for (const auto& r : rows)
    if (r.result.status == RunStatus::Ok && !r.result.message.empty()) {
      text += fmt::format(
          "{} ok {} a note (the message column of --csv or --json); the first, run {}: {}\n", noted,
          noted == 1 ? "run carries" : "runs carry", r.run, r.result.message);
      break;
    }
  for (const auto& r : rows)
    if (r.result.status == RunStatus::OverLimit) {
      text += fmt::format("first run past a temperature limit: {}: {}\n", r.run, r.result.message);
      break;
    }
  for (const auto& r : rows)
    if (!has_outputs(r.result.status)) {
      text += fmt::format("first failed run: {} ({}): {}\n", r.run,
                          run_status_name(r.result.status), r.result.message);
      break;
    }
  return text;
}

}  // namespace

std::string sweep_text(const std::vector<std::string>& inputs,
                       const std::vector<std::string>& outputs, const ColumnUnits& units,
                       const std::vector<RunRow>& rows, const StudySummary& summary,
                       bool monte_carlo) {
  std::string text;
  if (!monte_carlo)
    text += rows.size() <= kMaxPrintedRows
                ? grid_table(inputs, outputs, units, rows)
                : fmt::format("({} rows; write them with --csv PATH)\n", rows.size());
  text += fmt::format("{} runs:", summary.runs);
  for (const auto& [status, n] : summary.statuses) text += fmt::format(" {} {},", n, status);
  text.back() = '\n';
  if (monte_carlo) {
    text += "\n" + percentile_table(summary);
    if (!summary.margins.empty()) text += margin_lines(summary);
  }
  return text + first_runs(rows);
}

}  // namespace rxtrain::sweep
