// The field table (case/case_fields.hpp) against the loader, the case
// writer's value text, the sweep's paths and validate_case; the result
// table (analysis/result_fields.hpp) against the JSON writer. These check
// the program's parts against each other (its own definitions, no outside
// source); the YAML the round trip writes is made by yaml-cpp, a library
// independent of the loader's reading of it.
#include "rxtrain/case/case_fields.hpp"

#include <yaml-cpp/yaml.h>

#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <functional>
#include <set>
#include <sstream>

#include "input_error.hpp"
#include "rxtrain/analysis/result_fields.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/report/compare_report.hpp"
#include "rxtrain/report/json.hpp"
#include "rxtrain/studies/compare.hpp"
#include "rxtrain/sweep/case_path.hpp"

using namespace rxtrain;
using Catch::Matchers::WithinRel;

namespace {

// Invented data: fields the demo cases do not hold (a reactor given by
// volume, an exchanger given by duty, molar masses, van 't Hoff data with
// a given dH, both limits, feed by flow and composition, multitubular
// beds, one sized for its pressure drop, with pellets and a constant viscosity).
constexpr const char* kExtraCase = R"(
title: field table coverage (invented data)
species:
  - {id: A, mw: 0.058 kg/mol, thermo: {cp: 120 J/mol/K, h_f: -100 kJ/mol}}
  - {id: B, mw: 0.058 kg/mol, thermo: {cp: 125 J/mol/K, h_f: -108 kJ/mol}}
reactions:
  - id: iso
    equation: A <-> B
    rate: {A: 5 1/s, Ea: 40 kJ/mol, T_ref: 450 K}
    equilibrium: {K: 3, T: 450 K, dH: -8 kJ/mol}
feed: {T: 430 K, P: 10 bar, flow: 40 mol/s, composition: {A: 0.9, B: 0.1}}
key: A
target: {conversion: 0.5}
limits: {T_max: 600 K, T_in_min: 400 K}
fluid: {viscosity: 2.0e-5 Pa*s}
train:
  - type: pfr
    id: R1
    volume: 2 m3
    tubes: {count: 400, diameter: 40 mm, void_fraction: 0.4}
    pellet: {shape: sphere, size: 4 mm}
  - {type: exchanger, id: C1, duty: -50 kW}
  - type: pfr
    id: R2
    volume: 3 m3
    tubes: {count: 300, diameter: auto, dP_max: 0.5 bar, void_fraction: 0.4}
    pellet: {shape: sphere, size: 4 mm}
  - {type: pfr, id: R3, volume: 3 m3, tubes: {count: 100, diameter: 40 mm, void_fraction: 0.4}, heat: {U: 150 W/m2/K, coolant: {T: 400 K}}}
)";

std::string read_text(const std::filesystem::path& p) {
  std::ifstream in(p);
  std::stringstream s;
  s << in.rdbuf();
  return s.str();
}

struct NamedText {
  std::string name;
  std::string text;
};

std::vector<NamedText> cases_to_check() {
  std::vector<NamedText> out{{"extra.yaml", kExtraCase}};
  for (const auto& e :
       std::filesystem::directory_iterator(std::filesystem::path(RXTRAIN_SOURCE_DIR) / "cases"))
    if (e.path().extension() == ".yaml")
      out.push_back({e.path().filename().string(), read_text(e.path())});
  return out;
}

std::vector<std::string> split_path(const std::string& path) {
  std::vector<std::string> parts;
  std::stringstream s(path);
  std::string p;
  while (std::getline(s, p, '.')) parts.push_back(p);
  return parts;
}

