#include "rxtrain/report/fit_report.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <nlohmann/json.hpp>

#include "rxtrain/base/caution.hpp"
#include "rxtrain/base/json_number.hpp"
#include "rxtrain/report/text_format.hpp"

namespace rxtrain {

namespace {

std::string g6(double v) { return std::isfinite(v) ? fmt::format("{:.6g}", v) : "inf"; }

const char* scale_name(fit::Scale s) { return s == fit::Scale::Log ? "log" : "linear"; }

}  // namespace

std::string fit_text(const std::string& title, const fit::FitResult& r) {
  std::string t = fmt::format(
      "{}\n\nFit of {} parameter(s) to {} run(s), {} residual degrees of "
      "freedom ({} weighting; {} start(s), {} iterations)\n\n",
      title, r.parameters.size(), r.runs.size(), r.dof,
      r.weighted ? "1/sigma" : "one estimated variance per output", r.starts, r.iterations);
  std::vector<std::vector<std::string>> rows{
      {"parameter", "estimate", "std. error", "95 % interval", "unit", "scale"}};
  for (const auto& p : r.parameters) {
    std::string name = p.path;
    if (p.T_ref) name += fmt::format(" (k at {:.2f} K)", *p.T_ref);
    rows.push_back({name, g6(p.estimate),
                    p.scale == fit::Scale::Log ? g6(p.std_error) + " (of ln)" : g6(p.std_error),
                    fmt::format("{} .. {}", g6(p.ci_lo), g6(p.ci_hi)), p.unit,
                    scale_name(p.scale)});
  }
  t += render_columns(rows, 1) + "\n";
  if (r.parameters.size() > 1) {
    t += "Correlation of the estimates:\n";
    std::vector<std::vector<std::string>> c{{""}};
    for (std::size_t i = 0; i < r.parameters.size(); ++i)
      c[0].push_back(fmt::format("[{}]", i + 1));
    for (std::size_t i = 0; i < r.parameters.size(); ++i) {
      std::vector<std::string> row{fmt::format("[{}] {}", i + 1, r.parameters[i].path)};
      for (std::size_t j = 0; j < r.parameters.size(); ++j)
        row.push_back(fmt::format(
            "{:+.3f}", r.correlation(static_cast<Eigen::Index>(i), static_cast<Eigen::Index>(j))));
      c.push_back(std::move(row));
    }
    t += render_columns(c, 1) + "\n";
  }
  t += "Residual standard deviation per output:\n";
  for (std::size_t k = 0; k < r.output_names.size(); ++k)
    t += fmt::format("  {}: {} {}\n", r.output_names[k], g6(r.residual_sd[k]),
                     r.weighted ? "(sqrt(chi2/dof) of the weighted residuals; near 1 when the "
                                  "sigmas are right)"
                                : r.output_units[k]);
  if (r.lack_of_fit)
    t += fmt::format(
        "Lack of fit from {} set(s) of replicated runs: F = {:.3g} on ({}, {}) "
        "degrees of freedom, p = {:.3g}\n",
        r.lack_of_fit->groups, r.lack_of_fit->F, r.lack_of_fit->dof_lack, r.lack_of_fit->dof_pure,
        r.lack_of_fit->p_value);
  else
    t += "Lack of fit: no replicated runs, not tested\n";
  if (!r.notes.empty()) {
    t += "\nNotes:\n";
    for (const auto& n : r.notes) t += "  - " + n + "\n";
  }
  t += fmt::format("\n{}\n", kCaution);
  return t;
}

std::string fit_json_text(const fit::FitResult& r) {
  using nlohmann::json;
  json j;
  j["parameters"] = json::array();
  for (const auto& p : r.parameters)
    j["parameters"].push_back({{"path", p.path},
                               {"scale", scale_name(p.scale)},
                               {"estimate", json_number(p.estimate)},
                               {"std_error", json_number(p.std_error)},
                               {"ci95", {json_number(p.ci_lo), json_number(p.ci_hi)}},
                               {"unit", p.unit},
                               {"T_ref", json_number(p.T_ref)},
                               {"at_bound", p.at_bound}});
  const auto matrix = [](const Eigen::MatrixXd& m) {
    json a = json::array();
    for (Eigen::Index i = 0; i < m.rows(); ++i) {
      json row = json::array();
      for (Eigen::Index k = 0; k < m.cols(); ++k) row.push_back(json_number(m(i, k)));
      a.push_back(row);
    }
    return a;
  };
  j["correlation"] = matrix(r.correlation);
  j["covariance"] = matrix(r.covariance);
  j["residual_sd"] = json::object();
  for (std::size_t k = 0; k < r.output_names.size(); ++k)
    j["residual_sd"][r.output_names[k]] = json_number(r.residual_sd[k]);
  j["dof"] = r.dof;
  j["t95"] = json_number(r.t95);
  j["weighted"] = r.weighted;
  j["rank"] = r.rank;
  j["runs"] = json::array();
  for (const auto& run : r.runs) {
    json in = json::object(), meas = json::object(), fitted = json::object(), res = json::object(),
         wres = json::object();
    for (std::size_t i = 0; i < r.input_names.size(); ++i)
      in[r.input_names[i]] = json_number(run.inputs[i]);
    for (std::size_t k = 0; k < r.output_names.size(); ++k) {
      meas[r.output_names[k]] = json_number(run.measured[k]);
      fitted[r.output_names[k]] = json_number(run.fitted[k]);
      res[r.output_names[k]] = json_number(run.residual[k]);
      wres[r.output_names[k]] = json_number(run.weighted[k]);
    }
    json jr{{"row", run.row},           {"line", run.line}, {"inputs", in},
            {"measured", meas},         {"fitted", fitted}, {"residual", res},
            {"weighted_residual", wres}};
    jr["failure"] = run.failure.empty() ? json(nullptr) : json(run.failure);
    j["runs"].push_back(jr);
  }
  if (r.lack_of_fit)
    j["lack_of_fit"] = {{"F", json_number(r.lack_of_fit->F)},
                        {"p_value", json_number(r.lack_of_fit->p_value)},
                        {"dof_lack", r.lack_of_fit->dof_lack},
                        {"dof_pure", r.lack_of_fit->dof_pure},
                        {"groups", r.lack_of_fit->groups}};
  else
    j["lack_of_fit"] = nullptr;
  j["converged"] = r.converged;
  j["notes"] = r.notes;
  j["caution"] = kCaution;
  return j.dump(2) + "\n";
}

}  // namespace rxtrain

