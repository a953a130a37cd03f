// rxtrain optimize CASE [--beds N | --max-beds N] [--fixed-feed-T] [--margin 15K]
//                       [--limit-margin DT] [--json PATH] [--write-case PATH] [--report DIR]
#include <fmt/format.h>
#include <unistd.h>

#include <chrono>
#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <memory>
#include <nlohmann/json.hpp>
#include <string>

#include "commands.hpp"
#include "limit_margin.hpp"
#include "rxtrain/base/caution.hpp"
#include "rxtrain/base/json_number.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/report/atomic_file.hpp"
#include "rxtrain/report/json.hpp"
#include "rxtrain/report/optimize_html.hpp"
#include "rxtrain/report/optimize_text.hpp"
#include "rxtrain/report/text_format.hpp"
#include "rxtrain/studies/optimize.hpp"
#include "rxtrain/studies/write_case.hpp"

namespace rxtrain::cli {

namespace {

using nlohmann::json;

struct OptimizeCommandOptions {
  std::string case_file;
  std::string json_path;
  std::string case_path;
  std::string report_dir;
  int beds = 0;      // 0: not given
  int max_beds = 0;  // 0: not given
  bool fixed_feed_T = false;
  std::string limit_margin;
  std::string margin;  // a temperature difference, e.g. "15K"; empty: none
};

// Never a NaN or inf in the output: null instead.

// The objective's total of a layout: kg of catalyst, or m3.
double objective_total(const DesignResult& d, const DesignLayout& l) {
  return d.catalyst_objective ? l.total_catalyst.value_or(0.0) : l.total_volume;
}
std::optional<double> objective_total(const DesignResult& d, const std::optional<double>& catalyst,
                                      double volume) {
  if (d.catalyst_objective) return catalyst;
  return volume;
}

// Saving of the optimum against another total (same basis), or empty.
std::optional<double> saving(const DesignResult& d, const std::optional<double>& other) {
  if (!other) return std::nullopt;
  return *other - objective_total(d, d.best);
}

json exchanger_json(const DesignExchanger& x) {
  return {{"id", x.id},
          {"T_in", json_number(x.T_in)},
          {"T_out", json_number(x.T_out)},
          {"duty", json_number(x.duty)}};
}

std::string optimize_json_text(const DesignResult& d) {
  json j;
  j["title"] = d.title;
  j["key"] = d.key;
  j["target"] = json_number(d.target);
  j["limits"] = {{"T_max", json_number(d.limits.T_max)},
                 {"T_in_min", json_number(d.limits.T_in_min)}};
  j["reaction"] = d.exothermic ? "exothermic" : "endothermic";
  j["objective"] = d.catalyst_objective ? "catalyst" : "volume";
  j["fixed_feed_T"] = d.fixed_feed_T;
  j["margin"] = json_number(d.margin);
  j["window"] = {{"T_low", json_number(d.window_low)}, {"T_high", json_number(d.window_high)}};
  const DesignLayout& l = d.best;
  json beds = json::array();
  for (const auto& b : l.bed)
    beds.push_back({{"id", b.id},
                    {"T_in", json_number(b.T_in)},
                    {"T_out", json_number(b.T_out)},
                    {"X_in", json_number(b.X_in)},
                    {"X_out", json_number(b.X_out)},
                    {"X_ad_eq", json_number(b.X_ad_eq)},
                    {"volume", json_number(b.volume)},
                    {"catalyst_mass", json_number(b.catalyst_mass)},
                    {"rate_in", json_number(b.rate_in)},
                    {"rate_out", json_number(b.rate_out)}});
  j["beds"] = beds;
  json coolers = json::array();
  for (const auto& x : l.coolers) coolers.push_back(exchanger_json(x));
  j["coolers"] = coolers;
  j["feed_conditioning"] = exchanger_json(l.feed_conditioning);
  j["total_volume"] = json_number(l.total_volume);
  j["total_catalyst"] = json_number(l.total_catalyst);
  j["total_duty"] = json_number(l.total_duty);
  json active = json::array();
  for (const auto& a : l.active_constraints) active.push_back(active_limit_text(d, l, a));
  j["active_constraints"] = active;
  auto exempt = [&](const std::vector<ActiveLimit>& v) {
    json e = json::array();
    for (const auto& a : v) e.push_back(active_limit_text(d, l, a));
    return e;
  };
  json interstage = json::array();
  for (const auto& c : l.interstage)
    interstage.push_back({{"exchanger", l.coolers[c.after].id},
                          {"after", l.bed[c.after].id},
                          {"X", json_number(c.X)},
                          {"rate_before", json_number(c.rate_before)},
                          {"rate_after", json_number(c.rate_after)},
                          {"residual", json_number(c.residual)},
                          {"state", condition_state_name(c.state)},
                          {"exempt_by", exempt(c.exempt_by)}});
  json inlets = json::array();
  for (const auto& c : l.inlets)
    inlets.push_back({{"bed", l.bed[c.bed].id},
                      {"dsize_dT", json_number(c.dsize_dT)},
                      {"shift", json_number(c.shift)},
                      {"state", condition_state_name(c.state)},
                      {"exempt_by", exempt(c.exempt_by)}});
  j["conditions"] = {{"interstage", interstage}, {"inlets", inlets}};
  j["checked_conversion"] = json_number(l.checked_conversion);
  j["optimizer"] = {
      {"evaluations", l.evaluations}, {"starts", l.starts}, {"polish_rounds", l.polish_rounds}};
  if (d.as_written) {
    const auto& a = *d.as_written;
    const bool comparable = a.ran && a.reaches_target && a.within_limits;
    const auto other = objective_total(d, a.total_catalyst, a.total_volume);
    j["as_written"] = {{"ran", a.ran},
                       {"conversion", a.ran ? json_number(a.conversion) : json(nullptr)},
                       {"reaches_target", a.reaches_target},
                       {"within_limits", a.within_limits},
                       {"reactors", a.reactors},
                       {"total_volume", a.ran ? json_number(a.total_volume) : json(nullptr)},
                       {"total_catalyst", json_number(a.total_catalyst)},
                       {"total_duty", a.ran ? json_number(a.total_duty) : json(nullptr)},
                       {"saving", comparable ? json_number(saving(d, other)) : json(nullptr)},
                       {"note", a.note.empty() ? json(nullptr) : json(a.note)}};
  } else {
    j["as_written"] = nullptr;
  }
  if (d.staging) {
    const auto& s = *d.staging;
    j["staging"] = {
        {"reached", s.reached},
        {"beds", s.beds},
        {"total_volume", json_number(s.total_volume)},
        {"total_catalyst", json_number(s.total_catalyst)},
        {"saving",
         s.reached ? json_number(saving(d, objective_total(d, s.total_catalyst, s.total_volume)))
                   : json(nullptr)},
        {"note", s.note}};
  } else {
    j["staging"] = nullptr;
  }
  json counts = json::array();
  const std::vector<DesignLayout> one{d.best};
  for (const auto& c : d.by_bed_count.empty() ? one : d.by_bed_count)
    counts.push_back(
        {{"beds", c.beds},
         {"feasible", c.feasible},
         {"total_catalyst", c.feasible ? json_number(c.total_catalyst) : json(nullptr)},
         {"total_volume", c.feasible ? json_number(c.total_volume) : json(nullptr)},
         {"total_duty", c.feasible ? json_number(c.total_duty) : json(nullptr)},
         {"why", c.feasible ? json(nullptr) : json(c.why)}});
  j["by_bed_count"] = counts;
  j["limit_check"] = limit_check_json(d.limit_check);
  j["warnings"] = d.warnings;
  j["caution"] = kCaution;
  return j.dump(2) + "\n";
}

std::string amount_text(const DesignResult& d, double v) {
  return d.catalyst_objective ? fmt::format("{} kg", fixed_text(v, 1))
                              : fmt::format("{} m3", fixed_text(v, 4));
}

std::string gain_line(const DesignResult& d, const std::string& what, double other) {
  const double saved = other - objective_total(d, d.best);
  return fmt::format("  against {} ({}): the optimum saves {} ({} %)\n", what,
                     amount_text(d, other), amount_text(d, saved),
                     fixed_text(100 * saved / other, 1));
}

std::string optimize_table(const DesignResult& d, const DesignOptions& o) {
  std::string out = d.title + "\n";
  out += fmt::format(
      "optimize: least total {} for an overall conversion of {} X = {} with every bed "
      "temperature {}; feed at {} °C{}\n",
      d.catalyst_objective ? "catalyst" : "bed volume (per-volume rate)", d.key,
      fixed_text(d.target, 4), window_text(d), celsius_text(d.feed_T),
      d.fixed_feed_T ? " (bed 1 kept at the feed temperature)" : "");
  out += fmt::format(
      "key reaction: {}; method: SLSQP (finite-difference gradients) from {} "
      "starts, polished until the inlet temperatures settle\n\n",
      d.exothermic ? "exothermic" : "endothermic", d.best.starts);

  const DesignLayout& l = d.best;
  out += fmt::format("Optimum: {} adiabatic beds, total {}{}\n", l.beds,
                     d.catalyst_objective
                         ? fmt::format("{} of catalyst ({} m3)", amount_text(d, *l.total_catalyst),
                                       fixed_text(l.total_volume, 3))
                         : amount_text(d, l.total_volume),
                     "");
  std::vector<std::vector<std::string>> rows;
  rows.push_back({"bed", "T in °C", "T out °C", "X in", "X out", "X_ad_eq", "V m3", "cat kg"});
  for (const auto& b : l.bed)
    rows.push_back({b.id, celsius_text(b.T_in), celsius_text(b.T_out), fixed_text(b.X_in, 4),
                    fixed_text(b.X_out, 4), fixed_text(b.X_ad_eq, 4), fixed_text(b.volume, 3),
                    fixed_text(b.catalyst_mass, 1)});
  out += render_columns(rows, 1);
  const auto& f = l.feed_conditioning;
  if (d.fixed_feed_T)
    out += fmt::format("  feed conditioning: none (bed 1 is fed at the feed temperature)\n");
  else
    out += fmt::format("  feed conditioning {}: {} -> {} °C, duty {} kW\n", f.id,
                       celsius_text(f.T_in), celsius_text(f.T_out), fixed_text(f.duty / 1e3, 2));
  if (!l.coolers.empty()) {
    std::vector<std::vector<std::string>> x;
    x.push_back({d.exothermic ? "cooler" : "heater", "after", "T in °C", "T out °C", "duty kW"});
    for (std::size_t k = 0; k < l.coolers.size(); ++k) {
      const auto& c = l.coolers[k];
      x.push_back({c.id, l.bed[k].id, celsius_text(c.T_in), celsius_text(c.T_out),
                   fixed_text(c.duty / 1e3, 2)});
    }
    out += "\n" + render_columns(x, 2);
    out += fmt::format(
        "  interstage duty in all: {} kW (heat added to the stream; negative: "
        "removed)\n",
        fixed_text(l.total_duty / 1e3, 2));
  }
  out += fmt::format(
      "  active constraints: {}\n",
      l.active_constraints.empty()
          ? std::string("none (every inlet and bed temperature lies inside the "
                        "window)")
          : [&] {
              std::string s;
              for (const auto& a : l.active_constraints)
                s += (s.empty() ? "" : ", ") + active_limit_text(d, l, a);
              return s;
            }());
  if (l.bed.size() > 1) {
    out += "  optimality conditions (Konoki 1956; Aris 1961), from the computed residuals:\n";
    for (const auto& c : l.interstage) out += "    " + interstage_text(d, l, c) + "\n";
    for (const auto& c : l.inlets) out += "    " + inlet_text(d, l, c) + "\n";
  }
  out += fmt::format("  check: run with these beds, the train reaches X = {} (target {})\n\n",
                     fixed_text(l.checked_conversion, 6), fixed_text(d.target, 4));

  out += "Gain\n";
  if (d.as_written) {
    const auto& a = *d.as_written;
    const auto other = objective_total(d, a.total_catalyst, a.total_volume);
    const std::string what =
        fmt::format("the case as written, {} reactor{}", a.reactors, a.reactors == 1 ? "" : "s");
    if (a.ran && a.reaches_target && a.within_limits && other && *other > 0)
      out += gain_line(d, what, *other);
    else if (a.ran)
      out += fmt::format("  against {}: not comparable, it {}{}\n", what, a.note,
                         other ? fmt::format(" (it holds {})", amount_text(d, *other)) : "");
    else
      out += fmt::format("  against the case as written: it {}\n", a.note);
  }
  if (d.staging) {
    const auto& s = *d.staging;
    const auto other = objective_total(d, s.total_catalyst, s.total_volume);
    if (s.reached && other && *other > 0)
      out += gain_line(d,
                       fmt::format("the staging policy, {} bed{} (rxtrain staging)", s.beds,
                                   s.beds == 1 ? "" : "s"),
                       *other);
    else
      out += fmt::format("  against the staging policy: {}\n", s.note);
  }

  if (!d.by_bed_count.empty()) {
    out += fmt::format("\nBeds against total {} (--max-beds {}); * = the optimum above\n",
                       d.catalyst_objective ? "catalyst" : "volume", *o.max_beds);
    std::vector<std::vector<std::string>> t;
    t.push_back({"", "beds", d.catalyst_objective ? "cat kg" : "V m3", "saved by this bed",
                 "interstage duty kW"});
    double previous = 0;  // the total of N - 1 beds; 0 when that N is infeasible
    for (const auto& c : d.by_bed_count) {
      const bool mark = c.beds == l.beds;
      if (!c.feasible) {
        t.push_back({mark ? "*" : "", std::to_string(c.beds), "-", "-", "-"});
        previous = 0;
        continue;
      }
      const double total = objective_total(d, c);
      const std::string saved =
          previous > 0 ? fmt::format("{} %", fixed_text(100 * (previous - total) / previous, 2))
                       : std::string("-");
      t.push_back({mark ? "*" : "", std::to_string(c.beds),
                   d.catalyst_objective ? fixed_text(total, 1) : fixed_text(total, 4), saved,
                   fixed_text(c.total_duty / 1e3, 2)});
      previous = total;
    }
    out += render_columns(t, 1);
    for (const auto& c : d.by_bed_count)
      if (!c.feasible)
        out += fmt::format("  {} bed{}: {}\n", c.beds, c.beds == 1 ? "" : "s", c.why);
  }

  if (!d.warnings.empty()) {
    out += "\nwarnings:\n";
    for (const auto& w : d.warnings) out += fmt::format("  - {}\n", w);
  }
  out += fmt::format("\n{}\n", kCaution);
  return out;
}

// A one-line progress report on stderr, redrawn at most ten times a second.
class ProgressLine {
 public:
  explicit ProgressLine(const char* unit) : unit_(unit) {}
  void operator()(const DesignProgress& p) {
    const auto now = std::chrono::steady_clock::now();
    if (now - last_ < std::chrono::milliseconds(100)) return;
    last_ = now;
    const std::string where =
        p.start > 0 ? fmt::format("start {}/{}", p.start, p.starts) : std::string("polish");
    const std::string best = p.best ? fmt::format("{:.6g} {}", *p.best, unit_) : "none yet";
    std::fprintf(stderr, "\r\033[Koptimize: %d beds, %s, %ld evaluations, best %s", p.beds,
                 where.c_str(), p.evaluations, best.c_str());
    std::fflush(stderr);
    shown_ = true;
  }
  void clear() const {
    if (shown_) std::fputs("\r\033[K", stderr);
  }