// The YAML node at a table path ("train.R1.volume": the `volume` of the
// train entry with id R1), created where missing.
YAML::Node node_at(YAML::Node root, const std::string& path) {
  const auto parts = split_path(path);
  YAML::Node n = root;
  for (std::size_t i = 0; i < parts.size(); ++i) {
    const bool list = n[parts[i]].IsSequence();
    if (list) {
      // An entry by its id, or by its index where the entries have none
      // (adsorption terms: "terms.0").
      YAML::Node seq = n[parts[i]], entry;
      for (std::size_t j = 0; j < seq.size(); ++j)
        if (seq[j]["id"] ? seq[j]["id"].Scalar() == parts[i + 1]
                         : std::to_string(j) == parts[i + 1])
          entry.reset(seq[j]);
      REQUIRE(entry.IsDefined());
      n.reset(entry);
      ++i;
      continue;
    }
    n.reset(n[parts[i]]);
  }
  return n;
}

// Writes every field of `c` into the YAML of the case it was loaded from,
// with the case writer's value text at full precision. The feed keeps the
// form the file uses (flows, or flow with composition).
std::string write_fields(const std::string& text, const Case& c) {
  YAML::Node root = YAML::Load(text);
  const bool by_flows = root["feed"]["flows"].IsDefined();
  for (const CaseField& f : case_fields(c)) {
    if (by_flows && f.spec->derived()) continue;
    if (!by_flows && f.spec->kind == CaseFieldKind::FeedFlowOf) continue;
    node_at(root, f.name) = case_field_text(*f.spec, f.get(c), 17);
  }
  YAML::Emitter out;
  out << root;
  return out.c_str();
}

// A value inside the field's range, away from the given one.
double moved(const CaseField& f, double v) {
  if (f.range == kUnitInterval || f.range == kOpenUnitInterval) return v * 0.9 + 0.05;
  if (f.spec->kind == CaseFieldKind::MolarMass) return v * 1.002;  // within 0.5 % of a formula
  if (f.range == kAnyValue && v == 0) return 1234.5;
  return v * 1.07;
}

void require_same_fields(const Case& a, const Case& b) {
  const auto fa = case_fields(a), fb = case_fields(b);
  REQUIRE(fa.size() == fb.size());
  for (std::size_t i = 0; i < fa.size(); ++i) {
    INFO(fa[i].name);
    REQUIRE(fa[i].name == fb[i].name);
    const double va = fa[i].get(a), vb = fb[i].get(b);
    if (va == 0)
      CHECK(std::abs(vb) < 1e-12);
    else
      CHECK_THAT(vb, WithinRel(va, 1e-12));
  }
}

using rxtrain::test::input_error;

}  // namespace

TEST_CASE("every kind of case field has one row, paths and labels are unique", "[case-fields]") {
  std::set<int> kinds;
  std::set<std::string_view> paths, labels;
  for (const auto& s : case_field_specs()) {
    CHECK(kinds.insert(static_cast<int>(s.kind)).second);
    CHECK(paths.insert(s.path).second);
    CHECK(labels.insert(s.label).second);
    CHECK(&case_field_spec(s.kind) == &s);
  }
  CHECK(kinds.size() == static_cast<std::size_t>(CaseFieldKind::LimitTinMin) + 1);
}

TEST_CASE("every table path round-trips: set, written, loaded back equal", "[case-fields]") {
  const UnitParser units;
  std::set<int> covered;
  for (const auto& [name, text] : cases_to_check()) {
    INFO(name);
    const Case base = load_case_from_string(text, name, units);
    // As loaded: written back and reloaded, every field the same.
    require_same_fields(base, load_case_from_string(write_fields(text, base), name, units));
    for (const CaseField& f : case_fields(base)) {
      INFO(f.name);
      covered.insert(static_cast<int>(f.spec->kind));
      Case edited = base;
      const double v = moved(f, f.get(base));
      const std::vector<CaseField> one{f};
      const std::vector<double> value{v};
      set_case_fields(edited, one, value);
      CHECK_THAT(f.get(edited), WithinRel(v, 1e-12));
      validate_case(edited);
      const Case back = load_case_from_string(write_fields(text, edited), name, units);
      require_same_fields(edited, back);
    }
  }
  // Every row of the table was exercised by some case.
  CHECK(covered.size() == case_field_specs().size());
}

