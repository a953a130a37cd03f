// The SVG chart module: nice ticks checked against their definition (steps
// 1, 2, 2.5, 5 x 10^k covering the range, as many ticks as allowed), scales
// against exact arithmetic, the output parsed back with an independent XML
// parser (tinyxml2), and drawn geometry mapped back to the data.
#include "rxtrain/report/svg.hpp"

#include <tinyxml2.h>

#include <algorithm>
#include <catch2/catch.hpp>
#include <cctype>
#include <cmath>
#include <functional>
#include <limits>
#include <set>
#include <sstream>
#include <string>
#include <vector>

using namespace rxtrain::svg;

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
constexpr double kInf = std::numeric_limits<double>::infinity();

// --- nice_ticks checked against its definition --------------------------

// Mantissa m of step = m * 10^k, m in [1, 10).
double mantissa(double step) { return step / std::pow(10.0, std::floor(std::log10(step))); }

bool is_nice(double step, double rel_tol = 1e-9) {
  const double m = mantissa(step);
  for (double n : {1.0, 2.0, 2.5, 5.0, 10.0})
    if (std::abs(m - n) <= rel_tol * n) return true;
  return false;
}

// The nice step just below `step` (…, 1, 2, 2.5, 5, 10, …).
double smaller_nice(double step) {
  const double p = std::pow(10.0, std::floor(std::log10(step) + 1e-12));
  const double m = step / p;
  if (m > 4.999) return 2.5 * p;
  if (m > 2.499) return 2.0 * p;
  if (m > 1.999) return 1.0 * p;
  return 0.5 * p;
}

// Ticks needed to cover [lo, hi] with `step`, with exact rational reasoning
// done in long double so it does not share the code under test's rounding.
long tick_count(double lo, double hi, double step) {
  const long double a = static_cast<long double>(lo) / step;
  const long double b = static_cast<long double>(hi) / step;
  const long double eps = 1e-9L;
  return static_cast<long>(std::ceil(b - eps) - std::floor(a + eps)) + 1;
}

void check_ticks(double lo, double hi, int max_count) {
  INFO("range [" << lo << ", " << hi << "], max_count " << max_count);
  const auto t = nice_ticks(lo, hi, max_count);
  const double a = std::min(lo, hi), b = std::max(lo, hi);
  REQUIRE(t.size() >= 2);
  CHECK(static_cast<int>(t.size()) <= max_count);
  // Doubles cannot place ticks on a 1e9 axis closer than a few ulps to the
  // ideal value, so every comparison allows that much.
  const double noise =
      8.0 * std::numeric_limits<double>::epsilon() * std::max(std::abs(a), std::abs(b));
  const double step = (t.back() - t.front()) / static_cast<double>(t.size() - 1);
  const double tol = 1e-9 * step + noise;
  CHECK(is_nice(step, tol / step));
  for (std::size_t i = 1; i < t.size(); ++i) CHECK(std::abs(t[i] - t[i - 1] - step) <= 2 * tol);
  for (double v : t) CHECK(std::abs(v - std::round(v / step) * step) <= tol);  // on the step grid
  CHECK(t.front() <= a + tol);                                                 // covers the data
  CHECK(t.back() >= b - tol);
  CHECK(t.front() > a - step);  // no tick wasted beyond the data
  CHECK(t.back() < b + step);
  // As many ticks as allowed: the next smaller nice step would need more.
  if (b > a) CHECK(tick_count(a, b, smaller_nice(step)) > max_count);
}

// --- SVG parsing helpers (tinyxml2) ---------------------------------------

struct Doc {
  tinyxml2::XMLDocument xml;
  explicit Doc(const std::string& text) {
    const auto rc = xml.Parse(text.c_str(), text.size());
    INFO(xml.ErrorStr());
    REQUIRE(rc == tinyxml2::XML_SUCCESS);
  }
  const tinyxml2::XMLElement* root() const { return xml.RootElement(); }
};

void walk(const tinyxml2::XMLElement* e,
          const std::function<void(const tinyxml2::XMLElement*)>& f) {
  for (; e; e = e->NextSiblingElement()) {
    f(e);
    walk(e->FirstChildElement(), f);
  }
}

std::vector<const tinyxml2::XMLElement*> find_all(const Doc& d, const std::string& name,
                                                  const std::string& cls = "") {
  std::vector<const tinyxml2::XMLElement*> out;
  walk(d.root(), [&](const tinyxml2::XMLElement* e) {
    if (name != e->Name()) return;
    if (!cls.empty() && (!e->Attribute("class") || cls != e->Attribute("class"))) return;
    out.push_back(e);
  });
  return out;
}

// Children named `name` anywhere under groups of class `cls` with data-series = `series`.
std::vector<const tinyxml2::XMLElement*> in_series(const Doc& d, const std::string& cls, int series,
                                                   const std::string& name) {
  std::vector<const tinyxml2::XMLElement*> out;
  for (const auto* g : find_all(d, "g", cls)) {
    if (g->IntAttribute("data-series", -1) != series) continue;
    walk(g->FirstChildElement(), [&](const tinyxml2::XMLElement* e) {
      if (name == e->Name()) out.push_back(e);
    });
  }
  return out;
}

