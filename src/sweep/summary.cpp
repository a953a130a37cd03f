#include "rxtrain/sweep/summary.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <nlohmann/json.hpp>

#include "rxtrain/base/caution.hpp"
#include "rxtrain/base/json_number.hpp"

namespace rxtrain::sweep {

namespace {

using nlohmann::json;

}  // namespace

StudySummary summarize_study(const std::vector<std::string>& output_names,
                             const std::vector<std::string>& margin_columns,
                             const std::vector<RunRow>& rows) {
  StudySummary s;
  s.runs = rows.size();
  for (const auto& r : rows) ++s.statuses[run_status_name(r.result.status)];
  for (std::size_t c = 0; c < output_names.size(); ++c) {
    std::vector<double> v;
    for (const auto& r : rows)
      if (has_outputs(r.result.status) && r.result.outputs[c]) v.push_back(*r.result.outputs[c]);
    s.percentiles.push_back({output_names[c], summarize(std::move(v)), ""});
  }
  for (const auto& m : margin_columns) {
    const auto it = std::find(output_names.begin(), output_names.end(), m);
    if (it == output_names.end()) continue;
    const auto c = static_cast<std::size_t>(it - output_names.begin());
    DesignMargin d;
    d.column = m;
    std::vector<double> v;
    for (const auto& r : rows) {
      if (has_outputs(r.result.status) && r.result.outputs[c]) {
        v.push_back(*r.result.outputs[c]);
        ++d.ok;
      } else if (r.result.status == RunStatus::Infeasible) {
        v.push_back(std::numeric_limits<double>::infinity());
        ++d.infeasible;
      }
    }
    if (!v.empty()) {
      std::sort(v.begin(), v.end());
      const double p50 = percentile_sorted(v, 0.50), p95 = percentile_sorted(v, 0.95);
      if (std::isfinite(p50)) d.p50 = p50;
      if (std::isfinite(p95)) d.p95 = p95;
    }
    s.margins.push_back(d);
  }
  return s;
}

std::string sweep_json_text(const StudyHeader& header, const Shard& shard,
                            const std::vector<std::string>& input_names,
                            const std::vector<RunRow>& rows, const StudySummary& summary) {
  json study = {{"version", header.version},       {"case_sha256", header.case_sha256},
                {"definition", header.definition}, {"inputs", input_names},
                {"outputs", header.outputs},       {"shard", shard.to_string()}};
  json units = json::object();
  for (const auto& [name, unit] : header.units) units[name] = unit;
  study["units"] = units;
  json runs = json::array();
  for (const auto& r : rows) {
    json in = json::object(), out = json::object();
    for (std::size_t i = 0; i < input_names.size(); ++i)
      in[input_names[i]] = json_number(r.inputs[i]);
    for (std::size_t i = 0; i < header.outputs.size(); ++i)
      out[header.outputs[i]] = json_number(r.result.outputs[i]);
    runs.push_back({{"run", r.run},
                    {"inputs", in},
                    {"outputs", out},
                    {"status", run_status_name(r.result.status)},
                    {"message", r.result.message}});
  }
  json pct = json::object();
  for (const auto& p : summary.percentiles)
    pct[p.name] = p.p ? json{{"n", p.p->n}, {"P5", p.p->p5}, {"P50", p.p->p50}, {"P95", p.p->p95}}
                      : json(nullptr);
  json margins = json::array();
  for (const auto& m : summary.margins)
    margins.push_back({{"column", m.column},
                       {"runs_with_value", m.ok},
                       {"runs_infeasible", m.infeasible},
                       {"P50", json_number(m.p50)},
                       {"P95", json_number(m.p95)},
                       {"unbounded", !m.p95.has_value()}});
  json j = {{"study", study},
            {"summary", {{"runs", summary.runs}, {"statuses", summary.statuses}}},
            {"percentiles", pct},
            {"percentile_definition",
             "Hyndman & Fan (1996) definition 7, over the runs with status ok or over_limit"},
            {"design_margin", margins},
            {"runs", runs},
            {"caution", kCaution}};
  return j.dump(2) + "\n";
}

std::string column_unit(const StudySummary& summary, const std::string& column) {
  for (const auto& p : summary.percentiles)
    if (p.name == column && p.unit != "-") return p.unit;
  return "";
}

}  // namespace rxtrain::sweep
