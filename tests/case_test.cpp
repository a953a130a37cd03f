// Case loader: good cases load into the right SI values and defaults; the
// location and wording of errors that the bad-case catalogue
// (bad_cases_test.cpp) does not pin down to the column.
#include "rxtrain/case/case.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <variant>

#include "rxtrain/base/units.hpp"

using namespace rxtrain;

namespace {

// Replaces the one occurrence of `from` in `text` (a test typo fails loudly).
std::string edit(std::string text, const std::string& from, const std::string& to) {
  const auto pos = text.find(from);
  REQUIRE(pos != std::string::npos);
  REQUIRE(text.find(from, pos + 1) == std::string::npos);
  return text.replace(pos, from.size(), to);
}

// Loads `text` and returns the InputError it must raise.
InputError load_error(const std::string& text, const UnitParser& units) {
  try {
    load_case_from_string(text, "t.yaml", units);
  } catch (const InputError& e) {
    return e;
  }
  FAIL("the case loaded, but an InputError was expected");
  throw std::logic_error("unreachable");
}

// Invented data throughout (a demonstration case, not a real catalyst).
const std::string kCase = R"(title: Pentane isomerization with hydrocracking (invented data)
phase: gas
species:
  - id: NC5
    name: n-pentane
    formula: C5H12
    thermo: {h_f: -146.8 kJ/mol, s: 349.0 J/mol/K, cp: 120 J/mol/K}
  - id: IC5
    formula: C5H12
    mw: 72.15 g/mol
    thermo:
      h_f: -153.6 kJ/mol
      s: 343.7 J/mol/K
      cp: {poly: [118], T_range: [250, 400]}
  - id: H2
    formula: H2
    thermo: {h_f: 0, s: 130.68 J/mol/K, cp: 29 J/mol/K}
  - id: C3
    formula: C3H8
    thermo: {h_f: -104.7 kJ/mol, cp: 74 J/mol/K}
  - id: C2
    formula: C2H6
    thermo: {h_f: -84.0 kJ/mol, cp: 53 J/mol/K}
reactions:
  - id: isom
    equation: NC5 <=> IC5
    rate:
      per: catalyst
      A: 3.0e-2 mol/(kg*s*bar)
      Ea: 15 kcal/mol
      T_ref: 450 K
      driving: pressure
      orders: {NC5: 1}
    dH: {value: -7.9 kJ/mol, T: 450 K}
    equilibrium: {K: 2.9, T: 450 K}
  - id: crack
    equation: NC5 + H2 => C3 + C2
    rate: {A: 1.0e-5, Ea: 100 kJ/mol}
feed:
  T: 130 degC
  P: 25 bar
  flow: 50 kmol/h
  composition: {NC5: 0.90, IC5: 0.05, H2: 0.05}
key: NC5
train:
  - {type: pfr, id: R1, catalyst: 2000 kg, bulk_density: 800 kg/m3}
  - {type: exchanger, id: E1, duty: -1.2 MW}
  - {type: cstr, id: R2, volume: 1.0 m3, bulk_density: 750 kg/m3}
  - {type: pfr, id: R3, target: {conversion: 0.65}, bulk_density: 750 kg/m3, heat: isothermal}
)";

}  // namespace