TEST_CASE("the sweep's paths are the table's, with its units and ranges", "[case-fields]") {
  const UnitParser units;
  for (const auto& [name, text] : cases_to_check()) {
    INFO(name);
    const Case c = load_case_from_string(text, name, units);
    const sweep::CasePathTable table(c);
    std::vector<std::string> offered;
    for (const auto& f : case_fields(c))
      if (offered_to_sweeps(f, c)) offered.push_back(f.name);
    CHECK(table.names() == offered);
    for (const auto& p : table.paths()) {
      CHECK(p.range == p.spec->range);
      CHECK(p.get(c) == table.base_value(table.find(p.name, "t"), c));
    }
  }
}

TEST_CASE("a case loaded from a file passes validate_case", "[case-fields]") {
  const UnitParser units;
  for (const auto& [name, text] : cases_to_check()) {
    INFO(name);
    CHECK_NOTHROW(validate_case(load_case_from_string(text, name, units)));
  }
}

TEST_CASE("a built case with a bad value is refused with the loader's words", "[case-fields]") {
  const UnitParser units;
  const Case base = load_case_from_string(kExtraCase, "extra.yaml", units);
  const auto reactor = [](Case& c, int k) -> ReactorSpec& {
    return std::get<ReactorSpec>(c.train[static_cast<std::size_t>(k)]);
  };
  const auto exchanger = [](Case& c) -> ExchangerSpec& {
    return std::get<ExchangerSpec>(c.train[1]);
  };
  const auto reactions = [](Case& c, const std::function<void(Reaction&)>& edit) {
    auto rx = c.mechanism.reactions();
    edit(rx[0]);
    c.mechanism = Mechanism(c.mechanism.phase(), c.mechanism.species(), rx);
  };
  struct Bad {
    const char* what;
    std::function<void(Case&)> edit;
    const char* message;
  };
  const std::vector<Bad> bad{
      {"feed T", [](Case& c) { c.feed.T = -5; }, "feed T must be above absolute zero, got -5 K"},
      {"feed P", [](Case& c) { c.feed.P = 0; }, "feed P must be positive, got 0 Pa"},
      {"a species' flow", [](Case& c) { c.feed.F[1] = -1; },
       "feed flow of B must not be negative, got -1 mol/s"},
      {"no feed",
       [](Case& c) {
         c.feed.F = {0, 0};
       },
       "feed flow must be positive, got 0 mol/s"},
      {"a NaN volume", [&](Case& c) { reactor(c, 0).volume = std::nan(""); },
       "volume of stage R1 must be positive, got a value that is not a finite number"},
      {"a stage target of 1",
       [&](Case& c) {
         reactor(c, 2).volume.reset();
         reactor(c, 2).target_conversion = 1.0;
       },
       "target conversion of stage R2 must lie strictly between 0 and 1, got 1"},
      {"A", [&](Case& c) { reactions(c, [](Reaction& r) { r.rate.A = 0; }); },
       "A of reaction iso must be positive, got 0 (SI)"},
      {"K", [&](Case& c) { reactions(c, [](Reaction& r) { r.equilibrium.K_ref = -1; }); },
       "K of equilibrium of reaction iso must be positive, got -1"},
      {"the train target", [](Case& c) { c.target_conversion = 0; },
       "target conversion must lie strictly between 0 and 1, got 0"},
      {"limits crossed", [](Case& c) { c.limits.T_in_min = 650; },
       "T_in_min of limits (650.00 K) must be below T_max (600.00 K)"},
      {"two exchanger duties", [&](Case& c) { exchanger(c).T_out = 400; },
       "stage C1 needs exactly one of T_out and duty"},
      {"a reactor without a size", [&](Case& c) { reactor(c, 0).volume.reset(); },
       "stage R1 needs one of volume, catalyst (a mass, with bulk_density) or target"},
      {"catalyst without bulk density",
       [&](Case& c) {
         reactor(c, 0).catalyst_mass = 100;
         reactor(c, 0).volume = 0.2;
       },
       "stage R1 gives catalyst but is missing \"bulk_density\""},
      {"a volume that is not catalyst / bulk_density",
       [&](Case& c) {
         reactor(c, 0).catalyst_mass = 100;
         reactor(c, 0).bulk_density = 500;
       },
       "stage R1: its volume (2 m3) is not its catalyst over its bulk_density (0.2 m3)"},
      {"a duplicate id", [&](Case& c) { reactor(c, 2).id = "C1"; },
       "duplicate id \"C1\": already used by a stage"},
      {"no key flow", [](Case& c) { c.feed.F[0] = 0; },
       "key species A has no flow in the feed; conversion is measured against its feed flow"},
      {"a per-catalyst rate without bulk density",
       [&](Case& c) { reactions(c, [](Reaction& r) { r.rate.basis = RateBasis::Catalyst; }); },
       "stage R1 has no bulk_density, but reaction iso has a per-catalyst rate"},
  };
  for (const auto& b : bad) {
    INFO(b.what);
    Case c = base;
    b.edit(c);
    CHECK_THAT(input_error([&] { validate_case(c); }), Catch::Contains(b.message));
  }
  // A stage's value is located at the stage's entry in the file.
  Case c = base;
  reactor(c, 2).volume = -1;
  CHECK_THAT(input_error([&] { validate_case(c); }),
             Catch::Contains("extra.yaml:" + std::to_string(reactor(c, 2).where.line)));
}

