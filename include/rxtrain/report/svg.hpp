// A small SVG plotting module for report figures: one chart = one plot area
// with an x and a y axis, drawn from plain data (it knows nothing about
// reactors). Output is a standalone, well-formed SVG 1.1 document (or an
// inline <svg> element for HTML), deterministic to the byte: every coordinate
// is written with two decimals, and a non-finite data value is skipped (a NaN
// or inf never reaches the SVG).
//
// Lives in rxtrain::svg because its short names (Chart, Marker, ...) would
// crowd namespace rxtrain. Uses only the standard library and {fmt}.
//
// Example:
//   svg::ChartOptions o;
//   o.title = "Bed temperature";
//   o.x_label = "Catalyst mass (kg)";
//   o.y_label = "Temperature (°C)";
//   svg::Chart chart(o);
//   chart.add_line(w, T, {.label = "bed 1"});
//   chart.add_hline(480.0, {.label = "T_max"});
//   std::string doc = chart.render();
//
// Misuse by the calling code (mismatched lengths, a zero-size plot area) is a
// programmer error and throws std::invalid_argument naming the field.
#pragma once

#include <array>
#include <cstddef>
#include <optional>
#include <span>
#include <string>
#include <string_view>
#include <variant>
#include <vector>

namespace rxtrain::svg {

// Escapes & < > " ' for use in XML text and attribute values. Characters XML
// 1.0 forbids (C0 controls other than tab, LF, CR) and invalid UTF-8 bytes
// become U+FFFD, so any input yields well-formed XML.
std::string xml_escape(std::string_view text);

// ---------------------------------------------------------------- scales

// A closed interval of data values, lo <= hi.
struct Interval {
  double lo = 0.0;
  double hi = 1.0;
};

// Affine map from a data domain [d0, d1] to a pixel range [r0, r1]; either
// may run backwards (the y axis does: larger values are higher up, smaller
// pixel y). A zero-width domain maps everything to the middle of the range;
// a zero-width range inverts to d0.
struct LinearScale {
  double d0 = 0.0, d1 = 1.0;  // domain (data units)
  double r0 = 0.0, r1 = 1.0;  // range (px)

