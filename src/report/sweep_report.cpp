#include "rxtrain/report/sweep_report.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cctype>
#include <cmath>
#include <limits>

#include "rxtrain/base/units.hpp"
#include "rxtrain/report/html_page.hpp"
#include "rxtrain/report/quantity.hpp"
#include "rxtrain/report/svg.hpp"

namespace rxtrain::sweep {

namespace {

using svg::xml_escape;

constexpr std::size_t kMaxLines = 8;
constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
// Relative spread below which an output counts as constant over a study.
constexpr double kConstant = 1e-9;

std::string lower_first(std::string s) {
  if (!s.empty() && s.size() > 1 && std::isupper(static_cast<unsigned char>(s[0])) &&
      !std::isupper(static_cast<unsigned char>(s[1])))
    s[0] = static_cast<char>(std::tolower(static_cast<unsigned char>(s[0])));
  return s;
}

// A file stem from a column name ("R1.T_max" -> "R1-T_max").
std::string stem(const std::string& name) {
  std::string s = name;
  for (char& c : s)
    if (!std::isalnum(static_cast<unsigned char>(c)) && c != '_' && c != '-') c = '-';
  return s;
}

Figure grid_figure(const Study& study, const ColumnUnits& units, const std::string& output,
                   std::size_t col, const std::vector<RunRow>& rows) {
  const Axis& x_axis = study.axes.front();
  std::size_t others = 1;
  for (std::size_t k = 1; k < study.axes.size(); ++k) others *= study.axes[k].n;
  const Quantity qx =
      column_quantity(x_axis.name, units.inputs.empty() ? "" : units.inputs.front());
  const Quantity qy = column_quantity(output, col < units.outputs.size() ? units.outputs[col] : "");
  svg::ChartOptions o;
  o.title = qy.words + " against " + lower_first(qx.words);
  o.x_label = qx.label();
  o.y_label = qy.label();
  svg::Chart chart(o);
  const std::size_t lines = std::min(others, kMaxLines);
  for (std::size_t s = 0; s < lines; ++s) {
    std::vector<double> x, y;
    std::string label;
    for (const auto& r : rows) {
      if (r.run % others != s) continue;
      x.push_back(qx.show(r.inputs[0]));
      y.push_back(r.result.outputs[col] ? qy.show(*r.result.outputs[col]) : kNaN);
      if (label.empty() && study.axes.size() > 1)
        for (std::size_t k = 1; k < study.axes.size(); ++k) {
          const Quantity qk = column_quantity(
              study.axes[k].name, k < units.inputs.size() ? units.inputs[k] : std::string());
          label += fmt::format("{}{} = {:.4g} {}", label.empty() ? "" : ", ", study.axes[k].name,
                               qk.show(r.inputs[k]), qk.unit);
        }
    }
    if (x.empty()) continue;  // this shard holds none of the line
    svg::LineOptions lo;
    lo.label = label;
    lo.marker = svg::Marker::Circle;
    chart.add_line(x, y, lo);
  }
  std::string caption =
      fmt::format("{} ({}) at each grid point; a gap is a failed run.", qy.words, output);
  if (others > kMaxLines)
    caption += fmt::format(" The first {} of {} combinations of the other inputs are drawn.",
                           kMaxLines, others);
  return {"sweep-" + stem(output), caption, std::move(chart)};
}

// The histogram of one output, or nothing when the output did not vary by
// more than rounding noise (a sized stage's outlet X is the target in every
// run): bins of such a spread would only draw the noise.
std::optional<Figure> histogram(const std::string& output, const std::string& unit, std::size_t col,
                                const std::vector<RunRow>& rows,
                                const std::optional<PercentileSummary>& p) {
  std::vector<double> v;
  for (const auto& r : rows)
    if (has_outputs(r.result.status) && r.result.outputs[col]) v.push_back(*r.result.outputs[col]);
  if (!v.empty()) {
    const auto [lo_it, hi_it] = std::minmax_element(v.begin(), v.end());
    if (*hi_it - *lo_it <= kConstant * std::max(std::abs(*lo_it), std::abs(*hi_it)))
      return std::nullopt;
  }
  const Quantity q = column_quantity(output, unit);
  for (double& x : v) x = q.show(x);
  svg::ChartOptions o;
  o.title = "Distribution of " + lower_first(q.words);
  o.x_label = q.label();
  o.y_label = "runs";
  o.legend = svg::LegendPosition::None;
  svg::Chart chart(o);
  std::string caption =
      fmt::format("{} ({}) over the {} runs that finished", q.words, output, v.size());
  if (!v.empty()) {
    const auto [lo_it, hi_it] = std::minmax_element(v.begin(), v.end());
    const double lo = *lo_it, hi = *hi_it;
    // Sturges: 1 + log2 n bins.
    const auto bins = static_cast<std::size_t>(
        std::max(1.0, std::ceil(1.0 + std::log2(static_cast<double>(v.size())))));
    const double width = hi > lo ? (hi - lo) / static_cast<double>(bins) : 1.0;
    std::vector<double> counts(hi > lo ? bins : 1, 0.0);
    for (double x : v) {
      auto b = hi > lo ? static_cast<std::size_t>((x - lo) / width) : 0;
      counts[std::min(b, counts.size() - 1)] += 1;
    }
    std::vector<std::string> categories;
    for (std::size_t b = 0; b < counts.size(); ++b)
      categories.push_back(fmt::format("{:.4g}", lo + (static_cast<double>(b) + 0.5) * width));
    chart.add_bars(categories, counts, {});
    if (p && hi > lo) {
      // Category i sits at x = i and spans [lo + i w, lo + (i + 1) w].
      const auto at = [&](double value) { return (q.show(value) - lo) / width - 0.5; };
      chart.add_vline(at(p->p5), {.label = "P5"});
      chart.add_vline(at(p->p50), {.label = "P50"});
      chart.add_vline(at(p->p95), {.label = "P95"});
    }
    if (p)
      caption += fmt::format("; P5 {}, P50 {}, P95 {}{} (bin centres on the axis).", q.text(p->p5),
                             q.text(p->p50), q.text(p->p95), q.unit == "–" ? "" : " " + q.unit);
  } else {
    caption += ".";
  }
  return Figure{"histogram-" + stem(output), caption, std::move(chart)};
}

}  // namespace

std::vector<Figure> sweep_figures(const Study& study, const std::vector<std::string>& outputs,
                                  const ColumnUnits& units, const std::vector<RunRow>& rows) {
  std::vector<Figure> figures;
  if (study.monte_carlo()) {
    const auto s = summarize_study(outputs, {}, rows);
    for (std::size_t c = 0; c < outputs.size(); ++c)
      if (auto f = histogram(outputs[c], c < units.outputs.size() ? units.outputs[c] : "", c, rows,
                             s.percentiles[c].p))
        figures.push_back(std::move(*f));
  } else {
    for (std::size_t c = 0; c < outputs.size(); ++c)
      figures.push_back(grid_figure(study, units, outputs[c], c, rows));
  }
  return figures;
}

std::string sweep_report_html(const std::string& title, const std::string& case_file,
                              const std::vector<std::string>& as_given, const StudyHeader& header,
                              const Shard& shard, const StudySummary& summary, bool monte_carlo,
                              const std::vector<Figure>& figures) {
  const ReportProvenance provenance{case_file, header.case_sha256, utc_date_today(),
                                    header.version};
  std::string h = html::page_begin("Study: " + title, provenance);
  h += "<h2 id=\"study\">Study</h2>\n";
  if (!as_given.empty()) {
    h += "<p>As given:</p>\n<ul>\n";
    for (const auto& a : as_given) h += "<li><code>" + xml_escape(a) + "</code></li>\n";
    h += "</ul>\n<p>The same study in SI, as the CSV header records it:</p>\n";
  }
  h += "<table class=\"origin\">\n";
  for (const auto& d : header.definition)
    h += fmt::format("<tr><td><code>{}</code></td></tr>\n", xml_escape(d));
  h += fmt::format("<tr><td>shard {}</td></tr>\n</table>\n", shard.to_string());
  h += "<p>This page shows °C, bar and kW; the CSV and JSON hold SI values. "
       "The results do not depend on <code>--jobs</code> or <code>--shard</code>; how the runs "
       "are solved, and how far a value may differ from a lone <code>rxtrain run</code> of the "
       "same point, is in docs/sweeps.md.</p>\n";
  std::string counts;
  for (const auto& [status, n] : summary.statuses)
    counts += fmt::format("{}{} {}", counts.empty() ? "" : ", ", n, status);
  h += fmt::format("<h2 id=\"runs\">Runs</h2>\n<p>{} runs: {}.</p>\n", summary.runs,
                   xml_escape(counts));
  if (monte_carlo) {
    h += "<h2 id=\"percentiles\">Percentiles</h2>\n<table>\n<tr><th>output</th><th>what it is</th>"
         "<th>unit</th><th>n</th><th>P5</th><th>P50</th><th>P95</th></tr>\n";
    for (const auto& p : summary.percentiles) {
      const Quantity q = column_quantity(p.name, p.unit);
      if (!p.p) {
        h += fmt::format(
            "<tr><td>{}</td><td>{}</td><td>{}</td><td class=\"num\">0</td><td>-</td><td>-</td>"
            "<td>-</td></tr>\n",
            xml_escape(p.name), xml_escape(q.words), xml_escape(q.unit));
        continue;
      }
      h += fmt::format(
          "<tr><td>{}</td><td>{}</td><td>{}</td><td class=\"num\">{}</td><td "
          "class=\"num\">{}</td><td class=\"num\">{}</td><td class=\"num\">{}</td></tr>\n",
          xml_escape(p.name), xml_escape(q.words), xml_escape(q.unit), p.p->n, q.text(p.p->p5),
          q.text(p.p->p50), q.text(p.p->p95));
    }
    h += "</table>\n<p>P5, P50, P95: the 5th, 50th and 95th percentiles over the runs that "
         "finished (status ok or over_limit); their definition is in docs/sweeps.md.</p>\n";
    if (!summary.margins.empty()) {
      h += "<h2 id=\"margin\">Design margin</h2>\n<p>The amount each sized stage needs to meet its "
           "target in "
           "95 % of the runs (a run whose target is out of reach counts as unbounded).</p>\n<ul>\n";
      for (const auto& m : summary.margins) {
        const Quantity q = column_quantity(m.column, column_unit(summary, m.column));
        const auto v = [&](const std::optional<double>& x) {
          return x ? q.text(*x) + " " + q.unit : std::string("unbounded");
        };
        h += fmt::format("<li>{}: P50 {}, P95 {} ({} runs with a value, {} infeasible)</li>\n",
                         xml_escape(m.column), v(m.p50), v(m.p95), m.ok, m.infeasible);
      }
      h += "</ul>\n";
    }
  }
  h += html::figures_section(figures);
  if (monte_carlo && figures.size() < summary.percentiles.size())
    h += "<p>Outputs without a histogram did not vary by more than one part in 10⁹ over the "
         "runs; the percentiles table gives their value.</p>\n";
  h += html::page_end();
  return h;
}

}  // namespace rxtrain::sweep
