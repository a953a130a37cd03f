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

#include <catch2/catch.hpp>
#include <cmath>
#include <nlohmann/json.hpp>
#include <string>

#include "run_command.hpp"
#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"

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
  options.train.pfr.cvode.rtol = 1e-12;
  options.train.cstr.pfr.cvode.rtol = 1e-12;
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

TEST_CASE("sized trains rank by total volume; targets stay at their positions", "[compare]") {
  const double k = 1e-3;
  const CompareResult r = rxtrain::compare_layouts(load(
      nth_order_case(1, k, 0, R"(  - {type: pfr, id: P, target: {conversion: 0.5}, heat: isothermal}
  - {type: cstr, id: T, target: {conversion: 0.9}, heat: isothermal})")));
  CHECK(r.sized);
  CHECK_FALSE(r.catalyst_objective);
  const Layout& pt = find(r, {"P", "T"}, LayoutHeat::AsWritten);
  const Layout& tp = find(r, {"T", "P"}, LayoutHeat::AsWritten);
  // Closed forms: tube to 0.5 then tank to 0.9: ln 2 + 0.4/0.1; tank to 0.5
  // then tube to 0.9: 0.5/0.5 + ln(0.5/0.1); both times v0/k.
  CHECK(*pt.total_volume == Approx(kV0 / k * (std::log(2.0) + 4.0)).epsilon(1e-6));
  CHECK(*tp.total_volume == Approx(kV0 / k * (1.0 + std::log(5.0))).epsilon(1e-6));
  CHECK(r.layouts.front().order == std::vector<std::string>{"T", "P"});
  CHECK(*pt.conversion == Approx(0.9).epsilon(1e-9));
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
    CHECK(r.layouts[i].reason.find("T_max") != std::string::npos);
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
                            "conversion", "T_max"})
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

  const CompareResult r =
      rxtrain::compare_layouts(load(base + "  - {type: pfr, id: P, target: {conversion: 0.6}}\n"
                                           "  - {type: cstr, id: T, target: {conversion: 0.9}}\n"));
  const Layout& pt = find(r, {"P", "T"}, LayoutHeat::AsWritten);
  const Layout& tp = find(r, {"T", "P"}, LayoutHeat::AsWritten);
  CHECK(*tp.total_volume == Approx(tank_first).epsilon(1e-3));
  CHECK(*pt.total_volume == Approx(tube_first).epsilon(1e-3));
  CHECK(*tp.total_volume < *pt.total_volume);
  // Adiabatic is the case as written; the isothermal layouts rank too.
  CHECK(r.layouts.size() == 4);
  CHECK(r.layouts.front().feasible);
}