TEST_CASE("the loader and a built case word a range error alike", "[case-fields]") {
  // The loader shows the text as written, a built case its SI value.
  CHECK(out_of_range_text("feed P", kPositive, "Pa", 0, "0 bar") ==
        "feed P must be positive, got \"0 bar\"");
  CHECK(out_of_range_text("feed P", kPositive, "Pa", 0) == "feed P must be positive, got 0 Pa");
  CHECK(out_of_range_text("feed T", kPositive, "K", -100, "-373.15 degC") ==
        "feed T must be above absolute zero, got \"-373.15 degC\" (-100 K)");
  CHECK(out_of_range_text("x", FieldRange{1, 2, false, true}, "1", 3) ==
        "x must be at least 1 and below 2, got 3");
}

TEST_CASE("a sweep point that leaves the key unfed is refused as a loaded case would be",
          "[case-fields]") {
  const UnitParser units;
  const Case base = load_case_from_string(kExtraCase, "extra.yaml", units);
  const sweep::CasePathTable table(base);
  const sweep::CaseEditor editor(table, {table.find("feed.composition.A", "t")});
  Case work = base;
  const std::vector<double> zero{0.0};
  CHECK_THAT(input_error([&] { editor.apply(base, zero, work); }),
             Catch::Contains("key species A has no flow in the feed"));
}

TEST_CASE("compare refuses a layout that needs thermo the case lacks", "[case-fields]") {
  // Isothermal as written, without heat capacities: the all-adiabatic
  // layouts need them and are infeasible with the loader's reason.
  const UnitParser units;
  const Case c = load_case_from_string(R"(
title: isothermal pair without thermo (invented data)
species: [{id: A}, {id: B}]
reactions:
  - {id: r, equation: A -> B, rate: {A: 0.5, Ea: 0}, dH: -20 kJ/mol}
feed: {T: 400 K, P: 2 bar, flows: {A: 1 mol/s}}
key: A
train:
  - {type: pfr, id: R1, volume: 0.1 m3, heat: isothermal}
  - {type: pfr, id: R2, volume: 0.2 m3, heat: isothermal}
)",
                                       "iso.yaml", units);
  const CompareResult r = compare_layouts(c);
  bool adiabatic_seen = false;
  for (const Layout& l : r.layouts) {
    if (l.heat != LayoutHeat::Adiabatic) {
      CHECK(l.feasible);
      continue;
    }
    adiabatic_seen = true;
    CHECK_FALSE(l.feasible);
    CHECK_THAT(compare_reason_text(l), Catch::Contains("species A is missing \"thermo\""));
  }
  CHECK(adiabatic_seen);
}