struct Px {
  double x, y;
};

std::vector<Px> parse_points(const char* attr) {
  std::vector<Px> out;
  std::istringstream in(attr ? attr : "");
  std::string pair;
  while (in >> pair) {
    const auto comma = pair.find(',');
    REQUIRE(comma != std::string::npos);
    out.push_back({std::stod(pair.substr(0, comma)), std::stod(pair.substr(comma + 1))});
  }
  return out;
}

double attr(const tinyxml2::XMLElement* e, const char* name) {
  const char* v = e->Attribute(name);
  REQUIRE(v != nullptr);
  return std::stod(v);
}

std::string text_of(const tinyxml2::XMLElement* e) { return e->GetText() ? e->GetText() : ""; }

std::string lower(std::string s) {
  for (auto& c : s) c = static_cast<char>(std::tolower(static_cast<unsigned char>(c)));
  return s;
}

// One data unit in px along a scale, so "within 1 px" can be said in data units.
double data_per_px(const LinearScale& s) { return std::abs((s.d1 - s.d0) / (s.r1 - s.r0)); }

}  // namespace

// ---------------------------------------------------------------- escaping

TEST_CASE("xml_escape replaces the five XML special characters", "[svg]") {
  // The five predefined entities of XML 1.0 (W3C XML 1.0, section 4.6).
  CHECK(xml_escape("<&>\"'") == "&lt;&amp;&gt;&quot;&apos;");
  CHECK(xml_escape("a < b && c > d") == "a &lt; b &amp;&amp; c &gt; d");
  CHECK(xml_escape("Temperature (°C)") == "Temperature (°C)");  // UTF-8 passes through
  CHECK(xml_escape("") == "");
}

TEST_CASE("xml_escape replaces characters XML 1.0 forbids with U+FFFD", "[svg]") {
  // XML 1.0 section 2.2 "Char" excludes C0 controls except tab, LF, CR.
  CHECK(xml_escape(std::string("a\x01z", 3)) == "a\xEF\xBF\xBDz");
  CHECK(xml_escape("tab\tnl\n") == "tab\tnl\n");
  // A lone continuation byte and a truncated sequence are not UTF-8 (RFC 3629).
  CHECK(xml_escape("x\x80y") == "x\xEF\xBF\xBDy");
  CHECK(xml_escape("x\xE2\x82") == "x\xEF\xBF\xBD\xEF\xBF\xBD");
  CHECK(xml_escape("\xC0\xAF") == "\xEF\xBF\xBD\xEF\xBF\xBD");  // overlong "/" (RFC 3629 sec. 3)
}

// ---------------------------------------------------------------- ticks

TEST_CASE("nice_ticks on common ranges gives the expected ticks", "[svg]") {
  // Expected values worked by hand from the definition in svg.hpp.
  SECTION("0 to 1") {
    const auto t = nice_ticks(0.0, 1.0, 7);
    REQUIRE(t.size() == 6);
    for (std::size_t i = 0; i < t.size(); ++i) CHECK(t[i] == Approx(0.2 * i).margin(1e-15));
    CHECK(tick_labels(t) == std::vector<std::string>{"0.0", "0.2", "0.4", "0.6", "0.8", "1.0"});
  }
  SECTION("373 to 753 (temperatures in K)") {
    CHECK(nice_ticks(373.0, 753.0, 7) == std::vector<double>{300, 400, 500, 600, 700, 800});
    const auto t = nice_ticks(373.0, 753.0, 10);
    CHECK(t == std::vector<double>{350, 400, 450, 500, 550, 600, 650, 700, 750, 800});
  }
  SECTION("-5.3 to 12.1") {
    const auto t = nice_ticks(-5.3, 12.1, 7);
    CHECK(t == std::vector<double>{-10, -5, 0, 5, 10, 15});
    CHECK(tick_labels(t) == std::vector<std::string>{"-10", "-5", "0", "5", "10", "15"});
  }
  SECTION("2.5 steps are used") {
    CHECK(nice_ticks(0.0, 10.0, 5) == std::vector<double>{0, 2.5, 5, 7.5, 10});
    CHECK(tick_labels(nice_ticks(0.0, 10.0, 5)) ==
          std::vector<std::string>{"0.0", "2.5", "5.0", "7.5", "10.0"});
  }
  SECTION("tiny") {
    const auto t = nice_ticks(1e-12, 3e-12, 7);
    REQUIRE(t.size() == 5);
    for (std::size_t i = 0; i < t.size(); ++i) CHECK(t[i] == Approx(1e-12 + 0.5e-12 * i));
    CHECK(tick_labels(t) ==
          std::vector<std::string>{"1e-12", "1.5e-12", "2e-12", "2.5e-12", "3e-12"});
  }
  SECTION("huge") {
    const auto t = nice_ticks(2.3e20, 8.9e20, 7);
    REQUIRE(t.size() == 5);
    for (std::size_t i = 0; i < t.size(); ++i) CHECK(t[i] == Approx(2e20 * (i + 1)));
    CHECK(tick_labels(t) == std::vector<std::string>{"2e20", "4e20", "6e20", "8e20", "1e21"});
  }
}

