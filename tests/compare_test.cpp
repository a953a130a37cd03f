// Layout comparison against the closed-form design equations of ideal
// isothermal reactors (constant density, power-law rate -r = k C^n):
//   PFR:  tau = integral of dC / (k C^n)   (n = 1: C = C_in exp(-k tau);
//         n = 2: 1/C = 1/C_in + k tau)
//   CSTR: C_in - C = k C^n tau
// and the classic result for ideal reactors in series (Levenspiel, Chemical
// Reaction Engineering, ch. on reactors in series): for equal total
// volume, the order of a tubular and a stirred stage does not matter for
// n = 1; the tubular stage first gives more conversion for n > 1, the
// stirred tank first for n < 1. Every case here is invented.
#include "rxtrain/studies/compare.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <map>
#include <nlohmann/json.hpp>
#include <set>
#include <string>
#include <tuple>

#include "run_command.hpp"
#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/report/compare_report.hpp"

namespace {

using rxtrain::Case;
using rxtrain::CompareResult;
using rxtrain::Layout;
using rxtrain::LayoutHeat;

// Pure A at 2 mol/s, A and B with equal molar volumes (1.0e-4/0.9 m3/mol),
// so v0 = 2.0e-4/0.9 m3/s and C_A0 = 9000 mol/m3 all along. T 350 K =
// T_ref, so k = A.
constexpr double kV0 = 2 * 0.1 / 900;
constexpr double kC0 = 9000;

std::string nth_order_case(double n, double k, double dH_kJ, const std::string& train,
                           const std::string& extra = "") {
  return fmt::format(R"(title: Order of stages, liquid A -> B of order {n} (invented data)
phase: liquid
species:
  - {{id: A, mw: 100 g/mol, density: 900 kg/m3, thermo: {{cp: 200 J/mol/K}}}}
  - {{id: B, mw: 100 g/mol, density: 900 kg/m3, thermo: {{cp: 200 J/mol/K}}}}
reactions:
  - id: r1
    equation: A => B
    rate: {{A: {k:.17g}, Ea: 50 kJ/mol, T_ref: 350 K, orders: {{A: {n}}}}}
    dH: {dH} kJ/mol
feed:
  T: 350 K
  P: 2 bar
  flows: {{A: 2 mol/s}}
key: A
{extra}
train:
{train}
)",
                     fmt::arg("n", n), fmt::arg("k", k), fmt::arg("dH", dH_kJ),
                     fmt::arg("train", train), fmt::arg("extra", extra));
}

Case load(const std::string& text) {
  const rxtrain::UnitParser units;
  return rxtrain::load_case_from_string(text, "cmp.yaml", units);
}

const Layout& find(const CompareResult& r, const std::vector<std::string>& order, LayoutHeat heat) {
  for (const auto& l : r.layouts)
    if (l.order == order && l.heat == heat) return l;
  FAIL("layout not found");
  return r.layouts.front();
}

// Equal volumes, 0.5 m3 each: tau = 0.5 / v0 per stage; k chosen so that
// k C0^(n-1) tau = Da per stage. The integrator runs at rtol 1e-12 so
// that the 1e-8 comparisons below test the layouts, not the tolerance.
CompareResult two_stage_orders(double n, double Da) {
  const double tau = 0.5 / kV0;
  const double k = Da / (std::pow(kC0, n - 1) * tau);
  rxtrain::CompareOptions options;
  options.train.solvers.tube.cvode.rtol = 1e-12;
  return rxtrain::compare_layouts(
      load(nth_order_case(n, k, 0, R"(  - {type: pfr, id: P, volume: 0.5 m3, heat: isothermal}
  - {type: cstr, id: T, volume: 0.5 m3, heat: isothermal})")),
      options);
}

}  // namespace

