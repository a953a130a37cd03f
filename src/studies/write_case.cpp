#include "rxtrain/studies/write_case.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <sstream>
#include <vector>

#include "rxtrain/base/caution.hpp"
#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case_fields.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/stages/limit_check.hpp"
#include "rxtrain/studies/bed_layout.hpp"

namespace rxtrain {

namespace {

std::vector<std::string> lines_of(const std::string& text) {
  std::vector<std::string> lines;
  std::istringstream in(text);
  std::string line;
  while (std::getline(in, line)) lines.push_back(line);
  return lines;
}

bool top_level_key(const std::string& line) {
  if (line.empty()) return false;
  const char c = line[0];
  return c != ' ' && c != '\t' && c != '#' && c != '-' && c != '\r';
}

// How finely a written layout's numbers are rounded: sizes to `digits`
// significant digits, exchanger temperatures to `T_step` K (0: `digits`
// significant digits too).
struct Rounding {
  int digits = 12;
  double T_step = 0;
};
// Tried in this order after the exact level: the first that keeps the run
// of the written case at the target and inside the window is written.
constexpr Rounding kExact{12, 0};
constexpr Rounding kLevels[] = {{6, 0.01}, {8, 1e-4}};

std::string number(double v) { return fmt::format("{:.{}g}", v, kExact.digits); }

// "key: value unit" of a field of the table (case_fields.hpp), in SI.
std::string field_text(CaseFieldKind kind, double v) {
  const CaseFieldSpec& s = case_field_spec(kind);
  return fmt::format("{}: {}", s.key(), case_field_text(s, v, kExact.digits));
}

// v to `digits` significant digits, up (+1), down (-1) or to nearest (0).
double round_significant(double v, int digits, int direction) {
  if (!(v > 0) || digits >= kExact.digits) return v;
  const double step = std::pow(10.0, std::floor(std::log10(v)) - (digits - 1));
  const double q = v / step;
  // 1e-9: a value already on the grid stays there despite the division.
  const double n = direction > 0   ? std::ceil(q - 1e-9)
                   : direction < 0 ? std::floor(q + 1e-9)
                                   : std::round(q);
  return n * step;
}

// An exchanger's outlet (the next bed's inlet) to the level's step, kept
// inside the optimizer's window [lo, hi]; direction as round_significant.
double round_temperature(double T, const Rounding& r, double lo, double hi, int direction) {
  if (r.T_step <= 0) return T;
  const double q = T / r.T_step;
  double t = (direction > 0   ? std::ceil(q - 1e-9)
              : direction < 0 ? std::floor(q + 1e-9)
                              : std::round(q)) *
             r.T_step;
  if (t < lo && T >= lo) t = std::ceil(q - 1e-9) * r.T_step;
  if (t > hi && T <= hi) t = std::floor(q + 1e-9) * r.T_step;
  return t;
}

// The layout's train at a rounding level. A bed that ends at the edge of
// the window its reaction heads for (an exothermic bed cut at T_max) is
// fed a little further from it and rounded smaller, so that it does not
// pass it; every other bed is rounded larger, so that no conversion is
// lost.
std::vector<StageSpec> rounded_train(std::vector<StageSpec> train, const DesignResult& d,
                                     const DesignLayout& layout, const Rounding& r) {
  const double edge = d.exothermic ? d.window_high : d.window_low;
  auto at_edge = [&](std::size_t bed) {
    return bed < layout.bed.size() &&
           std::abs(layout.bed[bed].T_out - edge) <= kLimitRelativeTolerance * edge;
  };
  const int away = d.exothermic ? -1 : +1;  // the direction away from the edge
  std::size_t bed = 0;
  for (auto& sp : train) {
    if (auto* x = std::get_if<ExchangerSpec>(&sp)) {
      x->T_out =
          round_temperature(*x->T_out, r, d.window_low, d.window_high, at_edge(bed) ? away : 0);
      continue;
    }
    auto& rs = std::get<ReactorSpec>(sp);
    const int direction = at_edge(bed++) ? -1 : +1;
    if (rs.catalyst_mass) {
      const double m = round_significant(*rs.catalyst_mass, r.digits, direction);
      if (rs.volume && rs.bulk_density) rs.volume = m / *rs.bulk_density;
      rs.catalyst_mass = m;
    } else if (rs.volume) {
      rs.volume = round_significant(*rs.volume, r.digits, direction);
    }
  }
  return train;
}

// What the written train does when run as `rxtrain run` runs it: its
// conversion and how far (K) its beds stand outside the window.
struct WrittenRun {
  double conversion = 0;
  double outside = 0;
};

WrittenRun run_written(const Case& back, const DesignResult& d) {
  TrainOptions to;
  to.equilibrium_views = false;
  const TrainResult r = run_train(back, to);
  WrittenRun w{r.conversion, 0};
  for (const auto& st : r.stages) {
    if (!is_reactor(st.kind)) continue;
    w.outside = std::max({w.outside, st.T_max - d.window_high, d.window_low - st.T_min});
  }
  return w;
}

}  // namespace

namespace {

// The case file's text with its train block replaced by `train`; `note`
// ends the block's heading comment.
std::string case_text_with(const Case& c, const std::vector<std::string>& lines, std::size_t begin,
                           std::size_t end, const DesignResult& d, const DesignLayout& layout,
                           const std::vector<StageSpec>& train, const std::string& note) {
  double total = 0;
  for (const auto& sp : train)
    if (const auto* r = std::get_if<ReactorSpec>(&sp))
      total += d.catalyst_objective ? r->catalyst_mass.value_or(0.0) : r->volume.value_or(0.0);
  std::string block = fmt::format(
      "# The optimum layout written by `rxtrain optimize` ({} adiabatic beds, total {} {} {}{}).\n"
      "# {}\n# {}\n",
      layout.beds, d.catalyst_objective ? "catalyst" : "volume", number(total),
      case_field_spec(d.catalyst_objective ? CaseFieldKind::Catalyst : CaseFieldKind::Volume).si,
      d.margin > 0 ? fmt::format("; every bed temperature kept {:g} K inside the limits (--margin)",
                                 d.margin)
                   : "",
      note, kCaution);
  block += "train:\n";
  std::size_t bed = 0;
  for (const auto& sp : train) {
    if (const auto* x = std::get_if<ExchangerSpec>(&sp)) {
      block += fmt::format("  - {{type: exchanger, id: {}, {}}}   # {:.2f} degC\n", x->id,
                           field_text(CaseFieldKind::ExchangerTout, *x->T_out),
                           *x->T_out - kZeroCelsius);
      continue;
    }
    const auto& r = std::get<ReactorSpec>(sp);
    const DesignBed& b = layout.bed[bed++];
    std::string size = r.catalyst_mass ? field_text(CaseFieldKind::Catalyst, *r.catalyst_mass)
                                       : field_text(CaseFieldKind::Volume, *r.volume);
    if (r.bulk_density) size += ", " + field_text(CaseFieldKind::BulkDensity, *r.bulk_density);
    if (r.activity != 1) size += ", " + field_text(CaseFieldKind::Activity, r.activity);
    block += fmt::format(
        "  - {{type: pfr, id: {}, {}}}   # optimum: X {:.6f} -> {:.6f}, {:.2f} -> {:.2f} degC\n",
        r.id, size, b.X_in, b.X_out, b.T_in - kZeroCelsius, b.T_out - kZeroCelsius);
  }

  std::string text = fmt::format(
      "# Written by rxtrain optimize from {}: the case as given, with the train replaced\n"
      "# by the optimum layout (see the train below).\n",
      c.file);
  for (std::size_t i = 0; i < begin; ++i) text += lines[i] + "\n";
  text += block;
  for (std::size_t i = end; i < lines.size(); ++i) text += lines[i] + "\n";
  return text;
}

std::string rounding_words(const Rounding& r) {
  if (r.T_step <= 0) return fmt::format("{} significant digits", r.digits);
  return fmt::format("sizes to {} significant digits, temperatures to {:g} K", r.digits, r.T_step);
}

}  // namespace

std::string design_case_text(const Case& c, const std::string& case_text, const DesignResult& d,
                             const DesignLayout& layout, const UnitParser& units,
                             const std::string& name) {
  const auto lines = lines_of(case_text);
  std::size_t begin = lines.size();
  for (std::size_t i = 0; i < lines.size(); ++i)
    if (lines[i].rfind("train:", 0) == 0) {
      begin = i;
      break;
    }
  if (begin == lines.size())
    throw InputError({c.file, 0, 0},
                     "--write-case needs the case's top-level keys in block style (a line "
                     "starting with \"train:\"); this case's train could not be located");
  std::size_t end = begin + 1;
  while (end < lines.size() && !top_level_key(lines[end])) ++end;
  // Column-0 comments just above the next key belong to that key.
  while (end > begin + 1 && end <= lines.size() && !lines[end - 1].empty() &&
         lines[end - 1][0] == '#')
    --end;

  const auto train = design_train(c, d, layout);
  {
    // The layout as a case built in code, checked before any text of it.
    Case built = c;
    built.train = train;
    validate_case(built);
  }
  // The file must load, with the train just written.
  auto load_back = [&](const std::string& text) {
    Case back = load_case_from_string(text, name, units);
    if (back.train.size() != train.size())
      throw InputError({c.file, 0, 0},
                       "--write-case could not replace the case's train (it spans more than the "
                       "lines after \"train:\"); write the train as the last block of the case");
    return back;
  };

  // Rounded numbers read better, but a bed cut at T_max or a last bed
  // sized to the target can lose either by rounding: each level is run as
  // written and kept only when it does as well as the exact numbers.
  auto verdict = [&](const WrittenRun& w) {
    const bool reaches = w.conversion >= d.target - kReachTolerance;
    const bool outside = w.outside > kLimitRelativeTolerance * d.window_high;
    std::string v =
        reaches ? fmt::format("run as written, this train reaches the target X = {:.4f} ({:.6f})",
                              d.target, w.conversion)
                : fmt::format(
                      "run as written, this train reaches only X = {:.6f}, short of the "
                      "target {:.4f}",
                      w.conversion, d.target);
    if (outside)
      v += fmt::format(" and stands {:.3g} K outside the optimizer's window", w.outside);
    else
      v += " within the optimizer's window";
    return v;
  };
  const std::string exact_text = case_text_with(c, lines, begin, end, d, layout, train, "");
  const WrittenRun exact = run_written(load_back(exact_text), d);
  for (const Rounding& r : kLevels) {
    const auto rounded = rounded_train(train, d, layout, r);
    const std::string probe = case_text_with(c, lines, begin, end, d, layout, rounded, "");
    const WrittenRun w = run_written(load_back(probe), d);
    const double reach_floor = std::min(d.target, exact.conversion) - kReachTolerance;
    const double window_tolerance = kLimitRelativeTolerance * d.window_high;
    if (w.conversion >= reach_floor &&
        w.outside <= std::max(exact.outside, 0.0) + window_tolerance) {
      const std::string text =
          case_text_with(c, lines, begin, end, d, layout, rounded,
                         fmt::format("Rounded ({}); {}.", rounding_words(r), verdict(w)));
      load_back(text);
      return text;
    }
  }
  const std::string text = case_text_with(
      c, lines, begin, end, d, layout, train,
      fmt::format("Not rounded ({}: a rounded train lost the target or the window); {}.",
                  rounding_words(kExact), verdict(exact)));
  load_back(text);
  return text;
}

}  // namespace rxtrain