  double map(double value) const;
  double inverse(double pixel) const;
};

// Tick values at a "nice" step (1, 2, 2.5 or 5 times a power of ten), in
// ascending order, that cover [lo, hi]: the first tick is <= min(lo, hi), the
// last >= max(lo, hi), with at most max_count ticks (the smallest nice step
// that fits, so as many ticks as allowed). lo > hi is read as [hi, lo]. A
// single value (lo == hi, or a span below 1e-12 of the magnitude, too narrow
// to tick apart in doubles) is widened by 10 % of its magnitude each way
// (by 1 for zero). Throws std::invalid_argument for a non-finite bound or
// max_count < 3 (a range that straddles zero always needs three ticks).
std::vector<double> nice_ticks(double lo, double hi, int max_count = 7);

// [first tick, last tick] of nice_ticks(lo, hi, max_count): the range
// widened out to tick boundaries. nice_ticks of the result gives the same
// ticks again.
Interval nice_domain(double lo, double hi, int max_count = 7);

// One tick label in fixed notation with as many decimals as `step` needs:
// floating noise is rounded away (0.30000000000000004 with step 0.1 -> "0.3")
// and a value that rounds to zero prints "0", never "-0". Non-finite -> "".
std::string format_tick(double value, double step);

// Labels for a whole axis. Fixed notation with the same decimals on every
// tick (as format_tick, the step being the smallest gap between ticks); when
// the largest magnitude is >= 1e6 or below 1e-3, scientific notation, each
// tick normalised on its own and shown to the step's resolution without
// trailing zeros ("2e20", "1e21"; "1e-12", "2.5e-12"). Zero is "0".
std::vector<std::string> tick_labels(std::span<const double> ticks);

// ---------------------------------------------------------------- palette

// The Okabe-Ito qualitative palette (Okabe & Ito, Color Universal Design
// (2008)), in its published order: black, orange, sky blue, bluish green,
// yellow, blue, vermillion, reddish purple. Distinguishable under the common
// colour-vision deficiencies.
inline constexpr std::array<std::string_view, 8> kOkabeIto = {
    "#000000", "#E69F00", "#56B4E9", "#009E73", "#F0E442", "#0072B2", "#D55E00", "#CC79A7"};

// Colour for the series with this index (cycles after 8). Reordered from the
// published order so that neighbouring series differ most in grey when
// printed (blue, orange first; yellow, faint on white, last; black, kept for
// axes and text, late).
std::string_view series_colour(std::size_t index);

// SVG stroke-dasharray for the series with this index (cycles after 8); ""
// (solid) for index 0. Together with the colour it keeps series apart in a
// grey print, where some Okabe-Ito colours have the same lightness.
std::string_view series_dash(std::size_t index);

// ---------------------------------------------------------------- chart

struct Margins {
  double top = 40.0;     // px; room for the title
  double right = 24.0;   // px
  double bottom = 56.0;  // px; tick labels and the x-axis label
  double left = 72.0;    // px; grown automatically if y tick labels need it
};

enum class LegendPosition { Auto, TopRight, TopLeft, BottomRight, BottomLeft, None };

struct ChartOptions {
  double width = 640.0;       // px, whole figure
  double height = 400.0;      // px, whole figure
  Margins margins{};          // outside the plot area; left/bottom grow to fit labels
  std::string title{};        // drawn on top; also the accessible <title>
  std::string x_label{};      // with unit, e.g. "Catalyst mass (kg)"
  std::string y_label{};      // with unit, e.g. "Temperature (°C)"
  std::string description{};  // optional accessible <desc>
  bool grid_x = true;         // vertical gridlines at x ticks
  bool grid_y = true;         // horizontal gridlines at y ticks
  // Auto puts the legend in the plot corner that covers the fewest data points.
  LegendPosition legend = LegendPosition::Auto;
  // Upper bounds: fewer ticks are used when labels would otherwise collide.
  int max_x_ticks = 8;
  int max_y_ticks = 7;
  // Fixed axis ranges; when unset, the nice_domain of all finite data (and of
  // zero, for bars and areas down to zero). Data outside is clipped.
  std::optional<Interval> x_domain{};
  std::optional<Interval> y_domain{};
  double font_size = 12.0;  // px, tick and legend text; >= 11 for legibility
};

enum class Marker { None, Circle, Square, Triangle, Diamond };

struct LineOptions {
  std::string label{};                  // legend text; empty: not in the legend
  std::optional<std::string> colour{};  // any SVG colour; unset: series_colour(index)
  std::optional<std::string> dash{};    // stroke-dasharray, "" solid; unset: series_dash(index)
  double width = 2.0;                   // px
  Marker marker = Marker::None;         // drawn at every finite point
  double marker_size = 3.5;             // px, radius of the marker
  bool connect = true;                  // false: the markers alone (a scatter plot)
};

struct AreaOptions {
  std::string label{};                  // legend text; empty: not in the legend
  std::optional<std::string> colour{};  // unset: series_colour(index)
  double opacity = 0.25;                // fill opacity, 0..1; lets lines show through
};

struct RefLineOptions {
  std::string label{};  // written beside the line, e.g. "T_max"
  std::string colour = "#444444";
  std::string dash = "5 4";  // stroke-dasharray, "" solid
  double width = 1.25;       // px
};

struct BarOptions {
  std::string label{};                  // legend text; empty: not in the legend
  std::optional<std::string> colour{};  // unset: series_colour(index)
};

enum class TextAnchor { Start, Middle, End };

struct TextOptions {
  double dx = 5.0;   // px offset from the data point, right positive
  double dy = -5.0;  // px offset, down positive (SVG convention)
  TextAnchor anchor = TextAnchor::Start;
  std::string colour = "#222222";
  double font_size = 11.0;  // px
};

// Geometry of a chart as render() draws it; lets tests and callers map data
// to pixels and back.
struct ChartLayout {
  double plot_left = 0, plot_top = 0, plot_right = 0, plot_bottom = 0;  // px
  LinearScale x;  // data x -> px x (category index when the chart has bars)
  LinearScale y;  // data y -> px y (downwards)
  std::vector<double> x_ticks, y_ticks;
  std::vector<std::string> x_tick_labels, y_tick_labels;
  bool rotate_x_labels = false;  // long category names are slanted
};

namespace detail {
struct LineSeries {
  std::vector<double> x, y;
  LineOptions opt;
  std::size_t style = 0;
};
struct AreaSeries {  // y_low empty: down to y = 0
  std::vector<double> x, y_low, y_high;
  AreaOptions opt;
  std::size_t style = 0;
};
struct BarSeries {
  std::vector<double> values;
  BarOptions opt;
  std::size_t style = 0;
  std::size_t group = 0;  // position among the bar series
};
struct RefLine {
  bool vertical = true;
  double value = 0;
  RefLineOptions opt;
};
struct TextLabel {
  double x = 0, y = 0;
  std::string text;
  TextOptions opt;
};
using Series = std::variant<LineSeries, AreaSeries, BarSeries, RefLine, TextLabel>;
}  // namespace detail

// One plot area with axes. Add series, then render(); rendering does not
// change the chart, so it can be rendered again after adding more. Series
// get palette colours and dash patterns in the order they are added (lines,
// areas, bands and bars share one count). In the output each series is a
// <g> whose class is line, markers, area, bar or refline and whose
// data-series attribute is its position in the order of the add_ calls.
class Chart {
 public:
  explicit Chart(ChartOptions options = {});

