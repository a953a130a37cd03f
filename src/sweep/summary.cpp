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

std::string cell(const std::optional<double>& v) {
  return v ? fmt::format("{:.6g}", *v) : std::string("unbounded");
}

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

std::string summary_text(const StudySummary& s, bool monte_carlo) {
  std::string out = fmt::format("{} runs:", s.runs);
  for (const auto& [status, n] : s.statuses) out += fmt::format(" {} {},", n, status);
  out.back() = '\n';
  if (!monte_carlo) return out;
  std::size_t w = 6, wu = 4;
  for (const auto& p : s.percentiles) {
    w = std::max(w, p.name.size());
    wu = std::max(wu, p.unit.size());
  }
  out += fmt::format("\n{:<{}}  {:<{}}  {:>6}  {:>14}  {:>14}  {:>14}\n", "output", w, "unit", wu,
                     "n", "P5", "P50", "P95");
  for (const auto& p : s.percentiles) {
    if (!p.p) {
      out += fmt::format("{:<{}}  {:<{}}  {:>6}  {:>14}  {:>14}  {:>14}\n", p.name, w, p.unit, wu,
                         0, "-", "-", "-");
      continue;
    }
    out += fmt::format("{:<{}}  {:<{}}  {:>6}  {:>14.6g}  {:>14.6g}  {:>14.6g}\n", p.name, w,
                       p.unit, wu, p.p->n, p.p->p5, p.p->p50, p.p->p95);
  }
  if (!s.margins.empty()) {
    out +=
        "\nDesign margin (amount that meets the target in 95 % of the runs; an infeasible run "
        "counts as unbounded):\n";
    for (const auto& m : s.margins) {
      const std::string u = column_unit(s, m.column);
      const std::string unit = u.empty() ? u : " " + u;
      const auto with_unit = [&](const std::optional<double>& v) {
        return v ? cell(v) + unit : cell(v);
      };
      out += fmt::format("  {}: P50 {}, P95 {} ({} runs with a value, {} infeasible)\n", m.column,
                         with_unit(m.p50), with_unit(m.p95), m.ok, m.infeasible);
    }
  }
  return out;
}

}  // namespace rxtrain::sweep