TEST_CASE("a good case loads with every value in SI", "[case]") {
  const UnitParser units;
  const Case c = load_case_from_string(kCase, "demo.yaml", units);
  const Mechanism& m = c.mechanism;

  CHECK(c.title == "Pentane isomerization with hydrocracking (invented data)");
  CHECK(c.file == "demo.yaml");
  CHECK(m.phase() == Phase::Gas);
  REQUIRE(m.n_species() == 5);
  REQUIRE(m.n_reactions() == 2);
  CHECK(m.species()[0].id == "NC5");
  CHECK(m.species()[4].id == "C2");
  CHECK(m.species()[0].name == "n-pentane");
  CHECK(m.species()[1].name == "IC5");  // name defaults to the id
  CHECK(c.key == 0);

  // Molar mass from the formula with IUPAC conventional atomic weights
  // C 12.011, H 1.008 (reference-data.md section 6): 5*12.011 + 12*1.008.
  CHECK(m.species()[0].mw.value() == Approx(72.151e-3).epsilon(1e-9));
  CHECK(m.species()[1].mw.value() == Approx(72.15e-3).epsilon(1e-12));  // as given
  CHECK(m.species()[2].mw.value() == Approx(2.016e-3).epsilon(1e-9));   // 2*1.008
  CHECK(m.species()[0].thermo.h_f().value() == Approx(-146800.0).epsilon(1e-12));
  CHECK(m.species()[0].thermo.cp(500.0) == Approx(120.0).epsilon(1e-12));

  // Feed: 130 degC = 403.15 K and 1 bar = 1e5 Pa (exact, NIST SP 811,
  // reference-data.md section 7); 50 kmol/h = 50000/3600 mol/s.
  CHECK(c.feed.T == Approx(403.15).epsilon(1e-12));
  CHECK(c.feed.P == Approx(25e5).epsilon(1e-12));
  const double Ft = 50000.0 / 3600.0;
  REQUIRE(c.feed.F.size() == 5);
  CHECK(c.feed.F[0] == Approx(0.90 * Ft).epsilon(1e-12));
  CHECK(c.feed.F[1] == Approx(0.05 * Ft).epsilon(1e-12));
  CHECK(c.feed.F[2] == Approx(0.05 * Ft).epsilon(1e-12));
  CHECK(c.feed.F[3] == 0.0);  // absent from the composition
  CHECK(c.conversion_basis().F_key_feed == Approx(0.90 * Ft).epsilon(1e-12));

  const Reaction& isom = m.reactions()[0];
  CHECK(isom.id == "isom");
  CHECK(isom.equation == "NC5 <=> IC5");
  CHECK(isom.reversible);
  CHECK(isom.nu == std::vector<double>{-1, 1, 0, 0, 0});
  CHECK(isom.rate.basis == RateBasis::Catalyst);
  CHECK(isom.rate.driving == Driving::Pressure);
  CHECK(isom.rate.orders == std::vector<double>{1, 0, 0, 0, 0});
  // 3.0e-2 mol/(kg s bar) = 3.0e-2 / 1e5 mol/(kg s Pa) (1 bar = 1e5 Pa exact).
  CHECK(isom.rate.A == Approx(3.0e-7).epsilon(1e-12));
  // 15 kcal/mol in thermochemical calories, 4.184 J exactly (NIST SP 811).
  CHECK(isom.rate.Ea == Approx(15.0 * 4184.0).epsilon(1e-12));
  CHECK(isom.rate.T_ref.value() == Approx(450.0));
  // dH given at 450 K, moved to 298.15 K by Kirchhoff's law with the
  // species' constant cp: dH_298 = dH(T) - (cp_IC5 - cp_NC5)(T - 298.15).
  const double dH_298 = -7900.0 - (118.0 - 120.0) * (450.0 - 298.15);
  CHECK(isom.dH_298 == Approx(dH_298).epsilon(1e-12));
  CHECK(m.dH(0, 450.0) == Approx(-7900.0).epsilon(1e-12));
  CHECK(isom.equilibrium.kind == EquilibriumSource::Kind::VantHoff);
  CHECK(isom.equilibrium.K_ref == Approx(2.9));
  CHECK(isom.equilibrium.T_ref == Approx(450.0));
  // Equilibrium dH defaults to the reaction's dH at the equilibrium T.
  CHECK(isom.equilibrium.dH == Approx(-7900.0).epsilon(1e-12));

  const Reaction& crack = m.reactions()[1];
  CHECK_FALSE(crack.reversible);
  CHECK(crack.rate.basis == RateBasis::Volume);                    // default
  CHECK(crack.rate.driving == Driving::Concentration);             // default
  CHECK(crack.rate.orders == std::vector<double>{1, 0, 1, 0, 0});  // reactant coefficients
  CHECK(crack.rate.A == Approx(1.0e-5).epsilon(1e-12));            // bare number: SI
  CHECK_FALSE(crack.rate.T_ref.has_value());
  CHECK(crack.equilibrium.kind == EquilibriumSource::Kind::None);
  // No dH: from the enthalpies of formation, sum nu_i h_f,i.
  CHECK(crack.dH_298 == Approx((-104.7 - 84.0 + 146.8 - 0.0) * 1000).epsilon(1e-12));

  REQUIRE(c.train.size() == 4);
  const auto& r1 = std::get<ReactorSpec>(c.train[0]);
  CHECK(r1.id == "R1");
  CHECK(r1.type == ReactorType::Pfr);
  CHECK(r1.heat == HeatMode::Adiabatic);  // default
  CHECK(r1.catalyst_mass.value() == Approx(2000.0));
  CHECK(r1.bulk_density.value() == Approx(800.0));
  CHECK(r1.volume.value() == Approx(2.5).epsilon(1e-12));  // 2000 kg / 800 kg/m3
  CHECK_FALSE(r1.target_conversion.has_value());
  CHECK(r1.where.file == "demo.yaml");
  CHECK(r1.where.line == 46);
  CHECK(r1.where.column == 5);
  const auto& e1 = std::get<ExchangerSpec>(c.train[1]);
  CHECK(e1.duty.value() == Approx(-1.2e6));
  CHECK_FALSE(e1.T_out.has_value());
  CHECK(stage_id(c.train[1]) == "E1");
  const auto& r2 = std::get<ReactorSpec>(c.train[2]);
  CHECK(r2.type == ReactorType::Cstr);
  CHECK(r2.volume.value() == Approx(1.0));
  CHECK_FALSE(r2.catalyst_mass.has_value());
  const auto& r3 = std::get<ReactorSpec>(c.train[3]);
  CHECK(r3.heat == HeatMode::Isothermal);
  CHECK(r3.target_conversion.value() == Approx(0.65));
  CHECK_FALSE(r3.volume.has_value());
  CHECK(isom.where.line == 25);
}