TEST_CASE("first order: the order of a tubular and a stirred stage does not matter", "[compare]") {
  const double Da = 0.8;
  const CompareResult r = two_stage_orders(1.0, Da);
  CHECK_FALSE(r.sized);
  // As written and adiabatic (dH = 0 here, but a distinct mode by its
  // spec); isothermal is identical to as written and dropped.
  CHECK(r.layouts.size() == 4);
  const Layout& pt = find(r, {"P", "T"}, LayoutHeat::AsWritten);
  const Layout& tp = find(r, {"T", "P"}, LayoutHeat::AsWritten);
  CHECK(pt.case_layout);
  CHECK_FALSE(tp.case_layout);
  REQUIRE(pt.feasible);
  REQUIRE(tp.feasible);
  // Closed form: C/C0 = exp(-Da) / (1 + Da) either way.
  const double X = 1 - std::exp(-Da) / (1 + Da);
  CHECK(std::abs(*pt.conversion - X) < 1e-9);
  CHECK(std::abs(*tp.conversion - X) < 1e-9);
  CHECK(std::abs(*pt.conversion - *tp.conversion) < 1e-8);
}

TEST_CASE("second order: the tubular stage first converts more", "[compare]") {
  const double Da = 1.0;
  const CompareResult r = two_stage_orders(2.0, Da);
  const Layout& pt = find(r, {"P", "T"}, LayoutHeat::AsWritten);
  const Layout& tp = find(r, {"T", "P"}, LayoutHeat::AsWritten);
  // Closed forms in c = C/C0: PFR 1/c_out = 1/c_in + Da; CSTR
  // Da c^2 + c - c_in = 0.
  auto tank = [&](double c_in) { return (-1 + std::sqrt(1 + 4 * Da * c_in)) / (2 * Da); };
  const double X_pt = 1 - tank(1 / (1 + Da));
  const double X_tp = 1 - 1 / (1 / tank(1.0) + Da);
  CHECK(*pt.conversion == Approx(X_pt).epsilon(1e-6));
  CHECK(*tp.conversion == Approx(X_tp).epsilon(1e-6));
  CHECK(*pt.conversion > *tp.conversion + 1e-4);
  CHECK(r.layouts.front().order == std::vector<std::string>{"P", "T"});  // best first
}

TEST_CASE("half order: the stirred tank first converts more", "[compare]") {
  const CompareResult r = two_stage_orders(0.5, 0.4);
  const Layout& pt = find(r, {"P", "T"}, LayoutHeat::AsWritten);
  const Layout& tp = find(r, {"T", "P"}, LayoutHeat::AsWritten);
  CHECK(*tp.conversion > *pt.conversion + 1e-5);
  CHECK(r.layouts.front().order == std::vector<std::string>{"T", "P"});
}

TEST_CASE("isothermal first order: a tube needs less volume than a tank", "[compare]") {
  const double k = 1e-3, X = 0.9;
  auto single = [&](const std::string& type) {
    const Case c = load(nth_order_case(
        1, k, 0, "  - {type: " + type + ", id: R, target: {conversion: 0.9}, heat: isothermal}"));
    return rxtrain::run_train(c).stages.at(0).volume.value();
  };
  const double V_pfr = single("pfr"), V_cstr = single("cstr");
  // Closed forms: V_pfr = v0/k ln(1/(1-X)), V_cstr = v0/k X/(1-X).
  CHECK(V_pfr == Approx(kV0 / k * std::log(1 / (1 - X))).epsilon(1e-6));
  CHECK(V_cstr == Approx(kV0 / k * X / (1 - X)).epsilon(1e-6));
  CHECK(V_pfr < V_cstr);
}

