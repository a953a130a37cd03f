#include "rxtrain/report/svg.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <limits>
#include <numbers>
#include <stdexcept>
#include <utility>

#include "rxtrain/base/utf8.hpp"

namespace rxtrain::svg {

namespace {

constexpr std::string_view kReplacementChar = "\xEF\xBF\xBD";  // U+FFFD in UTF-8
constexpr double kInf = std::numeric_limits<double>::infinity();

// Look of the chart (px). Sizes follow common practice for screen figures, no source.
constexpr double kTickLength = 5.0;
constexpr double kTickGap = 4.0;  // tick end to tick label
constexpr double kTitleSize = 15.0;
constexpr double kCharWidth = 0.6;  // average glyph advance of a sans-serif face, in em
constexpr double kSlant = 35.0;     // degrees, slanted category labels
constexpr double kClipPad = 5.0;    // lets markers and lines on the plot edge show whole
constexpr double kLegendInset = 8.0;
constexpr double kLegendPad = 8.0;
constexpr double kLegendSwatch = 24.0;
constexpr const char* kAxisColour = "#333333";
constexpr const char* kGridColour = "#e3e3e3";
constexpr const char* kZeroColour = "#9a9a9a";

// Grey-print order of the Okabe-Ito colours (indices into kOkabeIto):
// blue, orange, bluish green, vermillion, sky blue, reddish purple, black, yellow.
constexpr std::array<std::size_t, 8> kSeriesOrder = {5, 1, 3, 6, 2, 7, 0, 4};
constexpr std::array<std::string_view, 8> kDashes = {"",    "8 4",          "2 3", "10 3 2 3",
                                                     "4 4", "12 3 3 3 3 3", "1 4", "6 2 2 2 2 2"};

constexpr std::array<double, 4> kNiceMultipliers = {1.0, 2.0, 2.5, 5.0};

// 10^k, exact for |k| <= 22 (products of exact powers stay exact there).
double pow10(int k) {
  if (k < -22 || k > 22) return std::pow(10.0, k);
  double p = 1.0;
  for (int i = 0; i < std::abs(k); ++i) p *= 10.0;
  return k < 0 ? 1.0 / p : p;
}

// m * 10^k computed so that decimal steps come out as close as doubles allow
// (3 * 0.1 gives 0.30000000000000004, 3 / 10 gives 0.3).
double scaled(double m, int k) { return k >= 0 ? m * pow10(k) : m / pow10(-k); }

// Length of the valid UTF-8 sequence at s[i] of a character XML 1.0
// allows beyond ASCII (not U+FFFE, U+FFFF); 0 if there is none.
std::size_t xml_utf8_length(std::string_view s, std::size_t i) {
  const std::size_t n = utf8_length(s, i);
  if (n == 3 && static_cast<unsigned char>(s[i]) == 0xEF &&
      static_cast<unsigned char>(s[i + 1]) == 0xBF && static_cast<unsigned char>(s[i + 2]) >= 0xBE)
    return 0;
  return n;
}

std::size_t code_points(std::string_view s) {
  std::size_t n = 0;
  for (unsigned char ch : s) n += (ch & 0xC0u) != 0x80u;
  return n;
}

// Estimated rendered width; the browser's font is unknown, so be generous.
double text_width(std::string_view s, double font_size) {
  return static_cast<double>(code_points(s)) * kCharWidth * font_size;
}

// A coordinate: two decimals, never "-0.00", never "nan" (callers skip
// non-finite points; the fallback only guards against a slip).
std::string num(double v) {
  if (!std::isfinite(v)) return "0.00";
  std::string s = fmt::format("{:.2f}", v);
  if (s == "-0.00") s.erase(0, 1);
  return s;
}

// A size attribute: whole numbers without decimals.
std::string dim(double v) { return v == std::round(v) ? fmt::format("{:.0f}", v) : num(v); }

// Decimals needed to write `step` exactly (capped: a step like 1/3 has none).
int decimals_for(double step) {
  step = std::abs(step);
  if (!(step > 0.0) || !std::isfinite(step)) return 0;
  for (int d = 0; d < 10; ++d) {
    const double s = step * pow10(d);
    if (std::abs(s - std::round(s)) <= 1e-6 * std::max(1.0, s)) return d;
  }
  return 10;
}

std::string fixed(double value, int decimals) {
  std::string s = fmt::format("{:.{}f}", value, decimals);
  if (s[0] == '-' && s.find_first_not_of("-0.") == std::string::npos) s.erase(0, 1);
  return s;
}

// floor/ceil of a tick index that forgives the last bits of floating noise,
// so 0.7 / 0.1 = 6.999999999999999 still counts as 7.
double floor_index(double idx) {
  const double r = std::round(idx);
  return std::abs(idx - r) <= 1e-9 * std::max(1.0, std::abs(idx)) ? r : std::floor(idx);
}
double ceil_index(double idx) {
  const double r = std::round(idx);
  return std::abs(idx - r) <= 1e-9 * std::max(1.0, std::abs(idx)) ? r : std::ceil(idx);
}

struct Extent {
  double lo = kInf, hi = -kInf;
  void add(double v) {
    if (!std::isfinite(v)) return;
    lo = std::min(lo, v);
    hi = std::max(hi, v);
  }
  bool empty() const { return lo > hi; }
};

// Splits indices 0..n-1 into maximal runs where `ok(i)` holds.
template <class Ok>
std::vector<std::pair<std::size_t, std::size_t>> runs(std::size_t n, Ok ok) {
  std::vector<std::pair<std::size_t, std::size_t>> out;  // [begin, end)
  std::size_t i = 0;
  while (i < n) {
    while (i < n && !ok(i)) ++i;
    const std::size_t b = i;
    while (i < n && ok(i)) ++i;
    if (i > b) out.emplace_back(b, i);
  }
  return out;
}

std::string colour_of(const std::optional<std::string>& c, std::size_t style) {
  return c ? *c : std::string(series_colour(style));
}
std::string dash_of(const std::optional<std::string>& d, std::size_t style) {
  return d ? *d : std::string(series_dash(style));
}

std::string dash_attr(const std::string& dash) {
  return dash.empty() ? "" : fmt::format(" stroke-dasharray=\"{}\"", xml_escape(dash));
}

const char* anchor_name(TextAnchor a) {
  return a == TextAnchor::Start ? "start" : a == TextAnchor::Middle ? "middle" : "end";
}

std::string marker_svg(Marker m, double x, double y, double r, const std::string& colour) {
  if (m == Marker::None || !std::isfinite(x) || !std::isfinite(y)) return "";
  const std::string fill = xml_escape(colour);
  switch (m) {
    case Marker::Circle:
      return fmt::format("<circle cx=\"{}\" cy=\"{}\" r=\"{}\" fill=\"{}\"/>", num(x), num(y),
                         num(r), fill);
    case Marker::Square:
      return fmt::format("<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"{}\"/>",
                         num(x - r), num(y - r), num(2 * r), num(2 * r), fill);
    case Marker::Triangle:
      return fmt::format("<polygon points=\"{},{} {},{} {},{}\" fill=\"{}\"/>", num(x),
                         num(y - 1.2 * r), num(x + 1.1 * r), num(y + 0.8 * r), num(x - 1.1 * r),
                         num(y + 0.8 * r), fill);
    case Marker::Diamond:
      return fmt::format("<polygon points=\"{},{} {},{} {},{} {},{}\" fill=\"{}\"/>", num(x),
                         num(y - 1.3 * r), num(x + 1.3 * r), num(y), num(x), num(y + 1.3 * r),
                         num(x - 1.3 * r), num(y), fill);
    case Marker::None:
      break;
  }
  return "";
}

// FNV-1a: a deterministic name for the ids of one chart, so that several
// inline charts in one HTML page do not share clip paths.
std::uint64_t fnv1a(std::string_view s) {
  std::uint64_t h = 14695981039346656037ull;
  for (unsigned char c : s) {
    h ^= c;
    h *= 1099511628211ull;
  }
  return h;
}

void check(bool ok, const std::string& message) {
  if (!ok) throw std::invalid_argument(message);
}

void check_finite_positive(double v, const char* what) {
  check(std::isfinite(v) && v > 0.0, fmt::format("{} must be a positive number", what));
}

struct LegendEntry {
  enum Kind { Line, Fill } kind = Line;
  std::string label, colour, dash;
  double width = 2.0, opacity = 1.0;
  Marker marker = Marker::None;
  double marker_size = 3.5;
};

struct Box {
  double x0, y0, x1, y1;
  bool contains(double x, double y) const { return x >= x0 && x <= x1 && y >= y0 && y <= y1; }
  bool overlaps(const Box& b) const { return x0 < b.x1 && b.x0 < x1 && y0 < b.y1 && b.y0 < y1; }
};

// The box of a text line at baseline y, by its anchor.
Box text_box(double x, double y, double width, double size, TextAnchor anchor) {
  const double x0 = anchor == TextAnchor::Start ? x
                    : anchor == TextAnchor::End ? x - width
                                                : x - 0.5 * width;
  return {x0, y - size, x0 + width, y + 0.3 * size};
}

}  // namespace

// ---------------------------------------------------------------- text

std::string xml_escape(std::string_view text) {
  std::string out;
  out.reserve(text.size());
  std::size_t i = 0;
  while (i < text.size()) {
    const char c = text[i];
    const auto u = static_cast<unsigned char>(c);
    switch (c) {
      case '&':
        out += "&amp;";
        break;
      case '<':
        out += "&lt;";
        break;
      case '>':
        out += "&gt;";
        break;
      case '"':
        out += "&quot;";
        break;
      case '\'':
        out += "&apos;";
        break;
      default:
        if (u < 0x20 && c != '\t' && c != '\n' && c != '\r') {
          out += kReplacementChar;
        } else if (u < 0x80) {
          out += c;
        } else if (const std::size_t n = xml_utf8_length(text, i); n > 0) {
          out.append(text.substr(i, n));
          i += n;
          continue;
        } else {
          out += kReplacementChar;
        }
    }
    ++i;
  }
  return out;
}

// ---------------------------------------------------------------- scales

double LinearScale::map(double value) const {
  if (d1 == d0) return 0.5 * (r0 + r1);
  return r0 + (value - d0) / (d1 - d0) * (r1 - r0);
}

double LinearScale::inverse(double pixel) const {
  if (r1 == r0) return d0;
  return d0 + (pixel - r0) / (r1 - r0) * (d1 - d0);
}

std::vector<double> nice_ticks(double lo, double hi, int max_count) {
  check(std::isfinite(lo) && std::isfinite(hi), "nice_ticks: the range bounds must be finite");
  check(max_count >= 3, fmt::format("nice_ticks: max_count must be at least 3, got {}", max_count));
  if (lo > hi) std::swap(lo, hi);
  const double magnitude = std::max(std::abs(lo), std::abs(hi));
  if (hi - lo <= 1e-12 * magnitude) {
    const double centre = lo + 0.5 * (hi - lo);
    const double half = centre == 0.0 ? 1.0 : 0.1 * std::abs(centre);
    lo = centre - half;
    hi = centre + half;
  }
  const double span = hi - lo;
  check(std::isfinite(span), "nice_ticks: the range is too wide to put ticks on");
  const double raw = span / (max_count - 1);  // no smaller step can fit
  int k = static_cast<int>(std::floor(std::log10(raw))) - 1;
  // By two decades above `raw` the step exceeds the span, which leaves at most 3 ticks.
  for (int decade = 0; decade < 5; ++decade, ++k) {
    for (double m : kNiceMultipliers) {
      const double step = scaled(m, k);
      const double first = floor_index(lo / step);
      const double last = ceil_index(hi / step);
      if (last - first + 1.0 > max_count) continue;
      std::vector<double> ticks;
      for (double i = first; i <= last; i += 1.0) ticks.push_back(scaled(i * m, k) + 0.0);
      return ticks;  // "+ 0.0" above turns -0 into 0
    }
  }
  throw std::logic_error("nice_ticks: no step found");  // unreachable, see above
}

Interval nice_domain(double lo, double hi, int max_count) {
  const auto t = nice_ticks(lo, hi, max_count);
  return {t.front(), t.back()};
}

std::string format_tick(double value, double step) {
  if (!std::isfinite(value)) return "";
  return fixed(value, decimals_for(step));
}

std::vector<std::string> tick_labels(std::span<const double> ticks) {
  double step = kInf, largest = 0.0;
  for (std::size_t i = 0; i < ticks.size(); ++i) {
    if (!std::isfinite(ticks[i])) continue;
    largest = std::max(largest, std::abs(ticks[i]));
    if (i > 0 && std::isfinite(ticks[i - 1])) {
      const double gap = std::abs(ticks[i] - ticks[i - 1]);
      if (gap > 0.0) step = std::min(step, gap);
    }
  }
  const bool scientific = largest >= 1e6 || (largest > 0.0 && largest < 1e-3);
  std::vector<std::string> out;
  out.reserve(ticks.size());
  for (double t : ticks) {
    if (!std::isfinite(t)) {
      out.emplace_back();
    } else if (!scientific) {
      // Same decimals along the axis; a lone tick shows up to 6.
      out.push_back(
          fixed(t, std::isfinite(step) ? decimals_for(step) : std::min(decimals_for(t), 6)));
    } else if (std::abs(t) < 1e-9 * (std::isfinite(step) ? step : largest)) {
      out.emplace_back("0");
    } else {
      // Each tick normalised on its own ("2e20", "1e21"), to the step's
      // resolution, trailing zeros dropped.
      int e = static_cast<int>(std::floor(std::log10(std::abs(t))));
      std::string m;
      for (int attempt = 0; attempt < 2; ++attempt) {
        const double mant = e >= 0 ? t / pow10(e) : t * pow10(-e);  // exact divisors, see scaled()
        const double mstep =
            std::isfinite(step) ? (e >= 0 ? step / pow10(e) : step * pow10(-e)) : 0.0;
        m = fixed(mant,
                  std::min(std::isfinite(step) ? decimals_for(mstep) : decimals_for(mant), 6));
        if (m.find("10") != (m[0] == '-' ? 1u : 0u)) break;
        ++e;  // the mantissa rounded up to 10
      }
      if (m.find('.') != std::string::npos) {
        m.erase(m.find_last_not_of('0') + 1);
        if (m.back() == '.') m.pop_back();
      }
      out.push_back(fmt::format("{}e{}", m, e));
    }
  }
  return out;
}

// ---------------------------------------------------------------- palette

std::string_view series_colour(std::size_t index) {
  return kOkabeIto[kSeriesOrder[index % kSeriesOrder.size()]];
}

std::string_view series_dash(std::size_t index) { return kDashes[index % kDashes.size()]; }

// ---------------------------------------------------------------- chart

Chart::Chart(ChartOptions options) : options_(std::move(options)) {
  const auto& o = options_;
  check_finite_positive(o.width, "ChartOptions.width");
  check_finite_positive(o.height, "ChartOptions.height");
  const auto& m = o.margins;
  for (auto [v, name] : {std::pair{m.top, "top"}, std::pair{m.right, "right"},
                         std::pair{m.bottom, "bottom"}, std::pair{m.left, "left"}})
    check(std::isfinite(v) && v >= 0.0,
          fmt::format("ChartOptions.margins.{} must be a non-negative number", name));
  check(o.width - m.left - m.right > 0.0 && o.height - m.top - m.bottom > 0.0,
        "ChartOptions: the margins leave no room for the plot area");
  check(o.max_x_ticks >= 3, "ChartOptions.max_x_ticks must be at least 3");
  check(o.max_y_ticks >= 3, "ChartOptions.max_y_ticks must be at least 3");
  check(std::isfinite(o.font_size) && o.font_size >= 11.0,
        "ChartOptions.font_size must be at least 11 px so tick labels stay readable");
  for (auto [d, name] : {std::pair{&o.x_domain, "x_domain"}, std::pair{&o.y_domain, "y_domain"}})
    if (*d)
      check(std::isfinite((*d)->lo) && std::isfinite((*d)->hi) && (*d)->lo < (*d)->hi,
            fmt::format("ChartOptions.{} must be finite with lo < hi", name));
}

void Chart::add_line(std::span<const double> x, std::span<const double> y, LineOptions options) {
  check(x.size() == y.size(),
        fmt::format("add_line: x has {} values but y has {}", x.size(), y.size()));
  check_finite_positive(options.width, "LineOptions.width");
  check_finite_positive(options.marker_size, "LineOptions.marker_size");
  check(options.connect || options.marker != Marker::None,
        "add_line: a series without its line needs a marker");
  series_.emplace_back(detail::LineSeries{
      {x.begin(), x.end()}, {y.begin(), y.end()}, std::move(options), next_style_++});
}

void Chart::add_area(std::span<const double> x, std::span<const double> y, AreaOptions options) {
  check(x.size() == y.size(),
        fmt::format("add_area: x has {} values but y has {}", x.size(), y.size()));
  check(options.opacity >= 0.0 && options.opacity <= 1.0,
        "AreaOptions.opacity must be between 0 and 1");
  series_.emplace_back(detail::AreaSeries{
      {x.begin(), x.end()}, {}, {y.begin(), y.end()}, std::move(options), next_style_++});
}

void Chart::add_band(std::span<const double> x, std::span<const double> y_low,
                     std::span<const double> y_high, AreaOptions options) {
  check(x.size() == y_low.size() && x.size() == y_high.size(),
        fmt::format("add_band: x, y_low and y_high have {}, {} and {} values; they must match",
                    x.size(), y_low.size(), y_high.size()));
  check(options.opacity >= 0.0 && options.opacity <= 1.0,
        "AreaOptions.opacity must be between 0 and 1");
  series_.emplace_back(detail::AreaSeries{{x.begin(), x.end()},
                                          {y_low.begin(), y_low.end()},
                                          {y_high.begin(), y_high.end()},
                                          std::move(options),
                                          next_style_++});
}

void Chart::add_vline(double x, RefLineOptions options) {
  check_finite_positive(options.width, "RefLineOptions.width");
  series_.emplace_back(detail::RefLine{true, x, std::move(options)});
}

void Chart::add_hline(double y, RefLineOptions options) {
  check_finite_positive(options.width, "RefLineOptions.width");
  series_.emplace_back(detail::RefLine{false, y, std::move(options)});
}

void Chart::add_bars(std::vector<std::string> categories, std::span<const double> values,
                     BarOptions options) {
  check(!categories.empty(), "add_bars: no categories");
  check(categories.size() == values.size(),
        fmt::format("add_bars: {} categories but {} values", categories.size(), values.size()));
  if (categories_.empty())
    categories_ = std::move(categories);
  else
    check(categories == categories_,
          "add_bars: the categories differ from those of the chart's first bar series");
  series_.emplace_back(detail::BarSeries{
      {values.begin(), values.end()}, std::move(options), next_style_++, bar_series_++});
}

void Chart::add_text(double x, double y, std::string text, TextOptions options) {
  check_finite_positive(options.font_size, "TextOptions.font_size");
  series_.emplace_back(detail::TextLabel{x, y, std::move(text), std::move(options)});
}

namespace {

// The x and y extents of every finite point the series draw (bars reach
// down to 0, an area without a lower edge too).
std::pair<Extent, Extent> data_extents(const std::vector<detail::Series>& series) {
  Extent ex, ey;
  for (const auto& s : series) {
    if (const auto* l = std::get_if<detail::LineSeries>(&s)) {
      for (std::size_t i = 0; i < l->x.size(); ++i)
        if (std::isfinite(l->x[i]) && std::isfinite(l->y[i])) ex.add(l->x[i]), ey.add(l->y[i]);
    } else if (const auto* a = std::get_if<detail::AreaSeries>(&s)) {
      const bool to_zero = a->y_low.empty();
      bool any = false;
      for (std::size_t i = 0; i < a->x.size(); ++i) {
        const double low = to_zero ? 0.0 : a->y_low[i];
        if (!std::isfinite(a->x[i]) || !std::isfinite(a->y_high[i]) || !std::isfinite(low))
          continue;
        ex.add(a->x[i]), ey.add(a->y_high[i]), ey.add(low);
        any = true;
      }
      if (to_zero && any) ey.add(0.0);
    } else if (const auto* b = std::get_if<detail::BarSeries>(&s)) {
      ey.add(0.0);
      for (double v : b->values) ey.add(v);
    } else if (const auto* r = std::get_if<detail::RefLine>(&s)) {
      (r->vertical ? ex : ey).add(r->value);
    } else if (const auto* t = std::get_if<detail::TextLabel>(&s)) {
      if (std::isfinite(t->x) && std::isfinite(t->y)) ex.add(t->x), ey.add(t->y);
    }
  }
  if (ex.empty()) ex = {0.0, 1.0};
  if (ey.empty()) ey = {0.0, 1.0};
  return {ex, ey};
}

// Ticks of an axis: on a fixed domain, those inside it; else the nice
// domain of the data, which ends on ticks.
std::vector<double> axis_ticks(const std::optional<Interval>& fixed_domain, const Extent& e, int n,
                               Interval& domain) {
  if (fixed_domain) {
    domain = *fixed_domain;
    const double tol = 1e-9 * (domain.hi - domain.lo);
    auto t = nice_ticks(domain.lo, domain.hi, n);
    std::erase_if(t, [&](double v) { return v < domain.lo - tol || v > domain.hi + tol; });
    return t;
  }
  auto t = nice_ticks(e.lo, e.hi, n);
  domain = {t.front(), t.back()};
  return t;
}

double widest_label(const std::vector<std::string>& labels, double fs) {
  double w = 0.0;
  for (const auto& l : labels) w = std::max(w, text_width(l, fs));
  return w;
}

// `name` cut to max_chars code points, the last of them an ellipsis.
void shorten(std::string& name, std::size_t max_chars) {
  if (code_points(name) <= max_chars) return;
  std::size_t keep = 0, cps = 0;  // byte length of the first max_chars - 1 code points
  while (keep < name.size() && cps < max_chars - 1) {
    ++keep;
    while (keep < name.size() && (static_cast<unsigned char>(name[keep]) & 0xC0u) == 0x80u) ++keep;
    ++cps;
  }
  name = name.substr(0, keep) + "\u2026";
}

}  // namespace

double Chart::slanted_tick_block(const ChartLayout& L, std::vector<std::string>& categories,
                                 double label_block, double& label_left) const {
  const auto& o = options_;
  const double fs = o.font_size;
  const double max_bottom = 0.45 * o.height;
  const double s = std::sin(kSlant * std::numbers::pi / 180.0),
               c = std::cos(kSlant * std::numbers::pi / 180.0);
  // Long category names are shortened so the slanted text stays on the
  // figure: below the plot, and left of the first slot (the plot area of
  // the first pass is close enough).
  const double room_down = (max_bottom - kTickLength - kTickGap - fs * c - label_block - 6.0) / s;
  // Room on the left is made first: the plot moves right (up to 35 % of
  // the width) so that the first slanted name fits whole, and only a
  // name longer than that is shortened.
  const double slot = (L.plot_right - L.plot_left) / static_cast<double>(categories.size());
  label_left = std::min(4.0 + widest_label(categories_, fs) * c - 0.5 * slot, 0.35 * o.width);
  const double first_tick = std::max(L.plot_left, label_left) + 0.5 * slot;
  const double room_left = (first_tick - 4.0) / c;
  const std::size_t max_chars = std::max<std::size_t>(
      4, static_cast<std::size_t>(std::min(room_down, room_left) / (kCharWidth * fs)));
  for (auto& name : categories) shorten(name, max_chars);
  return kTickLength + kTickGap + widest_label(categories, fs) * s + fs * c;
}

ChartLayout Chart::layout() const {
  const auto& o = options_;
  const double fs = o.font_size;
  const bool categorical = !categories_.empty();
  const auto [ex, ey] = data_extents(series_);

  ChartLayout L;
  const double top = o.title.empty() ? o.margins.top : std::max(o.margins.top, kTitleSize + 20.0);
  const double right = o.margins.right;
  const double label_block = o.x_label.empty() ? 0.0 : 8.0 + fs + 1.0;  // x-axis label line
  const double max_bottom = 0.45 * o.height;
  std::vector<std::string> categories = categories_;
  double label_left = 0.0;  // px the slanted category names need left of the plot
  for (int pass = 0; pass < 2; ++pass) {
    // Bottom: ticks, one line of tick labels (or slanted ones), the axis label.
    const double tick_block = L.rotate_x_labels
                                  ? slanted_tick_block(L, categories, label_block, label_left)
                                  : kTickLength + kTickGap + fs;
    const double bottom =
        std::min(max_bottom, std::max(o.margins.bottom, tick_block + label_block + 6.0));
    L.plot_top = top;
    L.plot_bottom = o.height - bottom;
    const double plot_h = L.plot_bottom - L.plot_top;

    // y: ticks at least 1.8 font sizes apart.
    const int ny = std::clamp(static_cast<int>(plot_h / (1.8 * fs)) + 1, 3, o.max_y_ticks);
    Interval ydom;
    L.y_ticks = axis_ticks(o.y_domain, ey, ny, ydom);
    L.y_tick_labels = tick_labels(L.y_ticks);
    const double y_label_block = o.y_label.empty() ? 0.0 : 8.0 + fs + 1.0;
    const double needed_left =
        kTickLength + kTickGap + widest_label(L.y_tick_labels, fs) + y_label_block + 4.0;
    const double left =
        std::max(std::min(std::max(o.margins.left, needed_left),
                          o.margins.left + 0.5 * (o.width - o.margins.left - right)),
                 label_left);
    L.plot_left = left;
    L.plot_right = o.width - right;
    const double plot_w = L.plot_right - L.plot_left;
    L.y = {ydom.lo, ydom.hi, L.plot_bottom, L.plot_top};

    // x: categories one per slot, or the most ticks whose labels do not touch.
    Interval xdom;
    if (categorical) {
      const double n = static_cast<double>(categories.size());
      xdom = o.x_domain ? *o.x_domain : Interval{-0.5, n - 0.5};
      L.x_ticks.clear();
      for (std::size_t i = 0; i < categories.size(); ++i)
        L.x_ticks.push_back(static_cast<double>(i));
      L.x_tick_labels = categories;
      const bool crowded = widest_label(categories, fs) + 6.0 > plot_w / n;
      if (crowded && !L.rotate_x_labels) {
        L.rotate_x_labels = true;
        continue;  // second pass with room for slanted labels
      }
    } else {
      for (int nx = o.max_x_ticks; nx >= 3; --nx) {
        L.x_ticks = axis_ticks(o.x_domain, ex, nx, xdom);
        L.x_tick_labels = tick_labels(L.x_ticks);
        const double gap = L.x_ticks.size() < 2 ? plot_w
                                                : std::abs(L.x_ticks[1] - L.x_ticks[0]) /
                                                      (xdom.hi - xdom.lo) * plot_w;
        if (widest_label(L.x_tick_labels, fs) + 10.0 <= gap) break;
      }
    }
    L.x = {xdom.lo, xdom.hi, L.plot_left, L.plot_right};
    break;
  }
  return L;
}

namespace {

// The drawing of one chart (Chart::render_svg), step by step: the plot's
// layers accumulated series by series (fills, bars, reference lines, lines;
// then, unclipped, reference-line labels and text labels), then the frame
// around them: grid, axes, tick and axis labels, title, legend.
class Drawing {
 public:
  Drawing(const ChartOptions& o, const ChartLayout& L, std::size_t n_bar_series, bool categorical)
      : o(o),
        L(L),
        fs(o.font_size),
        plot{L.plot_left, L.plot_top, L.plot_right, L.plot_bottom},
        n_bar_series(n_bar_series),
        categorical(categorical) {}