TEST_CASE("a feed temperature outside a declared thermo range is a warning", "[case]") {
  const UnitParser units;
  // IC5 declares cp for 250-400 K; the feed is at 403.15 K.
  const Case c = load_case_from_string(kCase, "demo.yaml", units);
  REQUIRE(c.warnings.size() == 1);
  CHECK_THAT(c.warnings[0],
             Catch::Contains("IC5") && Catch::Contains("403.15 K") && Catch::Contains("250-400 K"));
  // Inside the range: no warning.
  const Case inside =
      load_case_from_string(edit(kCase, "T: 130 degC", "T: 120 degC"), "demo.yaml", units);
  CHECK(inside.warnings.empty());
  // An exchanger outlet outside the range is found too.
  const Case out = load_case_from_string(
      edit(edit(kCase, "T: 130 degC", "T: 120 degC"), "duty: -1.2 MW", "T_out: 450 K"), "demo.yaml",
      units);
  REQUIRE(out.warnings.size() == 1);
  CHECK_THAT(out.warnings[0], Catch::Contains("E1") && Catch::Contains("450 K"));
}

TEST_CASE("per-species feed flows, defaults and other unit forms", "[case]") {
  const UnitParser units;
  std::string text =
      edit(kCase, "  flow: 50 kmol/h\n  composition: {NC5: 0.90, IC5: 0.05, H2: 0.05}",
           "  flows: {NC5: 47.5 kmol/h, H2: 2.5 kmol/h}");
  text = edit(text, "P: 25 bar", "P: 362.59 psi");
  text = edit(text, "T: 130 degC", "T: 266 degF");
  const Case c = load_case_from_string(text, "demo.yaml", units);
  CHECK(c.feed.F[0] == Approx(47.5 / 3.6).epsilon(1e-12));
  CHECK(c.feed.F[1] == 0.0);
  CHECK(c.feed.F[2] == Approx(2.5 / 3.6).epsilon(1e-12));
  // 1 psi = 6894.757 Pa (NIST SP 811, reference-data.md section 7).
  CHECK(c.feed.P == Approx(362.59 * 6894.757).epsilon(1e-6));
  // T/K = (t/degF + 459.67)/1.8 (NIST SP 811): 266 degF = 403.15 K.
  CHECK(c.feed.T == Approx(403.15).epsilon(1e-9));
  // Title is optional and defaults to the name the case was loaded under.
  const Case untitled = load_case_from_string(
      edit(kCase, "title: Pentane isomerization with hydrocracking (invented data)\n", ""),
      "x.yaml", units);
  CHECK(untitled.title == "x.yaml");
}

