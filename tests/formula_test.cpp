// Formulas and molar masses.
// Atomic weights: IUPAC/CIAAW conventional values as copied in
// /work/shared/reference-data.md §6: H 1.008, C 12.011, N 14.007, O 15.999,
// S 32.06, Cl 35.45 (g/mol).
#include "rxtrain/chem/formula.hpp"

#include <catch2/catch.hpp>
#include <string>
#include <vector>

using Catch::Matchers::Contains;
using rxtrain::atomic_weight;
using rxtrain::ElementCounts;
using rxtrain::FormulaError;
using rxtrain::molar_mass;
using rxtrain::parse_formula;

namespace {
// reference-data.md §6 (IUPAC/CIAAW conventional atomic weights), g/mol.
constexpr double kH = 1.008, kC = 12.011, kN = 14.007, kO = 15.999, kS = 32.06, kCl = 35.45;
constexpr double kTight = 1e-12;
}  // namespace

TEST_CASE("conventional atomic weights match IUPAC/CIAAW", "[formula]") {
  // reference-data.md §6.
  CHECK(atomic_weight("H") == kH);
  CHECK(atomic_weight("C") == kC);
  CHECK(atomic_weight("N") == kN);
  CHECK(atomic_weight("O") == kO);
  CHECK(atomic_weight("S") == kS);
  CHECK(atomic_weight("Cl") == kCl);
  // IUPAC/CIAAW abridged values, from memory.
  CHECK(atomic_weight("Fe") == Approx(55.845));
  CHECK(atomic_weight("Pt") == Approx(195.08));
  CHECK_THROWS_WITH(atomic_weight("Xx"), Contains("unknown element \"Xx\""));
  CHECK_THROWS_AS(atomic_weight(""), FormulaError);
}

TEST_CASE("atomic weights rise with atomic number except the known inversions", "[formula]") {
  // Periodic-table order; Ar > K and Co > Ni are the two inversions in this
  // range (IUPAC table, from memory). Catches a mistyped weight.
  const std::vector<std::string> by_z{"H",  "He", "Li", "Be", "B",  "C",  "N",  "O",  "F",
                                      "Ne", "Na", "Mg", "Al", "Si", "P",  "S",  "Cl", "Ar",
                                      "K",  "Ca", "Ti", "Cr", "Mn", "Fe", "Co", "Ni", "Cu",
                                      "Zn", "Br", "Mo", "Ag", "Sn", "I",  "Pt", "Hg", "Pb"};
  for (std::size_t i = 1; i < by_z.size(); ++i) {
    const bool inversion = (by_z[i] == "K") || (by_z[i] == "Ni");
    INFO(by_z[i - 1] << " -> " << by_z[i]);
    if (inversion) {
      CHECK(atomic_weight(by_z[i]) < atomic_weight(by_z[i - 1]));
    } else {
      CHECK(atomic_weight(by_z[i]) > atomic_weight(by_z[i - 1]));
    }
  }
}

TEST_CASE("molar masses from the conventional weights", "[formula]") {
  // Sums of reference-data.md §6 weights, converted g -> kg.
  CHECK(molar_mass(parse_formula("H2O")) == Approx((2 * kH + kO) * 1e-3).epsilon(kTight));
  CHECK(molar_mass(parse_formula("CO2")) == Approx((kC + 2 * kO) * 1e-3).epsilon(kTight));
  CHECK(molar_mass(parse_formula("C5H12")) == Approx((5 * kC + 12 * kH) * 1e-3).epsilon(kTight));
  CHECK(molar_mass(parse_formula("C5H12")) == Approx(0.072151).epsilon(kTight));
  CHECK(molar_mass(parse_formula("SO2")) == Approx((kS + 2 * kO) * 1e-3).epsilon(kTight));
  CHECK(molar_mass(parse_formula("NH3")) == Approx((kN + 3 * kH) * 1e-3).epsilon(kTight));
  CHECK(molar_mass(parse_formula("HCl")) == Approx((kH + kCl) * 1e-3).epsilon(kTight));
  CHECK(molar_mass(ElementCounts{}) == 0);
}

TEST_CASE("formulas with parentheses", "[formula]") {
  CHECK(parse_formula("CH3(CH2)3CH3") == ElementCounts{{"C", 5}, {"H", 12}});
  CHECK(parse_formula("Ca(OH)2") == ElementCounts{{"Ca", 1}, {"O", 2}, {"H", 2}});
  CHECK(parse_formula("K4(Fe(CN)6)") == ElementCounts{{"K", 4}, {"Fe", 1}, {"C", 6}, {"N", 6}});
  CHECK(parse_formula("((CH3)3C)2O") == ElementCounts{{"C", 8}, {"H", 18}, {"O", 1}});
  CHECK(parse_formula("CO") == ElementCounts{{"C", 1}, {"O", 1}});
  CHECK(parse_formula("Co") == ElementCounts{{"Co", 1}});
  CHECK(parse_formula("C12H22O11") == ElementCounts{{"C", 12}, {"H", 22}, {"O", 11}});
  CHECK(parse_formula("HOCH2CH2OH") == ElementCounts{{"C", 2}, {"H", 6}, {"O", 2}});
}

TEST_CASE("bad formulas name the position", "[formula]") {
  struct Bad {
    const char* formula;
    const char* message;
  };
  const std::vector<Bad> cases{
      {"", "empty chemical formula"},
      {"h2o", "at character 1: element symbols start with a capital letter"},
      {"H2Xx", "at character 3: unknown element \"Xx\""},
      {"Ca(OH", "at character 3: '(' is never closed"},
      {"CaOH)2", "at character 5: ')' without a matching '('"},
      {"C()2", "at character 2: empty parentheses"},
      {"H0", "at character 2: a count must be positive"},
      {"2H2O", "at character 1: a count must follow an element or ')'"},
      {"H2 O", "at character 3: unexpected character ' '"},
      {"H2O+", "at character 4: unexpected character '+'"},
      // A character beyond ASCII is quoted whole (UTF-8 of U+00B7, two
      // bytes), never one byte cut out of it; a control character by its
      // code point.
      {"H2O\xC2\xB7", "at character 4: unexpected character '\xC2\xB7'"},
      {"H2\tO", "at character 3: unexpected character U+0009"},
  };
  for (const auto& c : cases) {
    INFO("formula: \"" << c.formula << "\"");
    CHECK_THROWS_WITH(parse_formula(c.formula), Contains(c.message));
  }
  CHECK_THROWS_WITH(parse_formula("H2Xx"), Contains("bad chemical formula \"H2Xx\""));
}