  void add(std::size_t si, const detail::Series& s) {
    if (const auto* l = std::get_if<detail::LineSeries>(&s))
      line(si, l);
    else if (const auto* a = std::get_if<detail::AreaSeries>(&s))
      area(si, a);
    else if (const auto* bs = std::get_if<detail::BarSeries>(&s))
      bar(si, bs);
    else if (const auto* r = std::get_if<detail::RefLine>(&s))
      reference(si, r);
    else if (const auto* t = std::get_if<detail::TextLabel>(&s); t && in_x(t->x) && in_y(t->y))
      pending_texts.push_back({si, t});
  }

  std::string svg() {
    place_texts();
    const std::string plot_body = fills + bars + refs + lines;
    texts = ref_labels + texts;  // above the data, unclipped, with a white halo to stay legible
    std::string out = head(plot_body);
    const std::size_t head_size = svg_head(o.height).size();  // the svg element's opening tag
    out += grid();
    out +=
        fmt::format("<g class=\"plot\" clip-path=\"url(#{}-clip)\">\n", id) + plot_body + "</g>\n";
    out += texts;
    double widest_y = 0.0;
    out += axes(widest_y);
    out += axis_labels(widest_y);
    const std::string legend_markup = legend_box(out, head_size);
    out += legend_markup;
    out += "</svg>";
    return out;
  }