TEST_CASE("NASA-7 and Shomate thermo load in order and give published values", "[case]") {
  const UnitParser units;
  // Water-gas shift. CO and H2: NIST WebBook Shomate sets (Chase 1998) with
  // h_f and s from reference-data.md sections 1 and 3; H2O and CO2: GRI-Mech
  // 3.0 NASA-7 polynomials (reference-data.md section 4).
  const std::string text = R"(title: water-gas shift thermo check
species:
  - id: CO
    formula: CO
    thermo:
      h_f: -110.53 kJ/mol
      s: 197.66 J/mol/K
      cp:
        - {shomate: [25.56759, 6.096130, 4.054656, -2.671301, 0.131021], T_range: [298, 1300]}
        - {shomate: [35.15070, 1.300095, -0.205921, 0.013550, -3.282780], T_range: [1300, 6000]}
  - id: H2O
    formula: H2O
    thermo:
      nasa7:
        T_low: 200
        T_mid: 1000
        T_high: 3500
        low: [4.19864056, -2.03643410E-03, 6.52040211E-06, -5.48797062E-09, 1.77197817E-12, -30293.7267, -0.849032208]
        high: [3.03399249, 2.17691804E-03, -1.64072518E-07, -9.70419870E-11, 1.68200992E-14, -30004.2971, 4.96677010]
  - id: CO2
    formula: CO2
    thermo:
      nasa7:
        T_low: 200 K
        T_mid: 1000 K
        T_high: 3500 K
        low: [2.35677352, 8.98459677E-03, -7.12356269E-06, 2.45919022E-09, -1.43699548E-13, -48371.9697, 9.90105222]
        high: [3.85746029, 4.41437026E-03, -2.21481404E-06, 5.23490188E-10, -4.72084164E-14, -48759.1660, 2.27163806]
  - id: H2
    formula: H2
    thermo:
      h_f: 0
      s: 130.680 J/mol/K
      cp:
        - {shomate: [33.066178, -11.363417, 11.432816, -2.772874, -0.158558], T_range: [298, 1000]}
        - {shomate: [18.563083, 12.257357, -2.859786, 0.268238, 1.977990], T_range: [1000, 2500]}
reactions:
  - id: shift
    equation: CO + H2O <=> CO2 + H2
    rate: {A: 1.0e-3, Ea: 80 kJ/mol}
    equilibrium: thermo
feed:
  T: 700 K
  P: 20 bar
  flows: {CO: 1, H2O: 2}
key: CO
train:
  - {type: pfr, id: HTS, volume: 1 m3}
)";
  const Case c = load_case_from_string(text, "wgs.yaml", units);
  const Mechanism& m = c.mechanism;
  CHECK(c.warnings.empty());  // 700 K lies in every declared range
  // CO2 from GRI-Mech NASA-7: h_f -393.52 kJ/mol, s 213.79 J/mol/K (Chase
  // 1998 via NIST WebBook, reference-data.md section 3; GRI vs JANAF agree
  // within about 0.15 J/mol/K, section 4).
  CHECK(m.species()[2].thermo.h_f().value() == Approx(-393520.0).margin(50.0));
  CHECK(m.species()[2].thermo.s_298().value() == Approx(213.79).margin(0.15));
  // H2 cp at 1000 K from the second Shomate set: 30.205 J/mol/K (JANAF,
  // reference-data.md section 2; Shomate within 0.02).
  CHECK(m.species()[3].thermo.cp(1000.0) == Approx(30.205).margin(0.02));
  // dH_298 from h_f: -393.52 + 0 + 110.53 + 241.826 = -41.16 kJ/mol
  // (formation enthalpies of reference-data.md section 3).
  CHECK(m.reactions()[0].dH_298 == Approx(-41164.0).margin(60.0));
  CHECK(m.reactions()[0].equilibrium.kind == EquilibriumSource::Kind::Thermo);
  // K at 700 K against Moe's correlation ln K = 4577.8/T - 4.33 (Moe 1962,
  // reference-data.md section 5: 9.113); thermo and correlation differ by
  // 3-11 %, so 10 % is allowed.
  CHECK(std::exp(m.ln_K(0, 700.0)) == Approx(std::exp(4577.8 / 700.0 - 4.33)).epsilon(0.10));
}

