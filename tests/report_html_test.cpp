// The HTML report and its figures: well-formed (parsed by tinyxml2, an
// independent XML parser), escaped, and mapped faithfully to the result.
#include <fmt/format.h>
#include <tinyxml2.h>

#include <algorithm>
#include <catch2/catch.hpp>
#include <functional>
#include <nlohmann/json.hpp>
#include <sstream>

#include "run_command.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/report/compare_report.hpp"
#include "rxtrain/report/figures.hpp"
#include "rxtrain/report/html.hpp"
#include "rxtrain/report/sha256.hpp"
#include "rxtrain/report/staging_html.hpp"
#include "rxtrain/report/text_format.hpp"

using namespace rxtrain;
namespace fs = std::filesystem;

namespace {

constexpr const char* kTinyCase = R"(title: tiny
phase: gas
species:
  - {id: A, thermo: {cp: 40 J/mol/K, h_f: 0}}
  - {id: B, thermo: {cp: 40 J/mol/K, h_f: -20 kJ/mol}}
reactions:
  - id: r1
    equation: A => B
    rate: {A: 5 1/s, Ea: 40 kJ/mol, T_ref: 400 K}
feed: {T: 400 K, P: 2 bar, flows: {A: 1 mol/s}}
key: A
train:
  - {type: pfr, id: R1, volume: 0.5 m3}
  - {type: exchanger, id: E1, T_out: 400 K}
)";

TrainResult hand_result(const std::string& title) {
  TrainResult t;
  t.title = title;
  t.species = {"A", "B"};
  t.key = "A";
  t.feed = Stream{400.0, 2e5, {1.0, 0.0}};
  StageResult r;
  r.id = "R1";
  r.kind = StageKind::Pfr;
  r.heat = HeatMode::Adiabatic;
  r.inlet = t.feed;
  r.outlet = Stream{600.0, 2e5, {0.6, 0.4}};
  r.volume = 0.5;
  r.T_max = 600;
  r.T_min = 400;
  r.conversion = 0.4;
  for (int i = 0; i <= 20; ++i) {
    const double X = 0.4 * i / 20.0;
    r.profile.push_back({0.5 * i / 20.0, 400.0 + 500.0 * X, X, {1 - X, X}, {}});
  }
  StageResult e;
  e.id = "E1";
  e.kind = StageKind::Exchanger;
  e.inlet = r.outlet;
  e.outlet = Stream{400.0, 2e5, {0.6, 0.4}};
  e.duty = -8000;
  e.T_max = 600;
  e.T_min = 400;
  e.conversion = 0.4;
  e.profile = {{0, 600.0, 0.4, {0.6, 0.4}, {}}, {0, 400.0, 0.4, {0.6, 0.4}, {}}};
  t.stages = {r, e};
  t.outlet = e.outlet;
  t.conversion = 0.4;
  return t;
}

void walk(const tinyxml2::XMLElement* e,
          const std::function<void(const tinyxml2::XMLElement*)>& f) {
  for (; e != nullptr; e = e->NextSiblingElement()) {
    f(e);
    walk(e->FirstChildElement(), f);
  }
}

std::vector<std::pair<double, double>> parse_points(const char* attr) {
  std::vector<std::pair<double, double>> out;
  std::istringstream in(attr ? attr : "");
  std::string pair;
  while (in >> pair) {
    const auto comma = pair.find(',');
    out.emplace_back(std::stod(pair.substr(0, comma)), std::stod(pair.substr(comma + 1)));
  }
  return out;
}

}  // namespace