namespace rxtrain {

namespace {

// Markers only: a line of zero width through the points.
svg::LineOptions points(const std::string& label, const std::string& colour) {
  svg::LineOptions lo;
  lo.label = label;
  lo.colour = colour;
  lo.connect = false;
  lo.dash = "";
  lo.marker = svg::Marker::Circle;
  lo.marker_size = 3.5;
  return lo;
}

std::string unit_suffix(const std::string& u) { return u == "-" || u == "1" ? "" : " (" + u + ")"; }

}  // namespace

std::vector<Figure> fit_figures(const fit::FitResult& r) {
  std::vector<Figure> out;
  for (std::size_t k = 0; k < r.output_names.size(); ++k) {
    std::vector<double> x, y;
    double lo = std::numeric_limits<double>::infinity(), hi = -lo;
    for (const auto& run : r.runs)
      if (run.fitted[k]) {
        x.push_back(run.measured[k]);
        y.push_back(*run.fitted[k]);
        lo = std::min({lo, run.measured[k], *run.fitted[k]});
        hi = std::max({hi, run.measured[k], *run.fitted[k]});
      }
    if (x.empty()) continue;
    svg::ChartOptions o;
    o.title = "Parity: " + r.output_names[k];
    o.x_label = "measured " + r.output_names[k] + unit_suffix(r.output_units[k]);
    o.y_label = "fitted " + r.output_names[k] + unit_suffix(r.output_units[k]);
    o.x_domain = svg::nice_domain(lo, hi);
    o.y_domain = o.x_domain;
    o.width = 480;
    o.height = 440;
    svg::Chart chart(o);
    const std::vector<double> diag{o.x_domain->lo, o.x_domain->hi};
    svg::LineOptions d;
    d.label = "1:1";
    d.colour = "#555555";
    d.dash = "5 4";
    d.width = 1.25;
    chart.add_line(diag, diag, d);
    chart.add_line(x, y, points("runs", "#0072B2"));
    out.push_back({"parity-" + std::to_string(k + 1),
                   fmt::format("Fitted against measured {} for every run that could be computed "
                               "at the estimate; a good fit scatters evenly about the 1:1 line.",
                               r.output_names[k]),
                   std::move(chart)});
  }
  for (std::size_t i = 0; i < r.input_names.size(); ++i) {
    svg::ChartOptions o;
    o.title = "Standardized residuals against " + r.input_names[i];
    o.x_label = r.input_names[i] + " (SI)";
    o.y_label = r.weighted ? "residual / sigma" : "residual / residual SD";
    svg::Chart chart(o);
    for (std::size_t k = 0; k < r.output_names.size(); ++k) {
      std::vector<double> x, y;
      for (const auto& run : r.runs)
        if (run.fitted[k]) {
          x.push_back(run.inputs[i]);
          y.push_back(run.standardized[k]);
        }
      chart.add_line(x, y, points(r.output_names[k], std::string(svg::series_colour(k))));
    }
    svg::RefLineOptions zero;
    zero.dash = "";
    chart.add_hline(0.0, zero);
    for (double z : {-3.0, 3.0}) {
      svg::RefLineOptions band;
      band.label = z > 0 ? "3" : "-3";
      chart.add_hline(z, band);
    }
    out.push_back({"residuals-" + std::to_string(i + 1),
                   fmt::format("Residuals of every output against {}, in units of their SD: a "
                               "trend means the rate law misses how {} acts; beyond ±3 a run "
                               "stands out.",
                               r.input_names[i], r.input_names[i]),
                   std::move(chart)});
  }
  return out;
}

std::string fit_report_html(const Case& lab, const fit::FitResult& r,
                            const std::vector<Figure>& figures,
                            const ReportProvenance& provenance) {
  using html::cell;
  using svg::xml_escape;
  std::string h = html::page_begin(lab.title + " — fit to lab runs", provenance);
  h += fmt::format(
      "<h2 id=\"summary\">Estimates</h2>\n<p>{} parameter(s) fitted to {} run(s), "
      "{} residual degrees of freedom; 95 % intervals from Student's t ({}).</p>\n",
      r.parameters.size(), r.runs.size(), r.dof, xml_escape(g6(r.t95)));
  h += "<table>\n" +
       html::header_row({"parameter", "estimate", "std. error", "95 % interval", "unit", "scale"});
  for (const auto& p : r.parameters) {
    std::string name = p.path;
    if (p.T_ref) name += fmt::format(" (k at {:.2f} K)", *p.T_ref);
    h += "<tr>" + cell(name, false) + cell(g6(p.estimate), true) +
         cell(p.scale == fit::Scale::Log ? g6(p.std_error) + " (of ln)" : g6(p.std_error), true) +
         cell(g6(p.ci_lo) + " .. " + g6(p.ci_hi), true) + cell(p.unit, false) +
         cell(scale_name(p.scale), false) + "</tr>\n";
  }
  h += "</table>\n";
  if (r.parameters.size() > 1) {
    h += "<h2>Correlation of the estimates</h2>\n<table>\n";
    std::vector<std::string> heads{""};
    for (const auto& p : r.parameters) heads.push_back(p.path);
    h += html::header_row(heads);
    for (std::size_t i = 0; i < r.parameters.size(); ++i) {
      h += "<tr>" + cell(r.parameters[i].path, false);
      for (std::size_t j = 0; j < r.parameters.size(); ++j)
        h += cell(fmt::format("{:+.3f}", r.correlation(static_cast<Eigen::Index>(i),
                                                       static_cast<Eigen::Index>(j))),
                  true);
      h += "</tr>\n";
    }
    h += "</table>\n";
  }
  h += "<h2>Residual standard deviation</h2>\n<table>\n" +
       html::header_row({"output", "SD", "unit"});
  for (std::size_t k = 0; k < r.output_names.size(); ++k)
    h += "<tr>" + cell(r.output_names[k], false) + cell(g6(r.residual_sd[k]), true) +
         cell(r.weighted ? "sigma" : r.output_units[k], false) + "</tr>\n";
  h += "</table>\n";
  h += html::figures_section(figures);
  h += html::warnings_section(r.notes);
  h += html::inputs_section(lab);
  h += html::page_end();
  return h;
}

}  // namespace rxtrain