TEST_CASE("an all-isothermal train accepts species without thermo, with a warning", "[case]") {
  const UnitParser units;
  const std::string text = R"(title: isothermal liquid train (invented data)
phase: liquid
species:
  - {id: A, mw: 60 g/mol, density: 1000 kg/m3}
  - {id: B, mw: 60 g/mol, density: 900 kg/m3}
reactions:
  - id: r
    equation: A => B
    rate: {A: 0.01 1/s, Ea: 0}
    dH: -20 kJ/mol
feed:
  T: 300 K
  P: 1 bar
  flows: {A: 1 mol/s}
key: A
train:
  - {type: cstr, id: C1, volume: 1 L, heat: isothermal}
)";
  const Case c = load_case_from_string(text, "iso.yaml", units);
  CHECK(c.mechanism.phase() == Phase::Liquid);
  CHECK(c.mechanism.species()[1].density.value() == Approx(900.0));
  CHECK(std::get<ReactorSpec>(c.train[0]).volume.value() == Approx(1e-3));
  CHECK(c.mechanism.reactions()[0].dH_298 == Approx(-20000.0));
  REQUIRE(c.warnings.size() == 2);
  CHECK_THAT(c.warnings[0], Catch::Contains("species A has no thermo"));
  // The same train made adiabatic needs cp of every species.
  const InputError e = load_error(edit(text, "heat: isothermal", "heat: adiabatic"), units);
  CHECK(e.where().line == 4);
  CHECK_THAT(e.message(), Catch::Contains("species A is missing \"thermo\"") &&
                              Catch::Contains("stage C1 is an adiabatic cstr"));
  // Pressure driving forces make no sense in a liquid.
  const InputError p = load_error(edit(text, "Ea: 0}", "Ea: 0, driving: pressure}"), units);
  CHECK_THAT(p.message(), Catch::Contains("needs phase: gas"));
}

TEST_CASE("an unknown key names the nearest valid key", "[case]") {
  const UnitParser units;
  const InputError e = load_error(edit(kCase, "catalyst: 2000 kg", "catalist: 2000 kg"), units);
  CHECK(e.message() == "unknown key \"catalist\" in stage R1; did you mean \"catalyst\"?");
  CHECK(e.where().file == "t.yaml");
  CHECK(e.where().line == 46);
  CHECK(e.where().column == 25);
  // Nothing near: list the valid keys instead.
  const InputError far = load_error(edit(kCase, "phase: gas", "colour: blue"), units);
  CHECK(far.message() ==
        "unknown key \"colour\" in the case; valid keys: title, phase, species, reactions, feed, "
        "key, train, target, limits, space_velocity_basis, products, fluid");
  CHECK(far.where().line == 2);
  CHECK(far.where().column == 1);
}

