#include "rxtrain/report/cooling_options_report.hpp"

#include <fmt/format.h>

#include <cmath>

#include "rxtrain/base/caution.hpp"
#include "rxtrain/base/json_number.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/report/text_format.hpp"

namespace rxtrain {

namespace {

using nlohmann::json;
using svg::xml_escape;

std::string shares_text(const std::vector<double>& shares) {
  std::string s;
  for (std::size_t k = 0; k < shares.size(); ++k)
    s += fmt::format("{}Q{} {}", k ? ", " : "", k + 1, fixed_text(shares[k], 4));
  return s;
}

// "4 beds", "2400 tubes of 38.0 mm", "-".
std::string size_text(const CoolingOption& o) {
  if (o.kind == CoolingKind::Cooled)
    return o.tubes && o.tube_diameter && *o.tubes > 0
               ? fmt::format("{} tubes of {} mm", *o.tubes, fixed_text(*o.tube_diameter * 1e3, 1))
               : std::string("-");
  return o.beds ? fmt::format("{} bed{}", *o.beds, *o.beds == 1 ? "" : "s") : std::string("-");
}

std::string temperature_or_dash(const std::optional<double>& T) {
  return T ? celsius_text(*T) : std::string("-");
}

std::string kw_or_dash(const std::optional<double>& W) {
  return W ? fixed_text(*W / 1e3, 1) : std::string("-");
}

// How each option was found, for the notes under the table.
std::string how_text(const CoolingOptionsResult& r, const CoolingOption& o) {
  switch (o.kind) {
    case CoolingKind::Intercooled: {
      const std::string sizing =
          o.sized_like.empty() ? std::string(
                                     "; coolers not sized (no exchanger of the case gives U and a "
                                     "utility)")
          : o.utility_cross
              ? fmt::format(
                    "; coolers not sized: the utility of exchanger {} crosses a "
                    "cooler's temperatures",
                    o.sized_like)
              : fmt::format("; area: the coolers' with exchanger {}'s U and utility", o.sized_like);
      const std::string staging_text = fmt::format(
          "each bed runs {:.0f} % of the way to its adiabatic equilibrium, or to T_max, or to the "
          "target, and coolers return the stream to bed 1's inlet ({} °C)",
          100 * r.approach, celsius_text(r.feed_T));
      if (o.optimized) {
        const double policy = o.staging_total.value_or(0.0);
        const double now = o.catalyst_mass.value_or(o.volume.value_or(0.0));
        double bed1_T = r.feed_T;
        for (const auto& s : o.train.stages)
          if (is_reactor(s.kind)) {
            bed1_T = s.inlet.T;
            break;
          }
        return fmt::format(
            "{} beds, as staging's policy needs ({} {}: {}); here each bed's inlet temperature "
            "and conversion are chosen for the least catalyst (optimize: {} % less){}{}",
            o.beds.value_or(0), volume_text(policy), o.catalyst_mass ? "kg" : "m3", staging_text,
            fixed_text(policy > 0 ? 100 * (policy - now) / policy : 0.0, 1),
            o.feed_conditioning_duty != 0
                ? fmt::format("; the feed goes to bed 1 at {} °C ({} kW before bed 1)",
                              celsius_text(bed1_T), fixed_text(o.feed_conditioning_duty / 1e3, 1))
                : std::string(),
            sizing);
      }
      return fmt::format(
          "staging's answer: {}{}{}", staging_text,
          o.optimum_note.empty() ? std::string() : "; not optimized: " + o.optimum_note, sizing);
    }
    case CoolingKind::Quench:
      if (o.skipped) return {};
      return fmt::format(
          "beds as staging's; each cold shot of fresh feed at {} °C brings the mixed stream back "
          "to {} °C; shares of the feed {} (bed 1 gets {}); heat removed: what the shots take "
          "up warming to the mixed stream",
          celsius_text(*r.quench_T), celsius_text(r.feed_T), shares_text(o.shares),
          fixed_text(
              1 -
                  [&] {
                    double s = 0;
                    for (double x : o.shares) s += x;
                    return s;
                  }(),
              4));
    case CoolingKind::Cooled:
      if (o.skipped || !o.coolant_T) return {};
      return fmt::format(
          "one reactor sized to the target in a constant coolant; U {} W/m2/K; the coolant "
          "temperature needing least catalyst with the peak below T_max, scanned from {} to {} "
          "°C and refined ({} trials)",
          fixed_text(*o.U, 1), celsius_text(o.coolant_T_lo), celsius_text(o.coolant_T_hi),
          o.trials);
  }
  return {};
}

json path_json(const TrainResult& t) {
  json path = json::array();
  for (const auto& s : t.stages)
    for (const auto& p : s.profile)
      path.push_back({{"T", json_number(p.T)}, {"X", json_number(p.X)}});
  return path;
}

const char* kOptionColours[] = {"#0072B2", "#E69F00", "#009E73"};  // by kind
const char* kOptionDashes[] = {"", "7 3", ""};

}  // namespace

std::string cooling_reason_text(const CoolingOptionsResult& r, const CoolingOption& o) {
  switch (o.why) {
    case CoolingShortfall::None:
      return {};
    case CoolingShortfall::TargetMissed:
      if (o.kind == CoolingKind::Quench)
        return o.conversion
                   ? fmt::format(
                         "the target X = {} is out of reach of a quench converter: each cold "
                         "shot dilutes the stream with unconverted feed; the most it reaches "
                         "with up to {} beds (--max-beds) is X = {}, with {} beds",
                         fixed_text(r.target, 4), r.max_beds, conversion_text(*o.conversion),
                         o.beds.value_or(0))
                   : "the first bed cannot progress from the feed";
      return fmt::format("{} beds stop short of the target X = {}: the most they reach is X = {}",
                         o.beds.value_or(0), fixed_text(r.target, 4),
                         conversion_text(o.conversion.value_or(0.0)));
    case CoolingShortfall::NoQuenchT:
      return "skipped: no --quench-T given (the temperature of the fresh feed used for the cold "
             "shots, before its preheater)";
    case CoolingShortfall::QuenchNotColder:
      return fmt::format(
          "skipped: --quench-T {} °C is not below bed 1's inlet temperature {} °C, so a shot of "
          "feed cannot cool the stream back to it",
          celsius_text(*r.quench_T), celsius_text(r.feed_T));
    case CoolingShortfall::Endothermic:
      return "skipped: the key reaction is endothermic; cold shots and coolants take heat out";
    case CoolingShortfall::NoTMax:
      return "skipped: the case gives no limits: {T_max: ...}, the peak the coolant must keep "
             "the tubes below";
    case CoolingShortfall::NoTubes:
      return "skipped: no tubes and U: give --tubes COUNTxDIAMETER and --U (e.g. --tubes "
             "2400x38mm --U 220W/m2/K), or tubes and heat: {U, coolant} on the case's first "
             "reactor";
    case CoolingShortfall::PeakAboveTMax:
      return fmt::format(
          "every constant coolant temperature from {} to {} °C that reaches the target takes "
          "the tubes' peak to T_max {} °C or past it ({} trials): more tubes, a larger U or "
          "smaller tubes would be needed",
          celsius_text(o.coolant_T_lo), celsius_text(o.coolant_T_hi), celsius_text(*r.limits.T_max),
          o.trials);
    case CoolingShortfall::TargetOutOfReach:
      return fmt::format(
          "no constant coolant temperature from {} to {} °C reaches the target X = {} ({} "
          "trials): the cooled path's equilibrium or its dying rates stop it short",
          celsius_text(o.coolant_T_lo), celsius_text(o.coolant_T_hi), fixed_text(r.target, 4),
          o.trials);
  }
  return {};
}

std::string format_cooling_options(const CoolingOptionsResult& r) {
  std::string out = r.title + "\n";
  out += fmt::format(
      "cooling options: overall conversion of {} X = {}; T_max {}; bed 1 inlet {} °C; cold "
      "shots {}\n\n",
      r.key, fixed_text(r.target, 4),
      r.limits.T_max ? celsius_text(*r.limits.T_max) + " °C" : std::string("not given"),
      celsius_text(r.feed_T),
      r.quench_T ? "of fresh feed at " + celsius_text(*r.quench_T) + " °C"
                 : std::string("not given"));
  std::vector<std::vector<std::string>> rows;
  rows.push_back({"option", "feasible", "size", "catalyst kg", "V m3", "heat removed kW", "area m2",
                  "T peak °C", "margin K", "coolant °C", "X out"});
  for (const auto& o : r.options) {
    rows.push_back({cooling_kind_name(o.kind),
                    o.feasible  ? "yes"
                    : o.skipped ? "skipped"
                                : "no",
                    o.skipped ? "-" : size_text(o), volume_text(o.catalyst_mass),
                    volume_text(o.volume), kw_or_dash(o.heat_removed),
                    o.area ? volume_text(o.area) : "-", temperature_or_dash(o.T_peak),
                    o.margin_to_T_max ? fixed_text(*o.margin_to_T_max, 2) : "-",
                    temperature_or_dash(o.coolant_T), conversion_text(o.conversion)});
  }
  out += render_columns(rows, 3);
  out +=
      "best feasible first, by catalyst (by volume for a per-volume rate); heat removed: "
      "from the reacting stream; margin: T_max - T peak\n";
  for (const auto& o : r.options) {
    const std::string why = cooling_reason_text(r, o), how = how_text(r, o);
    if (!why.empty()) out += fmt::format("  {}: {}\n", cooling_kind_name(o.kind), why);
    if (!how.empty()) out += fmt::format("  {}: {}\n", cooling_kind_name(o.kind), how);
  }
  out += warnings_and_caution(r.warnings);
  return out;
}

json cooling_options_json(const CoolingOptionsResult& r) {
  json j;
  j["title"] = r.title;
  j["key"] = r.key;
  j["target"] = json_number(r.target);
  j["limits"] = {{"T_max", json_number(r.limits.T_max)},
                 {"T_in_min", json_number(r.limits.T_in_min)}};
  j["feed_T"] = json_number(r.feed_T);
  j["quench_T"] = json_number(r.quench_T);
  j["policy"] = {{"approach", json_number(r.approach)}, {"max_beds", r.max_beds}};
  json opts = json::array();
  for (const auto& o : r.options) {
    const std::string why = cooling_reason_text(r, o);
    json x;
    x["kind"] = cooling_kind_name(o.kind);
    x["feasible"] = o.feasible;
    x["reason"] = why.empty() ? json(nullptr) : json(why);
    x["beds"] = o.beds && !o.skipped ? json(*o.beds) : json(nullptr);
    x["tubes"] = o.tubes && *o.tubes > 0 ? json(*o.tubes) : json(nullptr);
    x["catalyst_mass"] = json_number(o.catalyst_mass);
    x["heat_removed"] = json_number(o.heat_removed);
    x["area"] = json_number(o.area);
    x["T_peak"] = json_number(o.T_peak);
    x["margin_to_T_max"] = json_number(o.margin_to_T_max);
    x["coolant_T"] = json_number(o.coolant_T);
    x["conversion"] = json_number(o.conversion);
    x["shares"] = json::array();
    for (double s : o.shares) x["shares"].push_back(json_number(s));
    x["tube_diameter"] = o.tubes && *o.tubes > 0 ? json_number(o.tube_diameter) : json(nullptr);
    x["U"] = o.tubes && *o.tubes > 0 ? json_number(o.U) : json(nullptr);
    x["volume"] = json_number(o.volume);
    if (o.kind == CoolingKind::Intercooled) {
      // Whether the row is optimize's layout for staging's bed count, and
      // staging's policy total beside it.
      x["optimized"] = o.optimized;
      x["staging_total"] = json_number(o.staging_total);
      x["feed_conditioning_duty"] = json_number(o.feed_conditioning_duty);
      x["optimum_note"] = o.optimum_note.empty() ? json(nullptr) : json(o.optimum_note);
    }
    x["path"] = path_json(o.train);
    opts.push_back(std::move(x));
  }
  j["options"] = std::move(opts);
  j["warnings"] = r.warnings;
  j["caution"] = kCaution;
  return j;
}

std::string cooling_options_json_text(const CoolingOptionsResult& r) {
  return cooling_options_json(r).dump(2) + "\n";
}

std::vector<Figure> cooling_options_figures(const Case& c, const CoolingOptionsResult& r) {
  svg::ChartOptions o;
  o.width = 760;
  o.height = 500;
  o.title = "The cooling options on the temperature–conversion diagram";
  o.x_label = "Temperature (°C)";
  o.y_label = fmt::format("Conversion of {} (–)", r.key);
  svg::Chart chart(o);
  std::vector<double> x, y;
  for (const auto& opt : r.options) {
    if (opt.kind != CoolingKind::Intercooled) continue;
    for (const auto& p : opt.train.equilibrium_curve) {
      x.push_back(p.T - kZeroCelsius);
      y.push_back(p.X_eq);
    }
  }
  if (!x.empty())
    chart.add_line(x, y,
                   {.label = "equilibrium X_eq(T) at the feed composition",
                    .colour = "#000000",
                    .dash = "",
                    .width = 2.5});
  for (const auto& opt : r.options) {
    if (opt.train.stages.empty()) continue;
    x.clear();
    y.clear();
    for (const auto& s : opt.train.stages)
      for (const auto& p : s.profile) {
        x.push_back(p.T - kZeroCelsius);
        y.push_back(p.X);
      }
    const int k = static_cast<int>(opt.kind);
    std::string label = fmt::format("{} ({}{})", cooling_kind_name(opt.kind), size_text(opt),
                                    opt.feasible ? "" : ", short of the target");
    if (opt.coolant_T) label += fmt::format(", coolant {} °C", celsius_text(*opt.coolant_T));
    chart.add_line(
        x, y,
        {.label = label, .colour = kOptionColours[k], .dash = kOptionDashes[k], .width = 2.0});
    if (opt.coolant_T)
      chart.add_vline(*opt.coolant_T - kZeroCelsius, {.label = "coolant", .colour = "#999999"});
  }
  if (c.limits.T_max)
    chart.add_vline(*c.limits.T_max - kZeroCelsius, {.label = "T_max", .colour = "#D55E00"});
  chart.add_hline(r.target, {.label = "target"});
  std::vector<Figure> out;
  out.push_back({"tx-options",
                 "Each option's path: the intercooled beds with their coolers as "
                 "constant-conversion steps, the quench beds with each cold shot as a step down "
                 "in temperature and conversion (the conversion on the key fed so far), and the "
                 "cooled tubes along their length.",
                 std::move(chart)});
  return out;
}

std::string cooling_options_html(const Case& c, const CoolingOptionsResult& r,
                                 const std::vector<Figure>& figures, const ReportProvenance& p) {
  using html::cell;
  std::string h = html::page_begin(r.title + " — the cooling options side by side", p);
  h += html::feed_section(c);
  h += "<h2 id=\"summary\">The cooling options</h2>\n";
  h += fmt::format(
      "<p>Target: overall conversion of {} X = {}. T_max {}. Bed 1 inlet {} °C. Cold shots {}. "
      "Each option with the least catalyst its policy allows; best feasible first.</p>\n",
      xml_escape(r.key), fixed_text(r.target, 4),
      r.limits.T_max ? celsius_text(*r.limits.T_max) + " °C" : std::string("not given"),
      celsius_text(r.feed_T),
      r.quench_T ? "of fresh feed at " + celsius_text(*r.quench_T) + " °C"
                 : std::string("not given"));
  h += "<table class=\"stages\">\n";
  h += html::header_row({"option", "feasible", "size", "catalyst (kg)", "V (m³)",
                         "heat removed (kW)", "area (m²)", "T peak (°C / K)", "margin to T_max (K)",
                         "coolant (°C / K)", "X out"});
  for (const auto& o : r.options) {
    h += "<tr>" + cell(cooling_kind_name(o.kind), false) +
         cell(o.feasible  ? "yes"
              : o.skipped ? "skipped"
                          : "no",
              false) +
         cell(o.skipped ? "-" : size_text(o), false) + cell(volume_text(o.catalyst_mass), true) +
         cell(volume_text(o.volume), true) + cell(kw_or_dash(o.heat_removed), true) +
         cell(o.area ? volume_text(o.area) : "-", true) +
         (o.T_peak ? html::temperature_cell(*o.T_peak) : cell("-", true)) +
         cell(o.margin_to_T_max ? fixed_text(*o.margin_to_T_max, 2) : "-", true) +
         (o.coolant_T ? html::temperature_cell(*o.coolant_T) : cell("-", true)) +
         cell(conversion_text(o.conversion), true) + "</tr>\n";
  }
  h += "</table>\n<p>Heat removed: from the reacting stream (the coolers', the coolant's, or "
       "what the cold shots take up warming to the mixed stream); margin: T_max less the "
       "peak.</p>\n<ul>\n";
  for (const auto& o : r.options) {
    const std::string why = cooling_reason_text(r, o), how = how_text(r, o);
    if (!why.empty())
      h += fmt::format("<li><strong>{}</strong>: {}.</li>\n", cooling_kind_name(o.kind),
                       xml_escape(why));
    if (!how.empty())
      h += fmt::format("<li><strong>{}</strong>: {}.</li>\n", cooling_kind_name(o.kind),
                       xml_escape(how));
  }
  h += "</ul>\n";
  h += html::figures_section(figures);
  h += html::warnings_section(r.warnings);
  h += html::inputs_section(c);
  h += html::page_end();
  return h;
}

}  // namespace rxtrain