TEST_CASE("a sized stage takes its target along, a target below its new inlet is infeasible",
          "[compare]") {
  const double k = 1e-3;
  const CompareResult r = rxtrain::compare_layouts(load(
      nth_order_case(1, k, 0, R"(  - {type: pfr, id: P, target: {conversion: 0.5}, heat: isothermal}
  - {type: cstr, id: T, target: {conversion: 0.9}, heat: isothermal})")));
  CHECK(r.sized);
  CHECK_FALSE(r.catalyst_objective);
  const Layout& pt = find(r, {"P", "T"}, LayoutHeat::AsWritten);
  const Layout& tp = find(r, {"T", "P"}, LayoutHeat::AsWritten);
  // Closed forms: tube to 0.5 then tank to 0.9: (ln 2 + 0.4/0.1) v0/k.
  REQUIRE(pt.feasible);
  CHECK(*pt.total_volume == Approx(kV0 / k * (std::log(2.0) + 4.0)).epsilon(1e-6));
  CHECK(*pt.conversion == Approx(0.9).epsilon(1e-9));
  // The tank, sized to 0.9, now comes first; the tube's 0.5 is behind it.
  CHECK_FALSE(tp.feasible);
  CHECK_THAT(compare_reason_text(tp),
             Catch::Contains("stage P") && Catch::Contains("not above the conversion "
                                                           "at its inlet"));
  CHECK(tp.moves.size() == 2);
  CHECK(r.layouts.front().order == std::vector<std::string>{"P", "T"});
  CHECK_FALSE(r.layouts.back().feasible);
}

TEST_CASE("a fixed stage behind a sized one: the sized stage keeps its target wherever it goes",
          "[compare]") {
  // Isothermal first order, tube P of 0.5 m3 and tube S sized to X = 0.8.
  // P first: X1 = 1 - exp(-k 0.5/v0), then S from X1 to 0.8:
  //   V_S = v0/k ln((1 - X1)/0.2).
  // S first: V_S = v0/k ln 5, then P: X = 1 - 0.2 exp(-k 0.5/v0).
  const double k = 2e-4;
  const CompareResult r = rxtrain::compare_layouts(
      load(nth_order_case(1, k, 0, R"(  - {type: pfr, id: P, volume: 0.5 m3, heat: isothermal}
  - {type: pfr, id: S, target: {conversion: 0.8}, heat: isothermal})")));
  const double e = std::exp(-k * 0.5 / kV0);
  const Layout& ps = find(r, {"P", "S"}, LayoutHeat::AsWritten);
  const Layout& sp = find(r, {"S", "P"}, LayoutHeat::AsWritten);
  REQUIRE(ps.feasible);
  REQUIRE(sp.feasible);
  CHECK(*ps.total_volume == Approx(0.5 + kV0 / k * std::log(e / 0.2)).epsilon(1e-6));
  CHECK(*ps.conversion == Approx(0.8).epsilon(1e-9));
  CHECK(*sp.total_volume == Approx(0.5 + kV0 / k * std::log(5.0)).epsilon(1e-6));
  CHECK(*sp.conversion == Approx(1 - 0.2 * e).epsilon(1e-8));
}

TEST_CASE("tubes of different volume in either order: distinct layouts, one closed form",
          "[compare]") {
  // Isothermal first order in tubes: C/C0 = exp(-k (V1 + V2)/v0) whatever
  // the order (Levenspiel, Chemical Reaction Engineering, PFRs in series).
  const double k = 2e-4;
  rxtrain::CompareOptions options;
  options.train.solvers.tube.cvode.rtol = 1e-12;
  const CompareResult r = rxtrain::compare_layouts(
      load(nth_order_case(1, k, 0, R"(  - {type: pfr, id: A1, volume: 0.3 m3, heat: isothermal}
  - {type: pfr, id: A2, volume: 0.7 m3, heat: isothermal})")),
      options);
  const double X = 1 - std::exp(-k * 1.0 / kV0);
  // Only the as-written mode (all isothermal, no exchanger; dH = 0 makes
  // the adiabatic mode a distinct spec, so it is listed too).
  int as_written = 0;
  for (const auto& l : r.layouts) {
    CHECK(l.orders.size() == 1);
    if (l.heat == LayoutHeat::AsWritten) ++as_written;
  }
  CHECK(as_written == 2);
  const Layout& a = find(r, {"A1", "A2"}, LayoutHeat::AsWritten);
  const Layout& b = find(r, {"A2", "A1"}, LayoutHeat::AsWritten);
  CHECK(*a.conversion == Approx(X).epsilon(1e-9));
  CHECK(*b.conversion == Approx(X).epsilon(1e-9));
  CHECK(a.moves.empty());
  REQUIRE(b.moves.size() == 2);
  CHECK(rxtrain::layout_moves_text(b, r.case_order) == "A1 and A2 swapped");
}

TEST_CASE("identical beds exchanged are one layout naming both orders", "[compare]") {
  // Two identical isothermal tubes of 0.5 m3 and a tank of 0.5 m3: six
  // orders, three trains (the tank first, between or last). First order:
  // C/C0 = exp(-2 Da) / (1 + Da) in every one (Levenspiel, reactors in
  // series), Da = k 0.5 / v0.
  const double k = 2e-4, Da = k * 0.5 / kV0;
  rxtrain::CompareOptions options;
  options.train.solvers.tube.cvode.rtol = 1e-12;
  const CompareResult r = rxtrain::compare_layouts(
      load(nth_order_case(1, k, 0, R"(  - {type: pfr, id: P1, volume: 0.5 m3, heat: isothermal}
  - {type: pfr, id: P2, volume: 0.5 m3, heat: isothermal}
  - {type: cstr, id: T, volume: 0.5 m3, heat: isothermal})")),
      options);
  std::vector<const Layout*> written;
  for (const auto& l : r.layouts)
    if (l.heat == LayoutHeat::AsWritten) written.push_back(&l);
  REQUIRE(written.size() == 3);
  std::vector<std::vector<std::string>> seen;
  for (const Layout* l : written) {
    REQUIRE(l->orders.size() == 2);
    CHECK(l->orders.front() == l->order);
    for (const auto& o : l->orders) seen.push_back(o);
    CHECK(*l->conversion == Approx(1 - std::exp(-2 * Da) / (1 + Da)).epsilon(1e-8));
  }
  std::sort(seen.begin(), seen.end());
  CHECK(std::adjacent_find(seen.begin(), seen.end()) == seen.end());  // each order once
  CHECK(seen.size() == 6);
  const Layout& own = find(r, {"P1", "P2", "T"}, LayoutHeat::AsWritten);
  CHECK(own.case_layout);
  CHECK(own.orders.at(1) == std::vector<std::string>{"P2", "P1", "T"});
  // The tank at the front: named by the order that moves fewest stages.
  const Layout& front = find(r, {"T", "P2", "P1"}, LayoutHeat::AsWritten);
  CHECK(rxtrain::layout_moves_text(front, r.case_order) == "P1 and T swapped");
}

TEST_CASE("layouts above T_max are infeasible and listed last", "[compare]") {
  // Exothermic, 300 K adiabatic rise for full conversion: adiabatic
  // layouts pass 360 K, isothermal ones stay at 350 K.
  const CompareResult r = rxtrain::compare_layouts(
      load(nth_order_case(1, 1e-3, -60,
                          R"(  - {type: pfr, id: P, volume: 0.3 m3, heat: isothermal}
  - {type: cstr, id: T, volume: 0.3 m3, heat: isothermal})",
                          "limits: {T_max: 360 K}")));
  REQUIRE(r.layouts.size() == 4);
  CHECK(r.layouts[0].feasible);
  CHECK(r.layouts[1].feasible);
  for (int i : {2, 3}) {
    CHECK_FALSE(r.layouts[i].feasible);
    CHECK(r.layouts[i].heat == LayoutHeat::Adiabatic);
    CHECK(compare_reason_text(r.layouts[i]).find("T_max") != std::string::npos);
  }
}

TEST_CASE("more reactor stages than can be ordered is an input error", "[compare]") {
  std::string train;
  for (int i = 0; i < 7; ++i)
    train += fmt::format("  - {{type: pfr, id: R{}, volume: 0.01 m3}}\n", i);
  const Case c = load(nth_order_case(1, 1e-3, 0, train));
  CHECK_THROWS_AS(rxtrain::compare_layouts(c), rxtrain::InputError);
}

TEST_CASE("rxtrain compare: exit codes and the JSON layout", "[compare][cli]") {
  namespace fs = std::filesystem;
  const auto dir = fs::temp_directory_path() / "rxtrain_cli_compare";
  fs::remove_all(dir);
  fs::create_directories(dir);
  {
    std::ofstream f(dir / "c.yaml");
    f << nth_order_case(2, 1e-7, -60, R"(  - {type: pfr, id: P, volume: 0.3 m3}
  - {type: exchanger, id: X1, T_out: 350 K}
  - {type: cstr, id: T, volume: 0.3 m3, heat: isothermal})",
                        "limits: {T_max: 1000 K}");
  }
  const auto r = rxtrain::test::run_rxtrain("compare '" + (dir / "c.yaml").string() + "' --json '" +
                                            (dir / "out.json").string() + "'");
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  CHECK(r.out.find("P > T") != std::string::npos);
  CHECK(r.out.find("nan") == std::string::npos);
  const auto j = nlohmann::json::parse(rxtrain::test::slurp(dir / "out.json"));
  // 2 orders x 3 heat modes (as written is mixed, so none is dropped).
  REQUIRE(j.at("layouts").size() == 6);
  int own = 0;
  double best = 2;
  for (const auto& l : j["layouts"]) {
    for (const char* key : {"order", "heat", "feasible", "reason", "total_volume", "total_catalyst",
                            "conversion", "T_peak", "orders", "moved", "beyond_thermo_data"})
      CHECK(l.contains(key));
    CHECK(l["order"].size() == 2);
    CHECK(l["reason"].is_null());
    CHECK(l["total_catalyst"].is_null());
    CHECK(l["total_volume"].get<double>() == Approx(0.6));
    CHECK(l["conversion"].get<double>() <= best);  // best first
    best = l["conversion"].get<double>();
    own += l["case_layout"].get<bool>() ? 1 : 0;
  }
  CHECK(own == 1);

  const auto missing = rxtrain::test::run_rxtrain("compare '" + (dir / "nope.yaml").string() + "'");
  CHECK(missing.exit_code == 2);
  {
    std::ofstream f(dir / "many.yaml");
    std::string train;
    for (int i = 0; i < 7; ++i)
      train += fmt::format("  - {{type: pfr, id: R{}, volume: 0.01 m3}}\n", i);
    f << nth_order_case(1, 1e-3, 0, train);
  }
  const auto many = rxtrain::test::run_rxtrain("compare '" + (dir / "many.yaml").string() + "'");
  CHECK(many.exit_code == 2);
  CHECK(many.err.find("at most 6") != std::string::npos);
  fs::remove_all(dir);
}

TEST_CASE("adiabatic exothermic: the sign of tank-first vs tube-first from Levenspiel areas",
          "[compare]") {
  // Invented liquid A -> B with a solvent: the adiabatic path T = T0 + J X
  // is the same in a tank and a tube (constant heat capacities), so one
  // curve g(X) = F_A0/(-r_A) along it serves both. With Ea 80 kJ/mol the
  // rate rises with X at first, g falls, and a tank at the low-g end
  // (rectangle) can beat a tube over the high-g start. Design equations:
  // tank 0 -> X1 is X1 g(X1), tube X1 -> X2 the area under g (Levenspiel,
  // Chemical Reaction Engineering, graphical design of reactors in series).
  const std::string base = R"(title: Adiabatic tank or tube first (invented data)
phase: liquid
species:
  - {id: A, mw: 100 g/mol, density: 900 kg/m3, thermo: {cp: 200 J/mol/K}}
  - {id: B, mw: 100 g/mol, density: 900 kg/m3, thermo: {cp: 200 J/mol/K}}
  - {id: S, mw: 80 g/mol, density: 800 kg/m3, thermo: {cp: 150 J/mol/K}}
reactions:
  - id: r1
    equation: A => B
    rate: {A: 1.0e-4, Ea: 80 kJ/mol, T_ref: 300 K}
    dH: -60 kJ/mol
feed:
  T: 300 K
  P: 2 bar
  flows: {A: 2 mol/s, S: 6 mol/s}
key: A
train:
)";
  const double X1 = 0.6, X2 = 0.9;
  const auto single =
      rxtrain::run_train(load(base + "  - {type: pfr, id: R, target: {conversion: 0.9}}\n"));
  const auto& pts = single.levenspiel.at(0).points;
  REQUIRE(pts.size() > 20);
  auto g_at = [&](double X) {
    for (std::size_t i = 1; i < pts.size(); ++i)
      if (pts[i].X >= X) {
        const double t = (X - pts[i - 1].X) / (pts[i].X - pts[i - 1].X);
        return pts[i - 1].inverse_rate + t * (pts[i].inverse_rate - pts[i - 1].inverse_rate);
      }
    return pts.back().inverse_rate;
  };
  auto area = [&](double a, double b) {  // trapezoids over the curve's points
    double s = 0;
    for (std::size_t i = 1; i < pts.size(); ++i) {
      const double lo = std::max(a, pts[i - 1].X), hi = std::min(b, pts[i].X);
      if (hi > lo) s += 0.5 * (g_at(lo) + g_at(hi)) * (hi - lo);
    }
    return s;
  };
  const double tank_first = X1 * g_at(X1) + area(X1, X2);
  const double tube_first = area(0, X1) + (X2 - X1) * g_at(X2);
  REQUIRE(tank_first < tube_first);  // what the curve says

  // Targets move with their stages, so the two sequences of intermediate
  // conversions are two cases; compare ranks each case's own layouts.
  auto total_volume = [&](const std::string& train) {
    const CompareResult r = rxtrain::compare_layouts(load(base + train));
    for (const auto& l : r.layouts)
      if (l.case_layout) return l.total_volume.value();
    FAIL("no case layout");
    return 0.0;
  };
  const double tp = total_volume(
      "  - {type: cstr, id: T, target: {conversion: 0.6}}\n"
      "  - {type: pfr, id: P, target: {conversion: 0.9}}\n");
  const double pt = total_volume(
      "  - {type: pfr, id: P, target: {conversion: 0.6}}\n"
      "  - {type: cstr, id: T, target: {conversion: 0.9}}\n");
  CHECK(tp == Approx(tank_first).epsilon(1e-3));
  CHECK(pt == Approx(tube_first).epsilon(1e-3));
  CHECK(tp < pt);
}

TEST_CASE("rxtrain compare on the three-bed demo: each train once, the orders it stands for",
          "[compare][cli]") {
  // R1 and R2 are identical beds (6000 kg, 700 kg/m3, adiabatic); R3 is
  // sized to X = 0.90. Six orders give three trains per heat mode.
  namespace fs = std::filesystem;
  const auto dir = fs::temp_directory_path() / "rxtrain_cli_compare_demo";
  fs::remove_all(dir);
  fs::create_directories(dir);
  const std::string demo = std::string(RXTRAIN_SOURCE_DIR) + "/cases/three-bed-optimize.yaml";
  const auto r = rxtrain::test::run_rxtrain("compare '" + demo + "' --json '" +
                                            (dir / "out.json").string() + "'");
  INFO(r.out << r.err);
  REQUIRE(r.exit_code == 0);
  const auto j = nlohmann::json::parse(rxtrain::test::slurp(dir / "out.json"));
  std::map<std::string, std::vector<std::vector<std::string>>> orders_by_heat;
  std::set<std::tuple<std::string, std::vector<std::string>>> firsts;
  for (const auto& l : j.at("layouts")) {
    const std::string heat = l.at("heat");
    CHECK(l.at("orders").size() == 2);
    CHECK(l.at("orders")[0] == l.at("order"));
    CHECK(firsts.emplace(heat, l.at("order").get<std::vector<std::string>>()).second);
    for (const auto& o : l["orders"]) orders_by_heat[heat].push_back(o);
  }
  // As written and isothermal (the case is all adiabatic): three rows each,
  // together naming each of the six orders exactly once.
  REQUIRE(orders_by_heat.size() == 2);
  for (auto& [heat, orders] : orders_by_heat) {
    INFO(heat);
    CHECK(orders.size() == 6);
    std::sort(orders.begin(), orders.end());
    CHECK(std::adjacent_find(orders.begin(), orders.end()) == orders.end());
  }
  CHECK(j["layouts"].size() == 6);
  // R3 first: its target travels with it, R1 and R2 follow with their
  // catalyst; as written it cannot reach 0.90 adiabatically from 320 °C.
  CHECK(r.out.find("R1 and R3 swapped") != std::string::npos);
  CHECK(r.out.find("identical stages: R1 = R2") != std::string::npos);
  // R3 > R1 > R2 moves three stages, R3 > R2 > R1 two: the row shows the
  // latter and names the former among the orders it stands for.
  for (const auto& l : j["layouts"])
    CHECK(l["order"] != std::vector<std::string>{"R3", "R1", "R2"});
  fs::remove_all(dir);
}

namespace {

// Liquid A -> B, 150 kJ/mol released, cp 200 J/(mol K) for both: the
// adiabatic line is T = 350 K + 750 K * X (energy balance at constant cp),
// so an adiabatic layout near full conversion peaks near 1100 K.
std::string hot_case(const std::string& cp) {
  return fmt::format(R"(title: Hot adiabatic layout (invented data)
phase: liquid
species:
  - {{id: A, mw: 100 g/mol, density: 900 kg/m3, thermo: {{cp: {cp}}}}}
  - {{id: B, mw: 100 g/mol, density: 900 kg/m3, thermo: {{cp: {cp}}}}}
reactions:
  - id: r1
    equation: A => B
    rate: {{A: 1.0e-4, Ea: 50 kJ/mol, T_ref: 350 K}}
    dH: -150 kJ/mol
feed:
  T: 350 K
  P: 2 bar
  flows: {{A: 2 mol/s}}
key: A
train:
  - {{type: pfr, id: P1, volume: 0.3 m3, heat: isothermal}}
  - {{type: pfr, id: P2, volume: 0.5 m3, heat: isothermal}}
)",
                     fmt::arg("cp", cp));
}

}  // namespace

TEST_CASE("compare shows each layout's peak and flags peaks beyond the heat-capacity data",
          "[compare]") {
  SECTION("no declared range: the default window of 1000 K") {
    const CompareResult r = rxtrain::compare_layouts(load(hot_case("200 J/mol/K")));
    CHECK(r.thermo_ceiling.T == 1000.0);
    CHECK(r.thermo_ceiling.species.empty());
    const Layout& hot = find(r, {"P1", "P2"}, LayoutHeat::Adiabatic);
    const Layout& cool = find(r, {"P1", "P2"}, LayoutHeat::AsWritten);
    REQUIRE(hot.feasible);
    // Energy balance, constant cp: the peak is the outlet, on the line.
    CHECK(*hot.T_peak == Approx(350 + 750 * *hot.conversion).epsilon(1e-6));
    CHECK(*hot.T_peak > 1000);
    CHECK(hot.beyond_thermo);
    CHECK(*cool.T_peak == Approx(350).epsilon(1e-12));
    CHECK_FALSE(cool.beyond_thermo);
    // Ranked first on conversion, and the flag is in its row and under
    // the table.
    CHECK(r.layouts.front().heat == LayoutHeat::Adiabatic);
    const std::string table = rxtrain::format_compare_table(r);
    INFO(table);
    const auto row_begin = table.find("\n   1 ");
    REQUIRE(row_begin != std::string::npos);
    const std::string row =
        table.substr(row_begin + 1, table.find('\n', row_begin + 1) - row_begin);
    CHECK(row.find("!") != std::string::npos);
    CHECK(row.find("beyond the heat-capacity data") != std::string::npos);
    CHECK(table.find("(ranks 1, ", 0) != std::string::npos);  // both adiabatic orders
    CHECK(table.find("common practice, no source") != std::string::npos);
    const auto j = nlohmann::json::parse(rxtrain::compare_json_text(r));
    CHECK(j["thermo_ceiling"]["default"].get<bool>());
    CHECK(j["layouts"][0]["beyond_thermo_data"].get<bool>());
    CHECK(j["layouts"][0]["T_peak"].get<double>() == Approx(*hot.T_peak));
  }
  SECTION("a declared range reaching above the peak: no flag") {
    const CompareResult r =
        rxtrain::compare_layouts(load(hot_case("{poly: [200], T_range: [250, 1200]}")));
    CHECK(r.thermo_ceiling.T == 1200.0);
    CHECK(r.thermo_ceiling.species == "A");
    for (const auto& l : r.layouts) CHECK_FALSE(l.beyond_thermo);
    CHECK(rxtrain::format_compare_table(r).find("(rank") == std::string::npos);
  }
  SECTION("a declared range ending below the peak: flagged above its top") {
    const CompareResult r =
        rxtrain::compare_layouts(load(hot_case("{poly: [200], T_range: [250, 800]}")));
    CHECK(r.thermo_ceiling.T == 800.0);
    const Layout& hot = find(r, {"P2", "P1"}, LayoutHeat::Adiabatic);
    CHECK(hot.beyond_thermo);
  }
}

TEST_CASE("what moved, in words", "[compare]") {
  const std::vector<std::string> written{"R1", "R2", "R3", "R4"};
  auto moved = [&](std::vector<std::string> order, std::vector<rxtrain::StageMove> moves) {
    Layout l;
    l.order = std::move(order);
    l.moves = std::move(moves);
    return rxtrain::layout_moves_text(l, written);
  };
  CHECK(moved(written, {}) == "none");
  CHECK(moved({"R1", "R3", "R2", "R4"}, {{"R3", 3, 2}, {"R2", 2, 3}}) == "R2 and R3 swapped");
  CHECK(moved({"R4", "R1", "R2", "R3"}, {{"R4", 4, 1}, {"R1", 1, 2}, {"R2", 2, 3}, {"R3", 3, 4}}) ==
        "R4 moved to the front");
  CHECK(moved({"R2", "R3", "R4", "R1"}, {{"R2", 2, 1}, {"R3", 3, 2}, {"R4", 4, 3}, {"R1", 1, 4}}) ==
        "R1 moved to the end");
  CHECK(moved({"R2", "R3", "R1", "R4"}, {{"R2", 2, 1}, {"R3", 3, 2}, {"R1", 1, 3}}) ==
        "R1 moved between R3 and R4");
  CHECK(moved({"R2", "R1", "R4", "R3"}, {{"R2", 2, 1}, {"R1", 1, 2}, {"R4", 4, 3}, {"R3", 3, 4}}) ==
        "R2 to 1st, R1 to 2nd, R4 to 3rd, R3 to 4th");
}

TEST_CASE("a cooled tank's case gets its adiabatic layout, which drops the cooling", "[compare]") {
  const std::string text = rxtrain::test::slurp(std::filesystem::path(RXTRAIN_SOURCE_DIR) /
                                                "cases/cooled-tank-oscillating.yaml");
  const CompareResult r = rxtrain::compare_layouts(load(text));
  const Layout& cooled = find(r, {"R1"}, LayoutHeat::AsWritten);
  const Layout& adiabatic = find(r, {"R1"}, LayoutHeat::Adiabatic);
  REQUIRE(cooled.feasible);
  REQUIRE(adiabatic.feasible);
  // Without the wall the tank runs hotter and converts more.
  CHECK(*adiabatic.conversion > *cooled.conversion + 0.1);
}