TEST_CASE("errors point at the line and column of the offending value", "[case]") {
  const UnitParser units;
  SECTION("a unit of the wrong dimension") {
    const InputError e = load_error(edit(kCase, "volume: 1.0 m3", "volume: 3 bar"), units);
    CHECK_THAT(e.message(),
               Catch::StartsWith("volume of stage R2 needs a volume (m3), got \"3 bar\""));
    CHECK(e.where().line == 48);
    CHECK(e.where().column == 34);
    CHECK_THAT(std::string(e.what()), Catch::StartsWith("t.yaml:48:34: error: volume of stage R2"));
  }
  SECTION("an unknown species inside a plain equation") {
    const InputError e =
        load_error(edit(kCase, "equation: NC5 <=> IC5", "equation: NC5 <=> XC5"), units);
    CHECK(e.where().line == 26);
    CHECK(e.where().column == 23);  // the X of XC5
    CHECK_THAT(e.message(),
               Catch::Contains("unknown species \"XC5\"") && Catch::Contains("did you mean"));
  }
  SECTION("an unknown species inside a quoted equation") {
    const InputError e =
        load_error(edit(kCase, "equation: NC5 <=> IC5", "equation: \"NC5 <=> XC5\""), units);
    CHECK(e.where().line == 26);
    CHECK(e.where().column == 24);  // one further: the opening quote
  }
  SECTION("an unbalanced equation names the unbalanced elements") {
    const InputError e =
        load_error(edit(kCase, "equation: NC5 + H2 => C3 + C2", "equation: NC5 => C3 + C2"), units);
    CHECK_THAT(e.message(), Catch::Contains("not balanced in H (12 on the left, 14 on the right)"));
    CHECK_THAT(e.message(), !Catch::Contains(" C ("));
    CHECK(e.where().line == 37);
  }
  SECTION("a missing key is reported at the mapping that lacks it") {
    const InputError e =
        load_error(edit(kCase, "rate: {A: 1.0e-5, Ea: 100 kJ/mol}", "rate: {A: 1.0e-5}"), units);
    CHECK_THAT(e.message(), Catch::Contains("rate of reaction crack is missing \"Ea\""));
    CHECK(e.where().line == 38);
    CHECK(e.where().column == 11);
  }
  SECTION("an empty value is reported at its key, not at the next line") {
    const InputError e =
        load_error(edit(kCase, "equation: NC5 + H2 => C3 + C2", "equation:"), units);
    CHECK_THAT(e.message(), Catch::Contains("equation of reaction crack needs an equation") &&
                                Catch::Contains("got nothing"));
    CHECK(e.where().line == 37);
    CHECK(e.where().column == 5);
  }
  SECTION("a per-catalyst rate in a stage without bulk density names stage and reaction") {
    const InputError e =
        load_error(edit(kCase, "volume: 1.0 m3, bulk_density: 750 kg/m3", "volume: 1.0 m3"), units);
    CHECK_THAT(e.message(), Catch::Contains("stage R2") && Catch::Contains("reaction isom"));
    CHECK(e.where().line == 48);
  }
  SECTION("a YAML syntax error keeps yaml-cpp's mark") {
    const InputError e = load_error(edit(kCase, "key: NC5", "key: [NC5"), units);
    CHECK_THAT(e.message(), Catch::StartsWith("YAML syntax error"));
    CHECK(e.where().line >= 44);
  }
  SECTION("a mole-fraction sum off by more than 1e-6 names the sum") {
    const InputError e = load_error(edit(kCase, "H2: 0.05}", "H2: 0.0500011}"), units);
    CHECK_THAT(e.message(), Catch::Contains("sums to 1.0000011"));
    // Within 1e-6 is accepted.
    CHECK_NOTHROW(load_case_from_string(edit(kCase, "H2: 0.05}", "H2: 0.0500009}"), "t", units));
  }
  SECTION("the rate-constant unit follows basis, driving force and orders") {
    // Second order in concentration per reactor volume: m3/(mol s).
    CHECK_NOTHROW(load_case_from_string(edit(kCase, "{A: 1.0e-5, Ea", "{A: 1.0e-2 L/(mol*s), Ea"),
                                        "t", units));
    const InputError e = load_error(edit(kCase, "{A: 1.0e-5, Ea", "{A: 1.0e-2 1/s, Ea"), units);
    CHECK_THAT(e.message(), Catch::Contains("A of reaction crack needs a rate constant") &&
                                Catch::Contains("orders summing to 2"));
  }
}