 private:
  struct PendingText {
    std::size_t series;
    const detail::TextLabel* t;
  };

  bool in_x(double v) const {
    const double tol = 1e-9 * std::abs(L.x.d1 - L.x.d0);
    return std::isfinite(v) && v >= std::min(L.x.d0, L.x.d1) - tol &&
           v <= std::max(L.x.d0, L.x.d1) + tol;
  }
  bool in_y(double v) const {
    const double tol = 1e-9 * std::abs(L.y.d1 - L.y.d0);
    return std::isfinite(v) && v >= std::min(L.y.d0, L.y.d1) - tol &&
           v <= std::max(L.y.d0, L.y.d1) + tol;
  }
  static bool finite_px(double px, double py) { return std::isfinite(px) && std::isfinite(py); }
  // Pixel samples of drawn data, for the legend's placement.
  void sample_segment(double ax, double ay, double bx, double by) {
    const int n = std::max(1, static_cast<int>(std::hypot(bx - ax, by - ay) / 8.0));
    for (int k = 0; k <= n; ++k) {
      const double f = static_cast<double>(k) / n;
      occupied.emplace_back(ax + f * (bx - ax), ay + f * (by - ay));
    }
  }
  // A label's baseline moved down, a line at a time, until its box meets no
  // reference-line label already placed (the T-X diagram's limit labels
  // share the plot's top edge with the stage labels).
  double free_baseline(double x, double y, double width, double size, TextAnchor a) const {
    for (int tries = 0; tries < 4; ++tries) {
      const Box b = text_box(x, y, width, size, a);
      if (std::none_of(label_boxes.begin(), label_boxes.end(),
                       [&](const Box& placed) { return placed.overlaps(b); }))
        break;
      y += size + 3.0;
    }
    return y;
  }