TEST_CASE("nice_ticks meets its definition over many ranges", "[svg]") {
  const std::vector<std::pair<double, double>> ranges = {
      {0, 1},       {373, 753},     {-5.3, 12.1}, {1e-12, 3e-12}, {2.3e20, 8.9e20}, {-1, 1},
      {0.1, 0.9},   {1, 4},         {-7, -2},     {101325, 2e6},  {0.001, 0.0013},  {99, 101},
      {-0.5, 1e-3}, {1e9, 1e9 + 1}, {0, 1e-300},  {-3e5, 7e5}};
  for (int n : {3, 5, 7, 10})
    for (const auto& [lo, hi] : ranges) check_ticks(lo, hi, n);
}

TEST_CASE("nice_ticks widens a single value and accepts a reversed range", "[svg]") {
  SECTION("lo == hi") {
    for (double v : {0.0, 5.0, -273.15, 1e-9, 4e15}) {
      INFO(v);
      const auto t = nice_ticks(v, v, 7);
      REQUIRE(t.size() >= 3);
      CHECK(t.front() < v);
      CHECK(t.back() > v);
      CHECK(is_nice(t[1] - t[0]));
    }
    CHECK(nice_ticks(0.0, 0.0, 5) == std::vector<double>{-1, -0.5, 0, 0.5, 1});
    // A span too narrow for doubles to put ticks in is treated the same way.
    CHECK(nice_ticks(1.0, 1.0 + 1e-14, 7) == nice_ticks(1.0, 1.0, 7));
    CHECK(nice_domain(5.0, 5.0, 7).lo == Approx(4.4));  // 5 +- 10 %, step 0.2
    CHECK(nice_domain(5.0, 5.0, 7).hi == Approx(5.6));
  }
  SECTION("reversed") {
    CHECK(nice_ticks(12.1, -5.3, 7) == nice_ticks(-5.3, 12.1, 7));
    CHECK(nice_ticks(753.0, 373.0, 10) == nice_ticks(373.0, 753.0, 10));
  }
  SECTION("bad input") {
    CHECK_THROWS_AS(nice_ticks(kNaN, 1.0, 7), std::invalid_argument);
    CHECK_THROWS_AS(nice_ticks(0.0, kInf, 7), std::invalid_argument);
    CHECK_THROWS_WITH(nice_ticks(0.0, 1.0, 2), Catch::Contains("max_count must be at least 3"));
    CHECK_THROWS_AS(nice_ticks(-1.7e308, 1.7e308, 7), std::invalid_argument);
  }
}

TEST_CASE("nice_domain ends on ticks and is stable", "[svg]") {
  for (const auto& [lo, hi] : std::vector<std::pair<double, double>>{
           {373, 753}, {-5.3, 12.1}, {0.013, 0.0871}, {2.3e20, 8.9e20}}) {
    const Interval d = nice_domain(lo, hi, 7);
    CHECK(d.lo <= lo);
    CHECK(d.hi >= hi);
    const auto again = nice_ticks(d.lo, d.hi, 7);
    CHECK(again.front() == d.lo);
    CHECK(again.back() == d.hi);
    CHECK(again == nice_ticks(lo, hi, 7));
  }
}

TEST_CASE("tick labels carry no floating noise and no negative zero", "[svg]") {
  CHECK(format_tick(0.1 + 0.2, 0.1) == "0.3");  // 0.30000000000000004 in binary
  CHECK(format_tick(0.30000000000000004, 0.1) == "0.3");
  CHECK(format_tick(-1e-17, 0.1) == "0.0");
  CHECK(format_tick(-0.0, 1.0) == "0");
  CHECK(format_tick(2.5, 0.25) == "2.50");
  CHECK(format_tick(kNaN, 0.1).empty());
  CHECK(format_tick(kInf, 0.1).empty());
  const auto labels = tick_labels(nice_ticks(-0.3, 0.3, 7));
  CHECK(labels == std::vector<std::string>{"-0.3", "-0.2", "-0.1", "0.0", "0.1", "0.2", "0.3"});
  // Ticks accumulated by repeated addition carry noise; the labels do not.
  std::vector<double> summed{0.0};
  for (int i = 0; i < 10; ++i) summed.push_back(summed.back() + 0.1);
  const auto l2 = tick_labels(summed);
  CHECK(l2[3] == "0.3");
  CHECK(l2[10] == "1.0");
  for (const auto& l : l2) CHECK(l.size() <= 3);
}

// ---------------------------------------------------------------- scale