TEST_CASE("the loader refuses oversized and malformed files", "[case]") {
  const UnitParser units;
  SECTION("more than 1000 species") {
    std::string species;
    for (int i = 0; i < 1001; ++i) species += "  - {id: S" + std::to_string(i) + "}\n";
    const InputError e = load_error("species:\n" + species, units);
    CHECK_THAT(e.message(), Catch::Contains("too many species: 1001 (the limit is 1000)"));
    CHECK(e.where().line == 2);
  }
  SECTION("more than 10 MiB") {
    const InputError e = load_error(std::string(10u * 1024u * 1024u + 1u, '#'), units);
    CHECK_THAT(e.message(), Catch::Contains("the limit is 10485760 bytes"));
  }
  SECTION("an empty file") {
    CHECK_THAT(load_error("", units).message(), Catch::StartsWith("empty case file"));
  }
  SECTION("two YAML documents") {
    const InputError e = load_error(kCase + "---\ntitle: second\n", units);
    CHECK_THAT(e.message(), Catch::Contains("found a second one"));
    CHECK(e.where().line == 51);
    // A trailing document marker alone adds no document.
    CHECK_NOTHROW(load_case_from_string(kCase + "---\n", "t", units));
  }
  SECTION("a duplicate key") {
    const InputError e = load_error(edit(kCase, "key: NC5", "key: NC5\nkey: IC5"), units);
    CHECK(e.message() == "duplicate key \"key\" in the case (first given at line 44)");
    CHECK(e.where().line == 45);
  }
}

TEST_CASE("load_case reads a file and names it in messages", "[case]") {
  const UnitParser units;
  const auto dir = std::filesystem::temp_directory_path();
  const auto good = dir / "rxtrain_case_test_good.yaml";
  const auto bad = dir / "rxtrain_case_test_bad.yaml";
  std::ofstream(good) << kCase;
  std::ofstream(bad) << edit(kCase, "P: 25 bar", "P: -25 bar");
  const Case c = load_case(good.string(), units);
  CHECK(c.file == good.string());
  CHECK(c.mechanism.n_species() == 5);
  try {
    load_case(bad.string(), units);
    FAIL("expected an InputError");
  } catch (const InputError& e) {
    CHECK(e.where().file == bad.string());
    CHECK(e.where().line == 41);
    CHECK_THAT(std::string(e.what()),
               Catch::StartsWith(bad.string() + ":41:6: error: feed P must be positive"));
  }
  std::filesystem::remove(good);
  std::filesystem::remove(bad);
  const auto missing = dir / "rxtrain_case_test_missing.yaml";
  try {
    load_case(missing.string(), units);
    FAIL("expected an InputError");
  } catch (const InputError& e) {
    CHECK(e.where().file == missing.string());
    CHECK_THAT(e.message(), Catch::Contains("cannot open case file"));
  }
}