  void line(std::size_t si, const detail::LineSeries* l) {
    const std::string colour = colour_of(l->opt.colour, l->style);
    const std::string dash = dash_of(l->opt.dash, l->style);
    std::vector<std::pair<double, double>> px(l->x.size());
    for (std::size_t i = 0; i < px.size(); ++i) px[i] = {L.x.map(l->x[i]), L.y.map(l->y[i])};
    auto ok = [&](std::size_t i) {
      return std::isfinite(l->x[i]) && std::isfinite(l->y[i]) &&
             finite_px(px[i].first, px[i].second);
    };
    std::string g = fmt::format(
        "<g class=\"line\" data-series=\"{}\" fill=\"none\" stroke=\"{}\" stroke-width=\"{}\"{} "
        "stroke-linejoin=\"round\" stroke-linecap=\"{}\">\n",
        si, xml_escape(colour), num(l->opt.width), dash_attr(dash),
        dash.empty() ? "round" : "butt");
    std::string markers;
    for (const auto& [b, e] : runs(px.size(), ok)) {
      if (!l->opt.connect) {
        for (std::size_t i = b; i < e; ++i) {
          markers +=
              marker_svg(l->opt.marker, px[i].first, px[i].second, l->opt.marker_size, colour);
          occupied.push_back(px[i]);
        }
        continue;
      }
      g += "<polyline points=\"";
      for (std::size_t i = b; i < e; ++i) {
        g += fmt::format("{}{},{}", i == b ? "" : " ", num(px[i].first), num(px[i].second));
        if (i > b) sample_segment(px[i - 1].first, px[i - 1].second, px[i].first, px[i].second);
        markers += marker_svg(l->opt.marker, px[i].first, px[i].second, l->opt.marker_size, colour);
      }
      if (e - b == 1) occupied.push_back(px[b]);
      g += "\"/>\n";
    }
    g += "</g>\n";
    if (!markers.empty())
      g += fmt::format("<g class=\"markers\" data-series=\"{}\">{}</g>\n", si, markers);
    lines += g;
    if (!l->opt.label.empty())
      legend.push_back({LegendEntry::Line, l->opt.label, colour, dash,
                        l->opt.connect ? l->opt.width : 0.0, 1.0, l->opt.marker,
                        l->opt.marker_size});
  }