TEST_CASE("LinearScale maps the domain ends to the range ends and inverts", "[svg]") {
  const LinearScale y{300.0, 800.0, 360.0, 40.0};  // y axis: pixels run downwards
  CHECK(y.map(300.0) == Approx(360.0));
  CHECK(y.map(800.0) == Approx(40.0));
  CHECK(y.map(550.0) == Approx(200.0));  // midpoint to midpoint (affine map)
  for (double v : {300.0, 373.15, 512.5, 799.9, 1000.0, -50.0})
    CHECK(y.inverse(y.map(v)) == Approx(v).epsilon(1e-12));
  const LinearScale x{-1e-12, 3e-12, 72.0, 616.0};
  for (double v : {-1e-12, 0.0, 1.7e-12, 3e-12})
    CHECK(x.inverse(x.map(v)) == Approx(v).margin(1e-27));
  for (double p : {72.0, 100.5, 616.0}) CHECK(x.map(x.inverse(p)) == Approx(p));
  const LinearScale flat{5.0, 5.0, 0.0, 100.0};  // documented degenerate cases
  CHECK(flat.map(5.0) == 50.0);
  CHECK(LinearScale{0.0, 1.0, 7.0, 7.0}.inverse(7.0) == 0.0);
}

// ---------------------------------------------------------------- palette

TEST_CASE("series colours are the Okabe-Ito set and stay apart in grey", "[svg]") {
  // Okabe & Ito, Color Universal Design (2008), RGB values of the 8 colours.
  const std::vector<std::string> published = {"#000000", "#E69F00", "#56B4E9", "#009E73",
                                              "#F0E442", "#0072B2", "#D55E00", "#CC79A7"};
  CHECK(std::vector<std::string>(kOkabeIto.begin(), kOkabeIto.end()) == published);
  std::set<std::string> colours, dashes;
  for (std::size_t i = 0; i < 8; ++i) {
    colours.insert(std::string(series_colour(i)));
    dashes.insert(std::string(series_dash(i)));
  }
  CHECK(colours == std::set<std::string>(published.begin(), published.end()));
  CHECK(dashes.size() == 8);  // every series of 8 has its own dash pattern
  CHECK(series_dash(0).empty());
  CHECK(series_colour(8) == series_colour(0));
  // Grey print: relative luminance (ITU-R BT.709 weights on sRGB values, a
  // simple approximation) of the first two series should differ clearly;
  // the 0.2 threshold is common practice, no source.
  auto luma = [](std::string_view hex) {
    auto c = [&](int i) {
      return std::stoi(std::string(hex.substr(1 + 2 * i, 2)), nullptr, 16) / 255.0;
    };
    return 0.2126 * c(0) + 0.7152 * c(1) + 0.0722 * c(2);
  };
  CHECK(std::abs(luma(series_colour(0)) - luma(series_colour(1))) > 0.2);
  // Yellow, faint on white, comes last.
  CHECK(series_colour(7) == "#F0E442");
}

// ---------------------------------------------------------------- chart

TEST_CASE("a chart renders a well-formed, accessible SVG document", "[svg]") {
  ChartOptions o;
  o.title = "Bed temperature (invented data)";
  o.x_label = "Catalyst mass (kg)";
  o.y_label = "Temperature (°C)";
  o.description = "Two invented profiles.";
  o.legend = LegendPosition::TopLeft;  // in the plot: the figure keeps its size
  Chart c(o);
  const std::vector<double> x{0, 100, 200, 300, 400};
  c.add_line(x, std::vector<double>{380, 455, 492, 505, 509},
             {.label = "bed 1", .marker = Marker::Circle});
  c.add_line(x, std::vector<double>{380, 420, 446, 461, 470},
             {.label = "bed 2", .marker = Marker::Square});
  c.add_area(x, std::vector<double>{10, 20, 30, 20, 10}, {.label = "invented band"});
  c.add_band(x, std::vector<double>{370, 440, 480, 495, 500},
             std::vector<double>{390, 470, 505, 515, 518});
  c.add_vline(250.0, {.label = "T_max"});
  c.add_hline(500.0, {.label = "limit"});
  c.add_text(200.0, 492.0, "peak");
  const std::string doc = c.render();
  CHECK(doc.rfind("<?xml version=\"1.0\"", 0) == 0);
  Doc d(doc);
  const auto* svg = d.root();
  CHECK(std::string(svg->Name()) == "svg");
  CHECK(std::string(svg->Attribute("xmlns")) == "http://www.w3.org/2000/svg");
  CHECK(std::string(svg->Attribute("role")) == "img");
  CHECK(std::string(svg->Attribute("viewBox")) == "0 0 640 400");
  CHECK(std::string(svg->Attribute("width")) == "640");
  CHECK(std::string(svg->Attribute("height")) == "400");
  // The accessible name comes first (SVG 2, section 5.9) and is referenced.
  REQUIRE(svg->FirstChildElement() != nullptr);
  CHECK(std::string(svg->FirstChildElement()->Name()) == "title");
  CHECK(text_of(svg->FirstChildElement()) == o.title);
  CHECK(std::string(svg->Attribute("aria-labelledby"))
            .find(svg->FirstChildElement()->Attribute("id")) == 0);
  CHECK(text_of(svg->FirstChildElement("desc")) == o.description);
  CHECK(in_series(d, "refline", 4, "line").size() == 1);
  CHECK(text_of(find_all(d, "text", "refline-label").at(0)) == "T_max");
  CHECK(text_of(find_all(d, "text", "label").at(0)) == "peak");
  CHECK(find_all(d, "g", "legend").size() == 1);

  SECTION("inline form has no XML declaration and is the same element") {
    const std::string in = c.render_inline();
    CHECK(in.rfind("<svg ", 0) == 0);
    CHECK(in.find("<?xml") == std::string::npos);
    Doc d2(in);
    CHECK(doc.find(in) != std::string::npos);
  }
  SECTION("output is deterministic and ids differ between charts") {
    CHECK(c.render() == doc);
    Chart other(o);
    other.add_line(x, std::vector<double>{1, 2, 3, 4, 5});
    const std::string id = svg->FirstChildElement()->Attribute("id");
    Doc d3(other.render());
    CHECK(std::string(d3.root()->FirstChildElement()->Attribute("id")) != id);
  }
  SECTION("every coordinate has two decimals") {
    for (const auto* pl : find_all(d, "polyline")) {
      std::istringstream in(pl->Attribute("points"));
      std::string p;
      while (in >> p) {
        const auto comma = p.find(',');
        for (const auto& part : {p.substr(0, comma), p.substr(comma + 1)}) {
          INFO(part);
          CHECK(part.size() > 3);
          CHECK(part[part.size() - 3] == '.');
        }
      }
    }
  }
}