TEST_CASE("SHA-256 matches the FIPS 180-2 example digests", "[html]") {
  // FIPS 180-2, Appendix B.1 and B.2 (one- and two-block messages); the
  // empty-string digest is the widely published value (from memory).
  CHECK(sha256_hex("abc") == "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
  CHECK(sha256_hex("abcdbcdecdefdefgefghfghighijhijkijkljklmklmnlmnomnopnopq") ==
        "248d6a61d20638b8e5c026930c3e6039a33ce45964ff2167f6ecedd419db06c1");
  CHECK(sha256_hex("") == "e3b0c44298fc1c149afbf4c8996fb92427ae41e4649b934ca495991b7852b855");
  // FIPS 180-2 Appendix B.3: one million 'a'.
  CHECK(sha256_hex(std::string(1000000, 'a')) ==
        "cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0");
}

TEST_CASE("the report is well-formed XML and escapes the title", "[html]") {
  const UnitParser units;
  const Case c = load_case_from_string(kTinyCase, "tiny.yaml", units);
  const std::string title = "Bed <1> & \"two\"";
  const TrainResult r = hand_result(title);
  const auto figures = run_figures(c, r, {});
  const std::string html =
      run_report_html(c, r, figures, {"tiny.yaml", sha256_hex(kTinyCase), "2026-12-02", "0.1.0"});
  tinyxml2::XMLDocument doc;
  // The DOCTYPE is not XML-declared but tinyxml2 accepts it as an unknown node.
  REQUIRE(doc.Parse(html.c_str()) == tinyxml2::XML_SUCCESS);
  const auto* head_title =
      doc.FirstChildElement("html")->FirstChildElement("head")->FirstChildElement("title");
  REQUIRE(head_title != nullptr);
  CHECK(std::string(head_title->GetText()) == title);
  CHECK(html.find("<script") == std::string::npos);
  CHECK(html.find("http://") == html.find("http://www.w3.org"));  // only namespace names
  CHECK(html.find("licensed engineers") != std::string::npos);
  CHECK(html.find("nan") == std::string::npos);
  int svgs = 0;
  walk(doc.RootElement(),
       [&](const tinyxml2::XMLElement* e) { svgs += std::string(e->Name()) == "svg"; });
  CHECK(svgs == static_cast<int>(figures.size()));
  for (const auto& f : figures) {
    tinyxml2::XMLDocument one;
    CHECK(one.Parse(f.chart.render().c_str()) == tinyxml2::XML_SUCCESS);
  }
}

TEST_CASE("the T-X path's polyline maps back to the stage's (T, X) points within a pixel",
          "[html]") {
  const UnitParser units;
  const Case c = load_case_from_string(kTinyCase, "tiny.yaml", units);
  const TrainResult r = hand_result("mapping");
  const Figure f = tx_diagram(c, r);
  tinyxml2::XMLDocument doc;
  REQUIRE(doc.Parse(f.chart.render().c_str()) == tinyxml2::XML_SUCCESS);
  // No equilibrium curve here: series 0 is R1's path (its label is series 1).
  std::vector<std::pair<double, double>> px;
  walk(doc.RootElement(), [&](const tinyxml2::XMLElement* e) {
    if (std::string(e->Name()) == "g" && e->IntAttribute("data-series", -1) == 0)
      for (auto* p = e->FirstChildElement("polyline"); p; p = p->NextSiblingElement("polyline"))
        for (const auto& pt : parse_points(p->Attribute("points"))) px.push_back(pt);
  });
  const auto& profile = r.stages[0].profile;
  REQUIRE(px.size() == profile.size());
  const auto sx = f.chart.x_scale(), sy = f.chart.y_scale();
  for (std::size_t i = 0; i < px.size(); ++i) {
    CHECK(std::abs(sx.map(profile[i].T - 273.15) - px[i].first) <= 1.0);
    CHECK(std::abs(sy.map(profile[i].X) - px[i].second) <= 1.0);
    // And back through the inverse scales, to within what one pixel means.
    CHECK(std::abs(sx.inverse(px[i].first) + 273.15 - profile[i].T) <=
          std::abs(sx.inverse(1.0) - sx.inverse(0.0)));
  }
}

TEST_CASE("run --report writes a report whose stage numbers equal the JSON result", "[html]") {
  const auto dir = fs::temp_directory_path() / "rxtrain_html_cli";
  fs::remove_all(dir);
  const std::string demo = std::string(RXTRAIN_SOURCE_DIR) + "/cases/isomerization-two-bed.yaml";
  const auto res =
      rxtrain::test::run_rxtrain("run '" + demo + "' --report '" + (dir / "rep").string() +
                                 "' --json '" + (dir / "r.json").string() + "'");
  INFO(res.err);
  REQUIRE(res.exit_code == 0);
  const auto j = nlohmann::json::parse(rxtrain::test::slurp(dir / "r.json"));
  tinyxml2::XMLDocument doc;
  REQUIRE(doc.LoadFile((dir / "rep" / "report.html").c_str()) == tinyxml2::XML_SUCCESS);
  // Rows of the stage table, formatted from the JSON's values with the
  // shared routine: T out in °C over K (cell 7), X out (cell 9).
  struct Row {
    std::vector<std::string> cells;
    std::vector<std::string> kelvin;
  };
  std::vector<Row> rows;
  walk(doc.RootElement(), [&](const tinyxml2::XMLElement* e) {
    if (std::string(e->Name()) == "table" && e->Attribute("class", "stages"))
      for (auto* tr = e->FirstChildElement("tr"); tr; tr = tr->NextSiblingElement("tr")) {
        Row row;
        for (auto* td = tr->FirstChildElement("td"); td; td = td->NextSiblingElement("td")) {
          row.cells.push_back(td->GetText() ? td->GetText() : "");
          const auto* k = td->FirstChildElement("span");
          row.kelvin.push_back(k && k->GetText() ? k->GetText() : "");
        }
        if (!row.cells.empty()) rows.push_back(row);
      }
  });
  REQUIRE(rows.size() == j["stages"].size());
  for (std::size_t i = 0; i < rows.size(); ++i) {
    const auto& s = j["stages"][i];
    const double T_out = s["outlet"]["T"].get<double>();
    CHECK(rows[i].cells[0] == s["id"].get<std::string>());
    CHECK(rows[i].cells[7] == celsius_text(T_out));
    CHECK(rows[i].kelvin[7] == fixed_text(T_out, 2) + " K");
    CHECK(rows[i].cells[9] == fixed_text(s["conversion"].get<double>(), 4));
  }
  for (const char* svg : {"tx-diagram.svg", "profile-temperature.svg", "levenspiel.svg"}) {
    tinyxml2::XMLDocument one;
    CHECK(one.LoadFile((dir / "rep" / svg).c_str()) == tinyxml2::XML_SUCCESS);
  }
  fs::remove_all(dir);
}

namespace {

// Rows (<td> texts, with the K line of temperature cells apart) of the
// first table with class "stages" after the heading with this id.
struct HtmlRow {
  std::vector<std::string> cells;
  std::vector<std::string> kelvin;
};

std::vector<HtmlRow> table_after(const tinyxml2::XMLDocument& doc, const std::string& heading_id) {
  std::vector<HtmlRow> rows;
  bool after = false, done = false;
  walk(doc.RootElement(), [&](const tinyxml2::XMLElement* e) {
    const std::string name = e->Name();
    if (name == "h2") after = e->Attribute("id", heading_id.c_str()) != nullptr;
    if (done || !after || name != "table") return;
    done = true;
    for (auto* tr = e->FirstChildElement("tr"); tr; tr = tr->NextSiblingElement("tr")) {
      HtmlRow row;
      for (auto* td = tr->FirstChildElement("td"); td; td = td->NextSiblingElement("td")) {
        row.cells.push_back(td->GetText() ? td->GetText() : "");
        const auto* k = td->FirstChildElement("span");
        row.kelvin.push_back(k && k->GetText() ? k->GetText() : "");
      }
      if (!row.cells.empty()) rows.push_back(row);
    }
  });
  return rows;
}

}  // namespace

TEST_CASE("staging --report: the beds and coolers shown equal the JSON answer", "[html]") {
  const auto dir = fs::temp_directory_path() / "rxtrain_html_staging";
  fs::remove_all(dir);
  const std::string demo = std::string(RXTRAIN_SOURCE_DIR) + "/cases/so2-oxidation-staging.yaml";
  const auto res =
      rxtrain::test::run_rxtrain("staging '" + demo + "' --report '" + (dir / "rep").string() +
                                 "' --json '" + (dir / "s.json").string() + "'");
  INFO(res.err);
  REQUIRE(res.exit_code == 0);
  const auto j = nlohmann::json::parse(rxtrain::test::slurp(dir / "s.json"));
  tinyxml2::XMLDocument doc;
  REQUIRE(doc.LoadFile((dir / "rep" / "report.html").c_str()) == tinyxml2::XML_SUCCESS);
  const auto beds = table_after(doc, "beds");
  REQUIRE(beds.size() == j["beds"].size());
  REQUIRE(beds.size() >= 2);  // the demo needs intercooling (3 beds, see staging_test)
  for (std::size_t i = 0; i < beds.size(); ++i) {
    const auto& b = j["beds"][i];
    CHECK(beds[i].cells[0] == b["id"].get<std::string>());
    CHECK(beds[i].cells[1] == celsius_text(b["T_in"].get<double>()));
    CHECK(beds[i].kelvin[2] == fixed_text(b["T_out"].get<double>(), 2) + " K");
    CHECK(beds[i].cells[5] == fixed_text(b["X_out"].get<double>(), 4));
    CHECK(beds[i].cells[7] == volume_text(b["volume"].get<double>()));
  }
  const auto coolers = table_after(doc, "exchangers");
  REQUIRE(coolers.size() == j["coolers"].size());
  for (std::size_t i = 0; i < coolers.size(); ++i)
    CHECK(coolers[i].cells[4] == fixed_text(j["coolers"][i]["duty"].get<double>() / 1e3, 2));
  // Every figure also stands alone as a well-formed SVG; the staged T-X
  // diagram draws one path per bed and cooler.
  int files = 0;
  for (const auto& f : fs::directory_iterator(dir / "rep")) {
    if (f.path().extension() != ".svg") continue;
    ++files;
    tinyxml2::XMLDocument one;
    CHECK(one.LoadFile(f.path().c_str()) == tinyxml2::XML_SUCCESS);
  }
  CHECK(files == 4);
  tinyxml2::XMLDocument tx;
  REQUIRE(tx.LoadFile((dir / "rep" / "tx-staged.svg").c_str()) == tinyxml2::XML_SUCCESS);
  int paths = 0;
  walk(tx.RootElement(), [&](const tinyxml2::XMLElement* e) {
    if (std::string(e->Name()) == "g" && e->Attribute("class", "line")) ++paths;
  });
  // Equilibrium curve, maximum-rate locus, beds and coolers.
  CHECK(paths == 2 + static_cast<int>(j["beds"].size() + j["coolers"].size()));
  fs::remove_all(dir);
}

TEST_CASE("compare --report: the layouts shown equal the JSON, one bar per feasible layout",
          "[html]") {
  const auto dir = fs::temp_directory_path() / "rxtrain_html_compare";
  fs::remove_all(dir);
  const std::string demo = std::string(RXTRAIN_SOURCE_DIR) + "/cases/liquid-tank-then-tube.yaml";
  const auto res =
      rxtrain::test::run_rxtrain("compare '" + demo + "' --report '" + (dir / "rep").string() +
                                 "' --json '" + (dir / "c.json").string() + "'");
  INFO(res.err);
  REQUIRE(res.exit_code == 0);
  const auto j = nlohmann::json::parse(rxtrain::test::slurp(dir / "c.json"));
  tinyxml2::XMLDocument doc;
  REQUIRE(doc.LoadFile((dir / "rep" / "report.html").c_str()) == tinyxml2::XML_SUCCESS);
  const auto rows = table_after(doc, "summary");
  REQUIRE(rows.size() == j["layouts"].size());
  std::size_t feasible = 0;
  for (std::size_t i = 0; i < rows.size(); ++i) {
    const auto& l = j["layouts"][i];
    std::string order;
    for (const auto& id : l["order"]) order += (order.empty() ? "" : " > ") + id.get<std::string>();
    CHECK(rows[i].cells[2] == order);
    CHECK(rows[i].cells[3] == l["heat"].get<std::string>());
    if (l["conversion"].is_number())
      CHECK(rows[i].cells[7] == fmt::format("{:.4f}", l["conversion"].get<double>()));
    if (l["feasible"].get<bool>()) ++feasible;
  }
  tinyxml2::XMLDocument bars;
  REQUIRE(bars.LoadFile((dir / "rep" / "compare-layouts.svg").c_str()) == tinyxml2::XML_SUCCESS);
  std::size_t rects = 0;
  walk(bars.RootElement(), [&](const tinyxml2::XMLElement* e) {
    if (std::string(e->Name()) == "g" && e->Attribute("class", "bar"))
      for (auto* r = e->FirstChildElement("rect"); r; r = r->NextSiblingElement("rect")) ++rects;
  });
  CHECK(rects == feasible);
  fs::remove_all(dir);
}

TEST_CASE("staging and compare pages escape a title with XML special characters", "[html]") {
  const UnitParser units;
  std::string text = kTinyCase;
  text.replace(text.find("title: tiny"), 11, "title: '<R&D> \"train\"'");
  const Case c = load_case_from_string(text, "tiny.yaml", units);
  CompareResult cr;
  cr.sized = false;
  Layout l;
  l.order = {"R1"};
  l.case_layout = true;
  l.feasible = true;
  l.conversion = 0.4;
  l.T_peak = 600;
  cr.layouts = {l};
  StagingResult sr;
  sr.title = c.title;
  const ReportProvenance p{"tiny.yaml", "0", "2026-12-02", "0.1.0"};
  for (const std::string& page :
       {compare_report_html(c, cr, {compare_figure(cr)}, p), staging_report_html(c, sr, {}, p)}) {
    tinyxml2::XMLDocument doc;
    REQUIRE(doc.Parse(page.c_str()) == tinyxml2::XML_SUCCESS);
    const auto* h1 = doc.RootElement()->FirstChildElement("body")->FirstChildElement("h1");
    REQUIRE(h1 != nullptr);
    CHECK_THAT(std::string(h1->GetText()), Catch::StartsWith("<R&D> \"train\""));
  }
}

TEST_CASE("optimize --report: the optimum shown equals the JSON, the trade-off has a bar per N",
          "[html]") {
  const auto dir = fs::temp_directory_path() / "rxtrain_html_optimize";
  fs::remove_all(dir);
  const std::string demo = std::string(RXTRAIN_SOURCE_DIR) + "/cases/three-bed-optimize.yaml";
  const auto res = rxtrain::test::run_rxtrain("optimize '" + demo + "' --max-beds 2 --report '" +
                                              (dir / "rep").string() + "' --json '" +
                                              (dir / "o.json").string() + "'");
  INFO(res.err);
  REQUIRE(res.exit_code == 0);
  const auto j = nlohmann::json::parse(rxtrain::test::slurp(dir / "o.json"));
  tinyxml2::XMLDocument doc;
  REQUIRE(doc.LoadFile((dir / "rep" / "report.html").c_str()) == tinyxml2::XML_SUCCESS);
  const auto beds = table_after(doc, "summary");
  REQUIRE(beds.size() == j["beds"].size());
  for (std::size_t i = 0; i < beds.size(); ++i) {
    const auto& b = j["beds"][i];
    CHECK(beds[i].cells[0] == b["id"].get<std::string>());
    CHECK(beds[i].cells[1] == celsius_text(b["T_in"].get<double>()));
    CHECK(beds[i].kelvin[2] == fixed_text(b["T_out"].get<double>(), 2) + " K");
    CHECK(beds[i].cells[4] == fixed_text(b["X_out"].get<double>(), 4));
    CHECK(beds[i].cells[6] == volume_text(b["volume"].get<double>()));
    CHECK(beds[i].cells[7] == volume_text(b["catalyst_mass"].get<double>()));
  }
  const auto counts = table_after(doc, "by-bed-count");
  REQUIRE(counts.size() == j["by_bed_count"].size());
  std::size_t feasible = 0;
  for (std::size_t i = 0; i < counts.size(); ++i)
    if (j["by_bed_count"][i]["total_catalyst"].is_number()) {
      ++feasible;
      CHECK(counts[i].cells[2] ==
            volume_text(j["by_bed_count"][i]["total_catalyst"].get<double>()));
    }
  tinyxml2::XMLDocument bars;
  REQUIRE(bars.LoadFile((dir / "rep" / "beds-catalyst.svg").c_str()) == tinyxml2::XML_SUCCESS);
  std::size_t rects = 0;
  walk(bars.RootElement(), [&](const tinyxml2::XMLElement* e) {
    if (std::string(e->Name()) == "g" && e->Attribute("class", "bar"))
      for (auto* r = e->FirstChildElement("rect"); r; r = r->NextSiblingElement("rect")) ++rects;
  });
  CHECK(rects == feasible);
  for (const char* svg : {"tx-optimum.svg", "profile-temperature-optimum.svg", "beds-duty.svg"}) {
    tinyxml2::XMLDocument one;
    CHECK(one.LoadFile((dir / "rep" / svg).c_str()) == tinyxml2::XML_SUCCESS);
  }
  fs::remove_all(dir);
}

TEST_CASE("figures: a stage keeps one colour in every figure, no yellow, one exchanger style",
          "[html]") {
  const UnitParser units;
  const Case c =
      load_case(std::string(RXTRAIN_SOURCE_DIR) + "/cases/so2-three-bed-converter.yaml", units);
  const TrainResult r = run_train(c);
  const auto figures = run_figures(c, r, r.levenspiel);
  // Beds B1, B2, B3 take the first three stage colours, both coolers the
  // neutral grey.
  CHECK(stage_colour(r, "B1") == stage_colour(0));
  CHECK(stage_colour(r, "B3") == stage_colour(2));
  CHECK(stage_colour(r, "C1") == kExchangerColour);
  CHECK(stage_colour(r, "C2") == kExchangerColour);
  for (std::size_t k = 0; k < 8; ++k) CHECK(stage_colour(k) != "#F0E442");  // Okabe-Ito yellow
  for (const auto& f : figures) {
    INFO(f.name);
    const std::string doc = f.chart.render();
    CHECK(doc.find("#F0E442") == std::string::npos);
    // Each bed's colour is drawn in every figure that shows beds.
    for (const char* bed : {"B1", "B2", "B3"})
      CHECK(doc.find("stroke=\"" + stage_colour(r, bed) + "\"") != std::string::npos);
  }
  // Later beds crowd the top-left corner: the diagram gets a zoomed twin.
  CHECK(std::any_of(figures.begin(), figures.end(),
                    [](const Figure& f) { return f.name == "tx-diagram-zoom"; }));
}

TEST_CASE("figures: a stirred tank is a point reached by a jump, not a path", "[html]") {
  const UnitParser units;
  const Case c =
      load_case(std::string(RXTRAIN_SOURCE_DIR) + "/cases/liquid-tank-then-tube.yaml", units);
  const TrainResult r = run_train(c);
  const std::string doc = tx_diagram(c, r).chart.render();
  tinyxml2::XMLDocument xml;
  REQUIRE(xml.Parse(doc.c_str()) == tinyxml2::XML_SUCCESS);
  int tank_markers = 0;
  walk(xml.RootElement(), [&](const tinyxml2::XMLElement* e) {
    if (std::string(e->Name()) == "g" && e->Attribute("class") &&
        std::string(e->Attribute("class")) == "markers")
      for (auto* m = e->FirstChildElement(); m; m = m->NextSiblingElement()) ++tank_markers;
  });
  CHECK(tank_markers == 1);  // T1, at its outlet state; the tube T2 has none
  // One tank and one tube: nothing crowds a corner, no zoomed twin.
  CHECK(tx_figures(c, r).size() == 1);
}

TEST_CASE("the inputs section shows each rate law as the case gives it, beside its SI form",
          "[html]") {
  const UnitParser units;
  const Case c = load_case_from_string(kTinyCase, "tiny.yaml", units);
  CHECK(c.mechanism.reactions()[0].rate.as_written == "A: 5 1/s, Ea: 40 kJ/mol, T_ref: 400 K");
  const std::string h = html::inputs_section(c);
  CHECK(h.find("<code>A: 5 1/s, Ea: 40 kJ/mol, T_ref: 400 K</code>") != std::string::npos);
  CHECK(h.find("rate law (SI)") != std::string::npos);
}