  void area(std::size_t si, const detail::AreaSeries* a) {
    const std::string colour = colour_of(a->opt.colour, a->style);
    const bool to_zero = a->y_low.empty();
    const double zero_px = L.y.map(0.0);
    auto low = [&](std::size_t i) { return to_zero ? 0.0 : a->y_low[i]; };
    auto ok = [&](std::size_t i) {
      return std::isfinite(a->x[i]) && std::isfinite(a->y_high[i]) && std::isfinite(low(i)) &&
             finite_px(L.x.map(a->x[i]), L.y.map(a->y_high[i])) && std::isfinite(L.y.map(low(i)));
    };
    std::string g = fmt::format(
        "<g class=\"area\" data-series=\"{}\" fill=\"{}\" fill-opacity=\"{}\" stroke=\"none\">\n",
        si, xml_escape(colour), fmt::format("{:.2f}", a->opt.opacity));
    for (const auto& [b, e] : runs(a->x.size(), ok)) {
      g += "<polygon points=\"";
      for (std::size_t i = b; i < e; ++i) {
        const double px = L.x.map(a->x[i]), py = L.y.map(a->y_high[i]);
        g += fmt::format("{}{},{}", i == b ? "" : " ", num(px), num(py));
        if (i > b) sample_segment(L.x.map(a->x[i - 1]), L.y.map(a->y_high[i - 1]), px, py);
      }
      if (to_zero) {
        g += fmt::format(" {},{} {},{}", num(L.x.map(a->x[e - 1])), num(zero_px),
                         num(L.x.map(a->x[b])), num(zero_px));
      } else {
        for (std::size_t i = e; i-- > b;)
          g += fmt::format(" {},{}", num(L.x.map(a->x[i])), num(L.y.map(a->y_low[i])));
      }
      g += "\"/>\n";
    }
    g += "</g>\n";
    fills += g;
    if (!a->opt.label.empty())
      legend.push_back(
          {LegendEntry::Fill, a->opt.label, colour, "", 0.0, a->opt.opacity, Marker::None, 0.0});
  }