TEST_CASE("an empty chart and a chart of only non-finite data still render", "[svg]") {
  Chart empty;
  Doc d(empty.render());
  CHECK(find_all(d, "polyline").empty());
  Chart nan_only;
  nan_only.add_line(std::vector<double>{kNaN, kInf}, std::vector<double>{1.0, kNaN},
                    {.label = "nothing"});
  const std::string s = nan_only.render();
  Doc d2(s);
  CHECK(lower(s).find("nan") == std::string::npos);
  CHECK(lower(s).find("inf") == std::string::npos);
}

TEST_CASE("text in title, labels and legend is escaped and parses back unchanged", "[svg]") {
  const std::string nasty = "a<b & c>d \"q\" 'p'";
  ChartOptions o;
  o.title = "Title " + nasty;
  o.x_label = "x " + nasty;
  o.y_label = "y " + nasty;
  Chart c(o);
  c.add_line(std::vector<double>{0, 1}, std::vector<double>{0, 1},
             {.label = "legend " + nasty, .colour = std::string("#0072B2")});
  c.add_vline(0.5, {.label = "ref " + nasty});
  c.add_text(0.25, 0.25, "point " + nasty);
  const std::string s = c.render();
  CHECK(s.find(nasty) == std::string::npos);  // never raw
  CHECK(s.find("a&lt;b &amp; c&gt;d &quot;q&quot; &apos;p&apos;") != std::string::npos);
  Doc d(s);
  CHECK(text_of(d.root()->FirstChildElement("title")) == o.title);
  CHECK(text_of(find_all(d, "text", "title").at(0)) == o.title);
  CHECK(text_of(find_all(d, "text", "x-label").at(0)) == o.x_label);
  CHECK(text_of(find_all(d, "text", "y-label").at(0)) == o.y_label);
  CHECK(text_of(find_all(d, "text", "refline-label").at(0)) == "ref " + nasty);
  CHECK(text_of(find_all(d, "text", "label").at(0)) == "point " + nasty);
  std::vector<std::string> legend_texts;
  for (const auto* g : find_all(d, "g", "legend"))
    for (const auto* t = g->FirstChildElement("text"); t; t = t->NextSiblingElement("text"))
      legend_texts.push_back(text_of(t));
  CHECK(legend_texts == std::vector<std::string>{"legend " + nasty});
  // An attribute value: a colour with a quote cannot break out of it.
  Chart c2;
  c2.add_line(std::vector<double>{0, 1}, std::vector<double>{0, 1},
              {.colour = std::string("red\" onload=\"x")});
  Doc d2(c2.render());
  CHECK(std::string(find_all(d2, "g", "line").at(0)->Attribute("stroke")) == "red\" onload=\"x");
}

TEST_CASE("non-finite points are skipped and break the line", "[svg]") {
  const std::vector<double> x{0, 1, 2, 3, 4, 5, 6, 7};
  const std::vector<double> y{1, 2, kNaN, 4, kInf, 6, 7, -kInf};
  Chart c;
  c.add_line(x, y, {.marker = Marker::Diamond});
  c.add_area(std::vector<double>{0, 1, kNaN, 3}, std::vector<double>{1, 1, 1, 1});
  c.add_vline(kNaN, {.label = "never"});
  c.add_text(kInf, 1.0, "never");
  c.add_bars({"a", "b"}, std::vector<double>{1.0, kNaN});
  const std::string s = c.render();
  CHECK(lower(s).find("nan") == std::string::npos);
  CHECK(lower(s).find("inf") == std::string::npos);
  CHECK(s.find("never") == std::string::npos);
  Doc d(s);
  const auto polylines = in_series(d, "line", 0, "polyline");
  REQUIRE(polylines.size() == 3);  // runs {0,1}, {3}, {5,6}
  std::size_t points = 0;
  for (const auto* p : polylines) points += parse_points(p->Attribute("points")).size();
  CHECK(points == 5);
  CHECK(in_series(d, "markers", 0, "polygon").size() == 5);
  CHECK(in_series(d, "area", 1, "polygon").size() == 2);
  CHECK(in_series(d, "bar", 4, "rect").size() == 1);
  // The domain comes from finite data only: y 1..7 (plus the area and bars).
  CHECK(c.y_scale().d1 < 10.0);
  CHECK(c.x_scale().d1 < 10.0);
}