  // A polyline through (x[i], y[i]). A point with a non-finite coordinate is
  // skipped and breaks the line (no segment is drawn across the gap).
  void add_line(std::span<const double> x, std::span<const double> y, LineOptions options = {});

  // Filled polygon between the curve and y = 0.
  void add_area(std::span<const double> x, std::span<const double> y, AreaOptions options = {});

  // Filled polygon between two curves sampled at the same x.
  void add_band(std::span<const double> x, std::span<const double> y_low,
                std::span<const double> y_high, AreaOptions options = {});

  // Vertical line at data x / horizontal line at data y, with its label.
  // A non-finite value draws nothing.
  void add_vline(double x, RefLineOptions options = {});
  void add_hline(double y, RefLineOptions options = {});

  // Bars from zero, one per category. The first call fixes the categories
  // and turns the x axis into a category axis (category i sits at x = i);
  // later bar series must use the same categories and are grouped side by
  // side. A non-finite value draws no bar.
  void add_bars(std::vector<std::string> categories, std::span<const double> values,
                BarOptions options = {});

  // Text at a data point (offset by options.dx, dy px).
  void add_text(double x, double y, std::string text, TextOptions options = {});

  const ChartOptions& options() const { return options_; }
  const std::vector<std::string>& categories() const { return categories_; }

  // The mapping and ticks render() uses for the current data.
  ChartLayout layout() const;

  LinearScale x_scale() const { return layout().x; }
  LinearScale y_scale() const { return layout().y; }

  // Standalone SVG document with XML declaration.
  std::string render() const;
  // The <svg> element alone, for embedding in HTML.
  std::string render_inline() const;

 private:
  std::string render_svg() const;
  // The height below the plot that slanted category names need; shortens
  // `categories` to fit and sets `label_left` (px the first name needs
  // left of the plot).
  double slanted_tick_block(const ChartLayout& L, std::vector<std::string>& categories,
                            double label_block, double& label_left) const;

  ChartOptions options_;
  std::vector<detail::Series> series_;
  std::vector<std::string> categories_;
  std::size_t next_style_ = 0;  // palette index of the next coloured series
  std::size_t bar_series_ = 0;
};

}  // namespace rxtrain::svg