 private:
  const char* unit_;
  std::chrono::steady_clock::time_point last_{};
  bool shown_ = false;
};

int run_optimize_command(const OptimizeCommandOptions& o) {
  const UnitParser units;
  const Case c = load_case(o.case_file, units);
  DesignOptions options;
  if (o.beds > 0) options.beds = o.beds;
  if (o.max_beds > 0) options.max_beds = o.max_beds;
  options.fixed_feed_T = o.fixed_feed_T;
  options.equilibrium_views = !o.report_dir.empty();  // the figures draw them
  options.limit_check.margin = parse_limit_margin(o.limit_margin, units);
  if (!o.margin.empty()) {
    try {
      options.margin =
          units.difference_to_si(o.margin, SiUnit::of("K", "a temperature difference"));
    } catch (const UnitError& e) {
      throw UnitError(fmt::format("--margin: {}", e.what()));
    }
    if (!(options.margin >= 0))
      throw UnitError(
          fmt::format("--margin: a margin inside the limits cannot be negative, got "
                      "\"{}\"",
                      o.margin));
  }
  // The objective's unit: kg for per-catalyst rates, else m3.
  bool per_catalyst = false;
  for (const auto& rx : c.mechanism.reactions())
    per_catalyst = per_catalyst || rx.rate.basis == RateBasis::Catalyst;
  auto progress = std::make_shared<ProgressLine>(per_catalyst ? "kg" : "m3");
  if (::isatty(::fileno(stderr)))
    options.progress = [progress](const DesignProgress& p) { (*progress)(p); };
  DesignResult result;
  try {
    result = optimize_design(c, options);
  } catch (...) {
    progress->clear();
    throw;
  }
  progress->clear();

  // Rendered before anything is written; a failure leaves no file behind.
  OutputSet out;
  out.protect(o.case_file);  // the case file is never an output
  if (!o.json_path.empty()) out.add(o.json_path, optimize_json_text(result));
  if (!o.case_path.empty()) {
    std::ifstream in(o.case_file, std::ios::binary);
    const std::string text((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
    out.add(o.case_path, design_case_text(c, text, result, result.best, units, o.case_path));
  }
  if (!o.report_dir.empty()) {
    const auto figures = optimize_figures(c, result);
    add_report_files(
        out, o.report_dir,
        optimize_report_html(c, result, figures, provenance_of(o.case_file, RXTRAIN_VERSION)),
        figures);
  }
  out.commit();
  std::fputs(optimize_table(result, options).c_str(), stdout);
  return 0;
}

}  // namespace

Action setup_optimize(CLI::App& app) {
  auto o = std::make_shared<OptimizeCommandOptions>();
  app.add_option("case", o->case_file,
                 "Case file (YAML) with a top-level target: {conversion: X} and limits: {T_max: "
                 "..., T_in_min: ...}")
      ->required();
  auto* beds = app.add_option("--beds", o->beds,
                              "Number of adiabatic beds (default: the case's reactor stages)")
                   ->check(CLI::Range(1, 20));
  app.add_option("--max-beds", o->max_beds,
                 "Optimize 1 to N beds, show total catalyst and duty against N, keep the least")
      ->check(CLI::Range(1, 20))
      ->excludes(beds);
  app.add_flag("--fixed-feed-T", o->fixed_feed_T,
               "Keep bed 1's inlet at the feed temperature (no feed conditioning)");
  add_limit_margin_option(app, o->limit_margin);
  app.add_option("--margin", o->margin,
                 "Keep every bed temperature this far inside the catalyst's limits: within "
                 "[T_in_min + margin, T_max - margin] (a temperature difference, e.g. 15K; "
                 "default 0)");
  app.add_option("--json", o->json_path, "Write the optimum as JSON (SI units) to PATH");
  app.add_option("--report", o->report_dir,
                 "Write report.html (self-contained: the optimum over the equilibrium curve, "
                 "profiles, and with --max-beds the beds-against-catalyst trade-off) and the "
                 "figures as SVG into folder DIR");
  app.add_option("--write-case", o->case_path,
                 "Write the case with the optimum's train to PATH (rxtrain run reproduces it)");
  return [o] { return run_optimize_command(*o); };
}

}  // namespace rxtrain::cli