TEST_CASE("polyline points map back to the data within 1 px", "[svg]") {
  ChartOptions o;
  o.x_label = "Catalyst mass (kg)";
  o.y_label = "Temperature (K)";
  Chart c(o);
  // Invented profile: a rise that levels off, plus a second one.
  std::vector<double> x, y1, y2;
  for (int i = 0; i <= 60; ++i) {
    x.push_back(37.5 * i);
    y1.push_back(653.15 + 95.0 * (1.0 - std::exp(-i / 12.0)));
    y2.push_back(653.15 + 40.0 * std::sin(i / 9.0));
  }
  c.add_line(x, y1, {.label = "bed 1"});
  c.add_line(x, y2, {.label = "bed 2", .dash = std::string("")});
  Doc d(c.render());
  const LinearScale sx = c.x_scale(), sy = c.y_scale();
  const ChartLayout L = c.layout();
  for (int series : {0, 1}) {
    const auto& ys = series == 0 ? y1 : y2;
    const auto pl = in_series(d, "line", series, "polyline");
    REQUIRE(pl.size() == 1);
    const auto pts = parse_points(pl[0]->Attribute("points"));
    REQUIRE(pts.size() == x.size());
    for (std::size_t i = 0; i < pts.size(); ++i) {
      CHECK(std::abs(sx.inverse(pts[i].x) - x[i]) <= data_per_px(sx));
      CHECK(std::abs(sy.inverse(pts[i].y) - ys[i]) <= data_per_px(sy));
      CHECK(pts[i].x >= L.plot_left - 1e-9);
      CHECK(pts[i].x <= L.plot_right + 1e-9);
      CHECK(pts[i].y >= L.plot_top - 1e-9);
      CHECK(pts[i].y <= L.plot_bottom + 1e-9);
    }
  }
  // The exposed scales are the ones the axes are drawn with: each y tick
  // label, read as a number, sits at the pixel the scale gives it.
  const auto labels = find_all(d, "g", "tick-labels");
  REQUIRE(labels.size() == 1);
  int y_labels = 0;
  for (const auto* t = labels[0]->FirstChildElement("text"); t; t = t->NextSiblingElement("text")) {
    if (std::string(t->Attribute("text-anchor")) != "end") continue;
    ++y_labels;
    CHECK(std::abs(sy.map(std::stod(text_of(t))) - attr(t, "y")) <= 1.0);
  }
  CHECK(y_labels >= 3);
  CHECK(sy.d0 <= *std::min_element(y2.begin(), y2.end()));
  CHECK(sy.d1 >= *std::max_element(y1.begin(), y1.end()));
}

TEST_CASE("x tick labels do not overlap even when they are long", "[svg]") {
  ChartOptions o;
  o.width = 360;
  Chart c(o);
  c.add_line(std::vector<double>{1.0e5, 9.87e5}, std::vector<double>{0, 1});
  const ChartLayout L = c.layout();
  REQUIRE(L.x_ticks.size() >= 2);
  // Centres further apart than the labels are wide (0.6 em a glyph, a
  // generous average advance for sans-serif digits; common practice, no source).
  const double gap = std::abs(L.x.map(L.x_ticks[1]) - L.x.map(L.x_ticks[0]));
  std::size_t longest = 0;
  for (const auto& l : L.x_tick_labels) longest = std::max(longest, l.size());
  CHECK(gap > 0.6 * o.font_size * static_cast<double>(longest));
}