TEST_CASE("the example in docs/case-format.md loads", "[case]") {
  const UnitParser units;
  std::ifstream in(std::string(RXTRAIN_SOURCE_DIR) + "/docs/case-format.md");
  REQUIRE(in);
  std::stringstream doc;
  doc << in.rdbuf();
  const std::string text = doc.str();
  const std::string open = "```yaml\ntitle:";
  const auto begin = text.find(open);
  REQUIRE(begin != std::string::npos);
  const auto end = text.find("```", begin + open.size());
  REQUIRE(end != std::string::npos);
  const std::string example = text.substr(begin + 8, end - begin - 8);
  const Case c = load_case_from_string(example, "case-format.md", units);
  CHECK(c.mechanism.n_species() == 2);
  CHECK(c.train.size() == 4);
  CHECK(c.warnings.empty());
}

TEST_CASE("train-level target and temperature limits load in SI", "[case]") {
  const UnitParser units;
  const std::string text =
      kCase + "target: {conversion: 0.92}\nlimits: {T_max: 480 degC, T_in_min: 250 degF}\n";
  const Case c = load_case_from_string(text, "t.yaml", units);
  REQUIRE(c.target_conversion.has_value());
  CHECK(*c.target_conversion == 0.92);
  CHECK(c.target_where.line == 50);
  // 480 degC = 753.15 K; 250 degF = (250 + 459.67) / 1.8 K (NIST SP 811,
  // reference-data.md section 7).
  CHECK(c.limits.T_max.value() == Approx(753.15).epsilon(1e-12));
  CHECK(c.limits.T_in_min.value() == Approx((250 + 459.67) / 1.8).epsilon(1e-12));
  CHECK(c.limits.where.line == 51);

  // Both are optional, and so is each limit.
  const Case plain = load_case_from_string(kCase, "t.yaml", units);
  CHECK_FALSE(plain.target_conversion.has_value());
  CHECK_FALSE(plain.limits.T_max.has_value());
  CHECK_FALSE(plain.limits.T_in_min.has_value());
  const Case only_max =
      load_case_from_string(kCase + "limits: {T_max: 480 degC}\n", "t.yaml", units);
  CHECK(only_max.limits.T_max.has_value());
  CHECK_FALSE(only_max.limits.T_in_min.has_value());
}

TEST_CASE("train-level target and limits are validated where they are written", "[case]") {
  const UnitParser units;
  {
    const InputError e = load_error(kCase + "target: {conversion: 0}\n", units);
    CHECK(e.where().line == 50);
    CHECK_THAT(e.message(), Catch::Contains("strictly between 0 and 1, got 0"));
  }
  {
    const InputError e = load_error(kCase + "target: {conversoin: 0.9}\n", units);
    CHECK(e.where().line == 50);
    CHECK_THAT(e.message(), Catch::Contains("did you mean \"conversion\""));
  }
  {
    const InputError e = load_error(kCase + "limits: {Tmax: 480 degC}\n", units);
    CHECK(e.where().line == 50);
    CHECK_THAT(e.message(),
               Catch::Contains("unknown key \"Tmax\" in limits; did you mean \"T_max\""));
  }
  {
    const InputError e =
        load_error(kCase + "limits: {T_max: 480 degC, T_in_min: 500 degC}\n", units);
    CHECK(e.where().line == 50);
    CHECK(e.where().column == 37);  // at the T_in_min value
    CHECK_THAT(e.message(), Catch::Contains("must be below T_max"));
  }
  {
    const InputError e = load_error(kCase + "limits: {T_max: 5 bar}\n", units);
    CHECK_THAT(e.message(), Catch::Contains("T_max of limits needs a temperature (K)"));
  }
  {
    const InputError e = load_error(kCase + "limits: 480 degC\n", units);
    CHECK_THAT(e.message(), Catch::Contains("limits needs a mapping"));
  }
  {
    const InputError e = load_error(kCase + "targte: {conversion: 0.9}\n", units);
    CHECK_THAT(e.message(), Catch::Contains("did you mean \"target\""));
  }
}