TEST_CASE("every stage result field reads what the JSON writer writes", "[case-fields]") {
  const UnitParser units;
  for (const char* file : {"so2-three-bed-converter.yaml", "liquid-tank-then-tube.yaml",
                           "selective-hydrogenation-bed.yaml"}) {
    INFO(file);
    const Case c =
        load_case((std::filesystem::path(RXTRAIN_SOURCE_DIR) / "cases" / file).string(), units);
    TrainOptions o;
    o.equilibrium_views = true;
    const TrainResult r = run_train(c, o);
    const nlohmann::json j = to_json(r);
    // The train's own: X is the JSON's conversion, T_out its outlet's T.
    REQUIRE(train_result_fields().size() == 2);
    CHECK(train_result_fields()[0].get(r, nullptr, -1) == j["conversion"].get<double>());
    CHECK(train_result_fields()[1].get(r, nullptr, -1) == j["outlet"]["T"].get<double>());
    for (std::size_t k = 0; k < r.stages.size(); ++k) {
      const StageResult& s = r.stages[k];
      const nlohmann::json& js = j["stages"][k];
      for (const auto& f : stage_result_fields()) {
        INFO(s.id << "." << f.name);
        std::vector<int> species{-1};
        if (f.scope == ResultScope::Flow) {
          species.clear();
          for (int i = 0; i < c.mechanism.n_species(); ++i) species.push_back(i);
        }
        if (f.scope == ResultScope::Product) species = c.products;
        if (f.scope == ResultScope::Reaction) {
          species.clear();
          for (int rx = 0; rx < c.mechanism.n_reactions(); ++rx) species.push_back(rx);
        }
        for (int i : species) {
          nlohmann::json want = f.name == "over_limit"
                                    ? (js["limit"].is_null() ? nlohmann::json() : js["limit"])
                                    : js;
          std::string pointer = f.name == "over_limit" ? "/over_limit" : "";
          // x_out.SP (the studies' name) is the JSON's outlet.x.SP.
          if (f.name == "x_out")
            pointer = "/outlet/x";
          else if (f.name != "over_limit")
            for (const auto& part : split_path(std::string(f.name))) pointer += "/" + part;
          if (i >= 0)
            pointer +=
                "/" + (f.scope == ResultScope::Reaction ? r.reactions[static_cast<std::size_t>(i)]
                                                        : r.species[static_cast<std::size_t>(i)]);
          const auto ptr = nlohmann::json::json_pointer(pointer);
          const std::optional<double> got = f.get(r, &s, i);
          const bool in_json = !want.is_null() && want.contains(ptr) && !want[ptr].is_null();
          REQUIRE(got.has_value() == in_json);
          if (got) CHECK(*got == want[ptr].get<double>());
        }
      }
    }
  }
}

// `rxtrain run` without --json, --csv or --report skips the curves (the
// table shows none of them): the records and reaches it prints must be the
// ones the full views give, to the last bit.
TEST_CASE("the views without their curves keep every record and reach", "[case-fields]") {
  const UnitParser units;
  const Case c = load_case(
      (std::filesystem::path(RXTRAIN_SOURCE_DIR) / "cases" / "so2-three-bed-converter.yaml")
          .string(),
      units);
  const TrainResult all = run_train(c, TrainOptions{});
  TrainOptions table_only;
  table_only.view_curves = false;
  const TrainResult table = run_train(c, table_only);
  CHECK(table.equilibrium_curve.empty());
  CHECK(table.max_rate_locus.empty());
  CHECK(table.levenspiel.empty());
  REQUIRE_FALSE(all.equilibrium_curve.empty());
  REQUIRE_FALSE(all.levenspiel.empty());
  nlohmann::json a = to_json(all), t = to_json(table);
  for (auto* j : {&a, &t})
    for (const char* k : {"equilibrium_curve", "max_rate_locus", "levenspiel"}) j->erase(k);
  CHECK(a == t);
  CHECK(a["stages"][0]["equilibrium"] != nullptr);
  CHECK(a["stages"][0]["reach"] != nullptr);
}