TEST_CASE("a bar chart draws one bar per category from zero, labelled", "[svg]") {
  ChartOptions o;
  o.y_label = "Duty (kW)";
  Chart c(o);
  const std::vector<std::string> cats{"R1", "E1 & cooler", "R2", "R3 <quench>"};
  const std::vector<double> duty{120.5, -80.0, 64.25, 30.0};
  const std::vector<double> other{100.0, -20.0, kNaN, 45.0};
  c.add_bars(cats, duty, {.label = "invented A"});
  c.add_bars(cats, other, {.label = "invented B"});
  Doc d(c.render());
  const LinearScale sx = c.x_scale(), sy = c.y_scale();
  CHECK(sy.d0 <= -80.0);
  CHECK(sy.d1 >= 120.5);
  const auto a = in_series(d, "bar", 0, "rect");
  const auto b = in_series(d, "bar", 1, "rect");
  REQUIRE(a.size() == 4);
  REQUIRE(b.size() == 3);  // the NaN draws no bar
  for (std::size_t i = 0; i < a.size(); ++i) {
    const double top = attr(a[i], "y"), bottom = top + attr(a[i], "height");
    const double value_px = duty[i] >= 0 ? top : bottom;
    const double zero_px = duty[i] >= 0 ? bottom : top;
    CHECK(std::abs(sy.inverse(value_px) - duty[i]) <= data_per_px(sy));
    CHECK(std::abs(sy.inverse(zero_px)) <= data_per_px(sy));
    // Category i sits at x = i; series A left of centre, B right of it.
    const double centre = attr(a[i], "x") + 0.5 * attr(a[i], "width");
    CHECK(sx.inverse(centre) < static_cast<double>(i));
    CHECK(sx.inverse(centre) > static_cast<double>(i) - 0.5);
  }
  const double b0 = attr(b[0], "x") + 0.5 * attr(b[0], "width");
  CHECK(sx.inverse(b0) > 0.0);
  CHECK(sx.inverse(b0) < 0.5);
  // Category names are the x tick labels, in order, under their slots.
  std::vector<std::string> names;
  const auto labels = find_all(d, "g", "tick-labels").at(0);
  for (const auto* t = labels->FirstChildElement("text"); t; t = t->NextSiblingElement("text")) {
    if (std::string(t->Attribute("text-anchor")) == "end") continue;
    names.push_back(text_of(t));
    CHECK(std::abs(sx.inverse(attr(t, "x")) - static_cast<double>(names.size() - 1)) <=
          data_per_px(sx));
  }
  CHECK(names == cats);
  CHECK_THROWS_WITH(c.add_bars({"R1", "R2"}, std::vector<double>{1, 2}),
                    Catch::Contains("categories differ"));
}

TEST_CASE("long category names are slanted and shortened to stay on the figure", "[svg]") {
  ChartOptions o;
  o.width = 320;
  o.height = 240;
  Chart c(o);
  std::vector<std::string> cats;
  for (int i = 0; i < 6; ++i)
    cats.push_back("a rather long stage name number " + std::to_string(i));
  c.add_bars(cats, std::vector<double>{1, 2, 3, 4, 5, 6});
  const ChartLayout L = c.layout();
  CHECK(L.rotate_x_labels);
  CHECK(L.plot_bottom > 0.5 * o.height);
  for (const auto& l : L.x_tick_labels) CHECK(l.size() < cats[0].size());
  // Every slanted label ends on the figure: its far end, 35 degrees down to
  // the left of its tick, at x >= 0 and y <= height (0.6 em a glyph, common
  // practice, no source).
  Doc d(c.render());
  const double slant = 35.0 * 3.14159265358979 / 180.0;
  for (std::size_t i = 0; i < L.x_ticks.size(); ++i) {
    std::size_t chars = 0;  // code points: the labels end in a 3-byte "…"
    for (unsigned char ch : L.x_tick_labels[i]) chars += (ch & 0xC0u) != 0x80u;
    const double w = 0.6 * o.font_size * static_cast<double>(chars);
    const double px = L.x.map(L.x_ticks[i]);
    CHECK(px - w * std::cos(slant) >= 0.0);
    CHECK(L.plot_bottom + 9.0 + w * std::sin(slant) + o.font_size <= o.height);
  }
}

TEST_CASE("areas close at zero, bands between their curves", "[svg]") {
  Chart c;
  const std::vector<double> x{0, 1, 2};
  c.add_area(x, std::vector<double>{2, 3, 1}, {.opacity = 0.3});
  c.add_band(x, std::vector<double>{4, 5, 6}, std::vector<double>{7, 8, 9});
  Doc d(c.render());
  const LinearScale sx = c.x_scale(), sy = c.y_scale();
  const auto area = parse_points(in_series(d, "area", 0, "polygon").at(0)->Attribute("points"));
  REQUIRE(area.size() == 5);
  CHECK(std::abs(sy.inverse(area[3].y)) <= data_per_px(sy));
  CHECK(std::abs(sy.inverse(area[4].y)) <= data_per_px(sy));
  CHECK(std::abs(sx.inverse(area[3].x) - 2.0) <= data_per_px(sx));
  CHECK(std::abs(sx.inverse(area[4].x) - 0.0) <= data_per_px(sx));
  CHECK(std::string(find_all(d, "g", "area").at(0)->Attribute("fill-opacity")) == "0.30");
  const auto band = parse_points(in_series(d, "area", 1, "polygon").at(0)->Attribute("points"));
  REQUIRE(band.size() == 6);
  const std::vector<double> expect_y{7, 8, 9, 6, 5, 4};  // upper forward, lower back
  const std::vector<double> expect_x{0, 1, 2, 2, 1, 0};
  for (std::size_t i = 0; i < 6; ++i) {
    CHECK(std::abs(sy.inverse(band[i].y) - expect_y[i]) <= data_per_px(sy));
    CHECK(std::abs(sx.inverse(band[i].x) - expect_x[i]) <= data_per_px(sx));
  }
}

