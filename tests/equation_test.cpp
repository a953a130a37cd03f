// Reaction equation parser: the grammar in include/rxtrain/equation.hpp.
#include "rxtrain/chem/equation.hpp"

#include <catch2/catch.hpp>
#include <string>
#include <vector>

using Catch::Matchers::Contains;
using rxtrain::EquationError;
using rxtrain::parse_equation;

TEST_CASE("a one-way equation with coefficients", "[equation]") {
  const auto eq = parse_equation("2 H2 + O2 => 2 H2O");
  CHECK_FALSE(eq.reversible);
  REQUIRE(eq.reactants.size() == 2);
  REQUIRE(eq.products.size() == 1);
  CHECK(eq.reactants[0].species == "H2");
  CHECK(eq.reactants[0].coefficient == 2);
  CHECK(eq.reactants[0].column == 2);
  CHECK(eq.reactants[1].species == "O2");
  CHECK(eq.reactants[1].coefficient == 1);
  CHECK(eq.reactants[1].column == 7);
  CHECK(eq.products[0].species == "H2O");
  CHECK(eq.products[0].coefficient == 2);
  CHECK(eq.products[0].column == 15);
}

TEST_CASE("a reversible equation with a decimal coefficient", "[equation]") {
  const auto eq = parse_equation("SO2 + 0.5 O2 <=> SO3");
  CHECK(eq.reversible);
  REQUIRE(eq.reactants.size() == 2);
  CHECK(eq.reactants[1].species == "O2");
  CHECK(eq.reactants[1].coefficient == 0.5);
  REQUIRE(eq.products.size() == 1);
  CHECK(eq.products[0].species == "SO3");
}

TEST_CASE("arrows without spaces and ids with dashes", "[equation]") {
  const auto a = parse_equation("A<=>B");
  CHECK(a.reversible);
  CHECK(a.reactants.at(0).species == "A");
  CHECK(a.products.at(0).species == "B");
  CHECK(a.products.at(0).column == 4);

  const auto b = parse_equation("n-C5=>i-C5");
  CHECK_FALSE(b.reversible);
  CHECK(b.reactants.at(0).species == "n-C5");
  CHECK(b.products.at(0).species == "i-C5");

  const auto c = parse_equation("  2 1-butene + 1.5e0 H_2 => cis-2-butene  ");
  CHECK(c.reactants.at(0).species == "1-butene");
  CHECK(c.reactants.at(0).coefficient == 2);
  CHECK(c.reactants.at(0).column == 4);
  CHECK(c.reactants.at(1).species == "H_2");
  CHECK(c.reactants.at(1).coefficient == 1.5);
  CHECK(c.products.at(0).species == "cis-2-butene");

  // A species may appear on both sides (a catalyst-like term).
  const auto d = parse_equation("A + cat => B + cat");
  CHECK(d.products.at(1).species == "cat");

  // Without a space, "2H2" is an id (it has a letter), not 2 x H2.
  const auto e = parse_equation("2H2 => H4");
  CHECK(e.reactants.at(0).species == "2H2");
  CHECK(e.reactants.at(0).coefficient == 1);

  const auto f = parse_equation("A\t+\tB => 1e-1 C");
  CHECK(f.products.at(0).coefficient == Approx(0.1));
}

TEST_CASE("bad equations report the column", "[equation]") {
  struct Bad {
    std::string text;
    std::size_t column;
    const char* message;
  };
  const std::vector<Bad> cases{
      {"", 0, "no reactants"},
      {"=> B", 0, "no reactants"},
      {"A =>", 4, "no products"},
      {"A => ", 5, "no products"},
      {"A + B", 5, "missing arrow"},
      {"A => B => C", 7, "second arrow"},
      {"A<=>B<=>C", 5, "second arrow"},
      {"0 A => B", 0, "positive"},
      {"A => 0.0 B", 5, "positive"},
      {"-1 A => B", 0, "positive"},
      {"1e999 A => B", 0, "out of range"},
      {"A + A => B", 4, "appears twice"},
      {"A => B + 2 B", 11, "appears twice"},
      {"A + => B", 2, "'+' must be followed by a species"},
      {"A => B +", 7, "'+' must be followed by a species"},
      {"A + + B => C", 2, "'+' must be followed by a species"},
      {"A $ B => C", 2, "unexpected character '$'"},
      {"A \xE2\x82\xAC B -> C", 2, "unexpected character '\xE2\x82\xAC'; species ids use"},
      {"A => B.", 6, "unexpected character '.'"},
      {"A = B", 2, "the arrow is '->'"},
      {"A <= B", 2, "the arrow is '->'"},
      {"A <- B", 2, "the arrow is '->'"},
      {"A -> B <-> C", 7, "second arrow"},
      {"2 => B", 0, "not followed by a species"},
      {"A => 2", 5, "not followed by a species"},
      {"A => 2 3", 7, "needs a letter"},
      {"A B => C", 2, "unexpected character 'B'"},
      {"A\xC3\xA9 => B", 1, "unexpected character '\xC3\xA9'"},
  };
  for (const auto& c : cases) {
    INFO("equation: \"" << c.text << "\"");
    try {
      (void)parse_equation(c.text);
      FAIL("no error");
    } catch (const EquationError& e) {
      CHECK(e.column() == c.column);
      CHECK_THAT(e.what(), Contains(c.message));
    }
  }
}

TEST_CASE("arrows: -> and <-> are canonical, =>, <=> and the Unicode arrows are accepted",
          "[equation]") {
  struct Case {
    const char* text;
    bool reversible;
  };
  const Case cases[] = {
      {"A -> B", false},
      {"A->B", false},
      {"n-C5 -> i-C5", false},
      {"A <-> B", true},
      {"A<->B", true},
      {"A => B", false},
      {"A <=> B", true},
      {"A \xE2\x86\x92 B", false},  // U+2192
      {"A \xE2\x87\x8C B", true},   // U+21CC
  };
  for (const auto& c : cases) {
    INFO("equation: \"" << c.text << "\"");
    const auto eq = parse_equation(c.text);
    REQUIRE(eq.reactants.size() == 1);
    REQUIRE(eq.products.size() == 1);
    CHECK(eq.reversible == c.reversible);
  }
  // A '-' inside an id stays part of it; "->" after it is the arrow.
  const auto e = parse_equation("n-C5->i-C5");
  CHECK(e.reactants[0].species == "n-C5");
  CHECK(e.products[0].species == "i-C5");
}