  void bar(std::size_t si, const detail::BarSeries* bs) {
    const std::string colour = colour_of(bs->opt.colour, bs->style);
    const double group = 0.8;  // of each category slot; the rest separates categories
    const double bw = group / static_cast<double>(n_bar_series);
    std::string g =
        fmt::format("<g class=\"bar\" data-series=\"{}\" fill=\"{}\">\n", si, xml_escape(colour));
    for (std::size_t i = 0; i < bs->values.size(); ++i) {
      const double v = bs->values[i];
      if (!std::isfinite(v)) continue;
      const double xa = static_cast<double>(i) - 0.5 * group + static_cast<double>(bs->group) * bw;
      double x0 = L.x.map(xa), x1 = L.x.map(xa + bw);
      if (x1 < x0) std::swap(x0, x1);
      if (x1 - x0 > 4.0) x0 += 0.5, x1 -= 0.5;  // a hairline between neighbours
      const double y0 = L.y.map(std::max(v, 0.0)), y1 = L.y.map(std::min(v, 0.0));
      const double ytop = std::min(y0, y1), ybot = std::max(y0, y1);
      if (!finite_px(x0, ytop) || !finite_px(x1, ybot)) continue;
      g += fmt::format("<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\"/>\n", num(x0), num(ytop),
                       num(x1 - x0), num(ybot - ytop));
      bar_boxes.push_back({x0, ytop, x1, ybot});
    }
    g += "</g>\n";
    bars += g;
    if (!bs->opt.label.empty())
      legend.push_back({LegendEntry::Fill, bs->opt.label, colour, "", 0.0, 1.0, Marker::None, 0.0});
  }

  void reference(std::size_t si, const detail::RefLine* r) {
    if (!(r->vertical ? in_x(r->value) : in_y(r->value))) return;
    const double tw = text_width(r->opt.label, fs);
    std::string g = fmt::format(
        "<g class=\"refline\" data-series=\"{}\" stroke=\"{}\" stroke-width=\"{}\"{}>\n", si,
        xml_escape(r->opt.colour), num(r->opt.width), dash_attr(r->opt.dash));
    std::string label;
    if (r->vertical) {
      const double px = L.x.map(r->value);
      g += fmt::format("<line x1=\"{0}\" y1=\"{1}\" x2=\"{0}\" y2=\"{2}\"/>\n", num(px),
                       num(L.plot_top), num(L.plot_bottom));
      const bool left_side = px + 4.0 + tw > L.plot_right;
      const double lx = left_side ? px - 4.0 : px + 4.0;
      const TextAnchor anchor = left_side ? TextAnchor::End : TextAnchor::Start;
      const double ly = free_baseline(lx, L.plot_top + fs + 2.0, tw, fs, anchor);
      if (!r->opt.label.empty()) label_boxes.push_back(text_box(lx, ly, tw, fs, anchor));
      label = fmt::format("<text x=\"{}\" y=\"{}\" text-anchor=\"{}\"", num(lx), num(ly),
                          left_side ? "end" : "start");
    } else {
      const double py = L.y.map(r->value);
      g += fmt::format("<line x1=\"{0}\" y1=\"{1}\" x2=\"{2}\" y2=\"{1}\"/>\n", num(L.plot_left),
                       num(py), num(L.plot_right));
      const bool below = py - 4.0 - fs < L.plot_top;
      const double ly = free_baseline(L.plot_right - 4.0, below ? py + fs + 2.0 : py - 4.0, tw, fs,
                                      TextAnchor::End);
      if (!r->opt.label.empty())
        label_boxes.push_back(text_box(L.plot_right - 4.0, ly, tw, fs, TextAnchor::End));
      label = fmt::format("<text x=\"{}\" y=\"{}\" text-anchor=\"end\"", num(L.plot_right - 4.0),
                          num(ly));
    }
    g += "</g>\n";
    if (!r->opt.label.empty())
      ref_labels +=
          label + fmt::format(
                      " class=\"refline-label\" data-series=\"{}\" fill=\"{}\" font-size=\"{}\" "
                      "stroke=\"#ffffff\" stroke-width=\"3\" paint-order=\"stroke\">{}</text>\n",
                      si, xml_escape(r->opt.colour), num(fs), xml_escape(r->opt.label));
    refs += g;
  }

  // Text labels, after every reference label is placed.
  void place_texts() {
    for (const auto& [si, t] : pending_texts) {
      const double x = L.x.map(t->x) + t->opt.dx;
      const double y =
          free_baseline(x, L.y.map(t->y) + t->opt.dy, text_width(t->text, t->opt.font_size),
                        t->opt.font_size, t->opt.anchor);
      texts += fmt::format(
          "<text class=\"label\" data-series=\"{}\" x=\"{}\" y=\"{}\" text-anchor=\"{}\" "
          "fill=\"{}\" font-size=\"{}\" stroke=\"#ffffff\" stroke-width=\"3\" "
          "paint-order=\"stroke\">{}</text>\n",
          si, num(x), num(y), anchor_name(t->opt.anchor), xml_escape(t->opt.colour),
          num(t->opt.font_size), xml_escape(t->text));
    }
  }