TEST_CASE("the automatic legend avoids the corner where the data are", "[svg]") {
  // Data crowd the top right; the legend must go elsewhere.
  Chart c;
  std::vector<double> x, y;
  for (int i = 0; i <= 20; ++i) x.push_back(i), y.push_back(i * i);
  c.add_line(x, y, {.label = "rising"});
  Doc d(c.render());
  const auto* box = find_all(d, "g", "legend").at(0)->FirstChildElement("rect");
  const double bx0 = attr(box, "x"), by0 = attr(box, "y");
  const double bx1 = bx0 + attr(box, "width"), by1 = by0 + attr(box, "height");
  const auto pts = parse_points(in_series(d, "line", 0, "polyline").at(0)->Attribute("points"));
  for (const auto& p : pts) CHECK_FALSE((p.x >= bx0 && p.x <= bx1 && p.y >= by0 && p.y <= by1));
  const ChartLayout L = c.layout();
  CHECK(bx0 < 0.5 * (L.plot_left + L.plot_right));  // a left corner
}

TEST_CASE("with data in every corner the automatic legend goes under the chart", "[svg]") {
  // Lines across all four corners: no corner is free, and a legend must
  // never hide data, so it is drawn below the plot and the figure grows.
  ChartOptions o;
  Chart c(o);
  c.add_line(std::vector<double>{0, 10}, std::vector<double>{0, 10}, {.label = "rising"});
  c.add_line(std::vector<double>{0, 10}, std::vector<double>{10, 0}, {.label = "falling"});
  Doc d(c.render());
  const double height = std::stod(d.root()->Attribute("height"));
  CHECK(height > o.height);
  CHECK(std::string(d.root()->Attribute("viewBox")) ==
        "0 0 640 " + std::string(d.root()->Attribute("height")));
  const auto* box = find_all(d, "g", "legend").at(0)->FirstChildElement("rect");
  const ChartLayout L = c.layout();
  CHECK(attr(box, "y") >= L.plot_bottom);
  CHECK(attr(box, "y") + attr(box, "height") <= height);
}

TEST_CASE("a text label that would sit on a reference-line label moves down", "[svg]") {
  // A vertical limit's label sits at the plot's top edge; a stage label
  // placed at the same spot must not be drawn over it.
  ChartOptions o;
  o.legend = LegendPosition::None;
  o.x_domain = Interval{0.0, 10.0};
  o.y_domain = Interval{0.0, 1.0};
  Chart c(o);
  c.add_line(std::vector<double>{0, 10}, std::vector<double>{0, 1});
  c.add_vline(2.0, {.label = "T_in_min"});
  c.add_vline(2.1, {.label = "T_low"});  // its label would cover the first one's
  c.add_text(2.2, 1.0, "B3", {.dy = 0.0});
  Doc d(c.render());
  const auto* ref = find_all(d, "text", "refline-label").at(0);
  const auto* ref2 = find_all(d, "text", "refline-label").at(1);
  const auto* lab = find_all(d, "text", "label").at(0);
  const double fs = o.font_size;
  // Baselines a line apart at least: the boxes do not meet.
  CHECK(std::abs(attr(ref2, "y") - attr(ref, "y")) >= fs);
  CHECK(attr(lab, "y") - attr(ref, "y") >= fs);
  CHECK(attr(lab, "y") - attr(ref2, "y") >= o.font_size - 1.0);  // label font 11 px
}

TEST_CASE("fixed domains clip the drawing and keep ticks inside", "[svg]") {
  ChartOptions o;
  o.x_domain = Interval{0.0, 10.0};
  o.y_domain = Interval{300.0, 900.0};
  Chart c(o);
  c.add_line(std::vector<double>{-5, 5, 15}, std::vector<double>{350, 850, 1200});
  c.add_hline(1000.0, {.label = "outside"});
  const ChartLayout L = c.layout();
  CHECK(L.x.d0 == 0.0);
  CHECK(L.x.d1 == 10.0);
  CHECK(L.y.d0 == 300.0);
  CHECK(L.y.d1 == 900.0);
  for (double t : L.y_ticks) CHECK((t >= 300.0 && t <= 900.0));
  const std::string s = c.render();
  CHECK(s.find("outside") == std::string::npos);
  Doc d(s);
  CHECK(find_all(d, "g", "plot").at(0)->Attribute("clip-path") != nullptr);
}

TEST_CASE("programming mistakes are rejected with the field named", "[svg]") {
  ChartOptions o;
  o.width = 0;
  CHECK_THROWS_WITH(Chart(o), Catch::Contains("ChartOptions.width"));
  o = {};
  o.margins.left = 700;
  CHECK_THROWS_WITH(Chart(o), Catch::Contains("margins"));
  o = {};
  o.font_size = 9;
  CHECK_THROWS_WITH(Chart(o), Catch::Contains("font_size"));
  o = {};
  o.y_domain = Interval{5.0, 5.0};
  CHECK_THROWS_WITH(Chart(o), Catch::Contains("y_domain"));
  Chart c;
  CHECK_THROWS_WITH(c.add_line(std::vector<double>{1, 2}, std::vector<double>{1}),
                    Catch::Contains("x has 2 values but y has 1"));
  CHECK_THROWS_WITH(c.add_area(std::vector<double>{1}, std::vector<double>{1}, {.opacity = 1.5}),
                    Catch::Contains("opacity"));
  CHECK_THROWS_WITH(c.add_bars({"a"}, std::vector<double>{1, 2}),
                    Catch::Contains("1 categories but 2 values"));
}