  // The svg element with its title, description, clip path and background;
  // sets `id` from the plot's contents.
  std::string head(const std::string& plot_body) {
    // Ids that stay apart when several charts share one HTML page.
    id = fmt::format("rxsvg-{:016x}", fnv1a(plot_body + texts + o.title + o.x_label + o.y_label +
                                            fmt::format("{}x{}", num(o.width), num(o.height))));

    std::string out = svg_head(o.height);
    std::string accessible_title = o.title;
    if (accessible_title.empty())
      accessible_title = !o.y_label.empty() && !o.x_label.empty()
                             ? o.y_label + " versus " + o.x_label
                             : std::string("Chart");
    out += fmt::format("<title id=\"{}-title\">{}</title>\n", id, xml_escape(accessible_title));
    if (!o.description.empty())
      out += fmt::format("<desc id=\"{}-desc\">{}</desc>\n", id, xml_escape(o.description));
    out += fmt::format(
        "<defs><clipPath id=\"{}-clip\"><rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\"/>"
        "</clipPath></defs>\n",
        id, num(L.plot_left - kClipPad), num(L.plot_top - kClipPad),
        num(L.plot_right - L.plot_left + 2 * kClipPad),
        num(L.plot_bottom - L.plot_top + 2 * kClipPad));
    out += fmt::format("<rect class=\"background\" width=\"{}\" height=\"{}\" fill=\"#ffffff\"/>\n",
                       dim(o.width), dim(o.height));

    return out;
  }

  std::string svg_head(double height) const {
    return fmt::format(
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{0}\" height=\"{1}\" viewBox=\"0 0 {0} "
        "{1}\" role=\"img\" aria-labelledby=\"{2}-title{3}\" font-family=\"sans-serif\" "
        "font-size=\"{4}\">\n",
        dim(o.width), dim(height), id, o.description.empty() ? "" : fmt::format(" {}-desc", id),
        num(fs));
  }

  std::string grid() const {
    std::string out;
    // Gridlines, and a darker line at zero when zero lies inside the y range.
    out += fmt::format("<g class=\"grid\" stroke=\"{}\" stroke-width=\"1\">\n", kGridColour);
    if (o.grid_x && !categorical)
      for (double t : L.x_ticks)
        if (in_x(t))
          out += fmt::format("<line x1=\"{0}\" y1=\"{1}\" x2=\"{0}\" y2=\"{2}\"/>\n",
                             num(L.x.map(t)), num(L.plot_top), num(L.plot_bottom));
    if (o.grid_y)
      for (double t : L.y_ticks)
        if (in_y(t))
          out += fmt::format("<line x1=\"{0}\" y1=\"{1}\" x2=\"{2}\" y2=\"{1}\"/>\n",
                             num(L.plot_left), num(L.y.map(t)), num(L.plot_right));
    out += "</g>\n";
    if (std::min(L.y.d0, L.y.d1) < 0.0 && std::max(L.y.d0, L.y.d1) > 0.0)
      out += fmt::format(
          "<line class=\"zero\" x1=\"{0}\" y1=\"{1}\" x2=\"{2}\" y2=\"{1}\" stroke=\"{3}\" "
          "stroke-width=\"1\"/>\n",
          num(L.plot_left), num(L.y.map(0.0)), num(L.plot_right), kZeroColour);

    return out;
  }

  // Axes, ticks and tick labels; widest_y: the widest y tick label.
  std::string axes(double& widest_y) const {
    std::string out;
    // Axes: left and bottom lines, outward ticks, tick labels.
    out += fmt::format("<g class=\"axes\" stroke=\"{}\" stroke-width=\"1\" fill=\"none\">\n",
                       kAxisColour);
    out += fmt::format("<line x1=\"{0}\" y1=\"{1}\" x2=\"{0}\" y2=\"{2}\"/>\n", num(L.plot_left),
                       num(L.plot_top), num(L.plot_bottom));
    out += fmt::format("<line x1=\"{0}\" y1=\"{1}\" x2=\"{2}\" y2=\"{1}\"/>\n", num(L.plot_left),
                       num(L.plot_bottom), num(L.plot_right));
    for (double t : L.x_ticks)
      if (in_x(t))
        out += fmt::format("<line x1=\"{0}\" y1=\"{1}\" x2=\"{0}\" y2=\"{2}\"/>\n", num(L.x.map(t)),
                           num(L.plot_bottom), num(L.plot_bottom + kTickLength));
    for (double t : L.y_ticks)
      if (in_y(t))
        out += fmt::format("<line x1=\"{0}\" y1=\"{1}\" x2=\"{2}\" y2=\"{1}\"/>\n",
                           num(L.plot_left - kTickLength), num(L.y.map(t)), num(L.plot_left));
    out += "</g>\n";

    out += fmt::format("<g class=\"tick-labels\" fill=\"{}\" font-size=\"{}\">\n", kAxisColour,
                       num(fs));
    const double xl_y = L.plot_bottom + kTickLength + kTickGap;
    for (std::size_t i = 0; i < L.x_ticks.size(); ++i) {
      if (!in_x(L.x_ticks[i])) continue;
      const double px = L.x.map(L.x_ticks[i]);
      if (L.rotate_x_labels)
        out += fmt::format(
            "<text x=\"{0}\" y=\"{1}\" text-anchor=\"end\" dy=\"0.7em\" "
            "transform=\"rotate(-{2} {0} {1})\">{3}</text>\n",
            num(px), num(xl_y), dim(kSlant), xml_escape(L.x_tick_labels[i]));
      else
        out +=
            fmt::format("<text x=\"{}\" y=\"{}\" text-anchor=\"middle\" dy=\"0.8em\">{}</text>\n",
                        num(px), num(xl_y), xml_escape(L.x_tick_labels[i]));
    }
    for (std::size_t i = 0; i < L.y_ticks.size(); ++i) {
      if (!in_y(L.y_ticks[i])) continue;
      widest_y = std::max(widest_y, text_width(L.y_tick_labels[i], fs));
      out += fmt::format("<text x=\"{}\" y=\"{}\" text-anchor=\"end\" dy=\"0.35em\">{}</text>\n",
                         num(L.plot_left - kTickLength - kTickGap), num(L.y.map(L.y_ticks[i])),
                         xml_escape(L.y_tick_labels[i]));
    }
    out += "</g>\n";

    return out;
  }

  std::string axis_labels(double widest_y) const {
    std::string out;
    const double xl_y = L.plot_bottom + kTickLength + kTickGap;
    // Axis labels and title.
    const double label_size = fs + 1.0;
    if (!o.x_label.empty()) {
      double tick_block = fs;
      if (L.rotate_x_labels) {
        double w = 0.0;
        for (const auto& l : L.x_tick_labels) w = std::max(w, text_width(l, fs));
        tick_block = w * std::sin(kSlant * std::numbers::pi / 180.0) +
                     fs * std::cos(kSlant * std::numbers::pi / 180.0);
      }
      out += fmt::format(
          "<text class=\"x-label\" x=\"{}\" y=\"{}\" text-anchor=\"middle\" fill=\"#222222\" "
          "font-size=\"{}\">{}</text>\n",
          num(0.5 * (L.plot_left + L.plot_right)), num(xl_y + tick_block + 8.0 + 0.8 * label_size),
          num(label_size), xml_escape(o.x_label));
    }
    if (!o.y_label.empty()) {
      const double x = L.plot_left - kTickLength - kTickGap - widest_y - 8.0;
      const double y = 0.5 * (L.plot_top + L.plot_bottom);
      out += fmt::format(
          "<text class=\"y-label\" x=\"{0}\" y=\"{1}\" text-anchor=\"middle\" fill=\"#222222\" "
          "font-size=\"{2}\" transform=\"rotate(-90 {0} {1})\">{3}</text>\n",
          num(x), num(y), num(label_size), xml_escape(o.y_label));
    }
    if (!o.title.empty()) {
      const double w = text_width(o.title, kTitleSize);
      const double cx =
          std::clamp(0.5 * (L.plot_left + L.plot_right), std::min(0.5 * w + 4.0, 0.5 * o.width),
                     std::max(o.width - 0.5 * w - 4.0, 0.5 * o.width));
      out += fmt::format(
          "<text class=\"title\" x=\"{}\" y=\"{}\" text-anchor=\"middle\" fill=\"#111111\" "
          "font-size=\"{}\" font-weight=\"bold\">{}</text>\n",
          num(cx), num(std::max(kTitleSize + 3.0, L.plot_top - 14.0)), dim(kTitleSize),
          xml_escape(o.title));
    }

    return out;
  }

  // The legend's markup; a legend that goes under the chart makes `out`'s
  // head (its first head_size characters) taller.
  std::string legend_box(std::string& out, std::size_t head_size) const {
    std::string g;
    // Legend: a box in the plot corner chosen by the options, or (Auto) the
    // corner over the fewest drawn points.
    if (!legend.empty() && o.legend != LegendPosition::None) {
      const double row = 1.5 * fs;
      double text_w = 0.0;
      for (const auto& e : legend) text_w = std::max(text_w, text_width(e.label, fs));
      const double bw = 2 * kLegendPad + kLegendSwatch + 6.0 + text_w;
      const double bh = 2 * kLegendPad + row * static_cast<double>(legend.size()) - (row - fs);
      auto corner = [&](LegendPosition p) {
        const bool right_side = p == LegendPosition::TopRight || p == LegendPosition::BottomRight;
        const bool top_side = p == LegendPosition::TopRight || p == LegendPosition::TopLeft;
        const double x0 = right_side ? plot.x1 - kLegendInset - bw : plot.x0 + kLegendInset;
        const double y0 = top_side ? plot.y0 + kLegendInset : plot.y1 - kLegendInset - bh;
        return Box{x0, y0, x0 + bw, y0 + bh};
      };
      LegendPosition where = o.legend;
      bool below = false;  // under the chart, which grows to hold it
      if (where == LegendPosition::Auto) {
        std::size_t best = std::numeric_limits<std::size_t>::max();
        for (auto p : {LegendPosition::TopRight, LegendPosition::TopLeft,
                       LegendPosition::BottomRight, LegendPosition::BottomLeft}) {
          const Box b = corner(p);
          std::size_t hits = 0;
          for (const auto& [x, y] : occupied) hits += b.contains(x, y);
          for (const auto& bar : bar_boxes)
            hits += 20 * (bar.x0 < b.x1 && bar.x1 > b.x0 && bar.y0 < b.y1 && bar.y1 > b.y0);
          if (hits < best) best = hits, where = p;
        }
        // A legend never hides data: when every corner holds some, it goes
        // under the chart.
        below = best > 0;
      }
      Box b = corner(where);
      if (below) {
        b = Box{plot.x0, o.height, plot.x0 + bw, o.height + bh};
        out.replace(0, head_size, svg_head(o.height + bh + kLegendInset));
      }
      g += fmt::format(
          "<g class=\"legend\" font-size=\"{}\">\n<rect x=\"{}\" y=\"{}\" width=\"{}\" "
          "height=\"{}\" "
          "rx=\"3\" fill=\"#ffffff\" fill-opacity=\"0.9\" stroke=\"#bbbbbb\" "
          "stroke-width=\"1\"/>\n",
          num(fs), num(b.x0), num(b.y0), num(bw), num(bh));
      for (std::size_t i = 0; i < legend.size(); ++i) {
        const auto& e = legend[i];
        const double cy = b.y0 + kLegendPad + 0.5 * fs + row * static_cast<double>(i);
        const double sx = b.x0 + kLegendPad;
        if (e.kind == LegendEntry::Line) {
          if (e.width > 0)  // a scatter series shows its marker alone
            g += fmt::format(
                "<line x1=\"{0}\" y1=\"{1}\" x2=\"{2}\" y2=\"{1}\" stroke=\"{3}\" "
                "stroke-width=\"{4}\"{5}/>\n",
                num(sx), num(cy), num(sx + kLegendSwatch), xml_escape(e.colour), num(e.width),
                dash_attr(e.dash));
          g += marker_svg(e.marker, sx + 0.5 * kLegendSwatch, cy, e.marker_size, e.colour);
        } else {
          g += fmt::format(
              "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"{}\" fill-opacity=\"{}\" "
              "stroke=\"{}\" stroke-width=\"1\"/>\n",
              num(sx), num(cy - 0.4 * fs), num(kLegendSwatch), num(0.8 * fs), xml_escape(e.colour),
              fmt::format("{:.2f}", e.opacity), xml_escape(e.colour));
        }
        g += fmt::format("<text x=\"{}\" y=\"{}\" dy=\"0.35em\" fill=\"#222222\">{}</text>\n",
                         num(sx + kLegendSwatch + 6.0), num(cy), xml_escape(e.label));
      }
      g += "</g>\n";
    }
    return g;
  }

  const ChartOptions& o;
  const ChartLayout& L;
  const double fs;
  const Box plot;
  const std::size_t n_bar_series;
  const bool categorical;
  std::string fills, bars, refs, lines, ref_labels, texts;
  std::vector<LegendEntry> legend;
  std::vector<std::pair<double, double>> occupied;
  std::vector<Box> bar_boxes;
  std::vector<Box> label_boxes;  // reference-line labels placed so far
  std::vector<PendingText> pending_texts;
  std::string id;  // of the svg element, from its contents
};

}  // namespace

std::string Chart::render() const {
  return "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n" + render_svg() + "\n";
}

std::string Chart::render_inline() const { return render_svg(); }

std::string Chart::render_svg() const {
  const ChartLayout L = layout();
  Drawing d(options_, L, bar_series_, !categories_.empty());
  for (std::size_t si = 0; si < series_.size(); ++si) d.add(si, series_[si]);
  return d.svg();
}

}  // namespace rxtrain::svg
