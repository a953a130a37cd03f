// Unit conversion against published conversion factors.
// Factors: NIST SP 811 (Guide for the Use of the SI), App. B, as copied in
// /work/shared/reference-data.md §7.
#include "rxtrain/base/units.hpp"

#include <catch2/catch.hpp>
#include <cmath>
#include <string>
#include <utility>

using Catch::Matchers::Contains;
using Catch::Matchers::StartsWith;
using rxtrain::SiUnit;
using rxtrain::UnitError;
using rxtrain::UnitOptions;
using rxtrain::UnitParser;

namespace {

constexpr double kTight = 1e-12;  // exact factors; only rounding error allowed

std::string message_of(const UnitParser& units, const std::string& text, const SiUnit& expected) {
  try {
    (void)units.to_si(text, expected);
  } catch (const UnitError& e) {
    return e.what();
  }
  return "(no error)";
}

}  // namespace

TEST_CASE("pressures convert with NIST SP 811 factors", "[units]") {
  const UnitParser units;
  const SiUnit pa = SiUnit::of("Pa", "a pressure");
  // bar = 1e5 Pa exactly (SP 811 App. B).
  CHECK(units.to_si("25 bar", pa) == Approx(2.5e6).epsilon(kTight));
  // atm = 101 325 Pa exactly (SP 811 App. B).
  CHECK(units.to_si("1 atm", pa) == Approx(101325.0).epsilon(kTight));
  // psi = 6.894 757 E+03 Pa (SP 811 App. B, rounded to 7 digits there).
  CHECK(units.to_si("1 psi", pa) == Approx(6894.757).epsilon(1e-7));
  CHECK(units.to_si("3 kPa", pa) == Approx(3000.0).epsilon(kTight));
  CHECK(units.to_si("+2 MPa", pa) == Approx(2e6).epsilon(kTight));
}

TEST_CASE("absolute temperatures apply the offsets", "[units]") {
  const UnitParser units;
  const SiUnit kelvin = SiUnit::of("K", "a temperature");
  // SP 811: T/K = t/°C + 273.15.
  CHECK(units.to_si("130 degC", kelvin) == Approx(403.15).epsilon(kTight));
  CHECK(units.to_si("-273.15 degC", kelvin) == Approx(0.0).margin(1e-12));
  // SP 811: T/K = (t/°F + 459.67)/1.8.
  CHECK(units.to_si("212 degF", kelvin) == Approx((212 + 459.67) / 1.8).epsilon(kTight));
  CHECK(units.to_si("-40 degF", kelvin) == Approx(233.15).epsilon(kTight));  // -40 °F = -40 °C
  // SP 811: T/K = (T/°R)/1.8.
  CHECK(units.to_si("491.67 degR", kelvin) == Approx(273.15).epsilon(kTight));
  CHECK(units.to_si("491.67 Rankine", kelvin) == Approx(273.15).epsilon(kTight));
  // A bare number is already SI.
  CHECK(units.to_si("403.15", kelvin) == 403.15);
  CHECK(units.to_si("  403.15  ", kelvin) == 403.15);
}

TEST_CASE("temperature intervals inside compound units carry no offset", "[units]") {
  const UnitParser units;
  // SP 811: an interval of 1 °F = 1 °R = 5/9 K, 1 °C = 1 K.
  const SiUnit cp = SiUnit::of("J/(kg*K)", "a specific heat");
  CHECK(units.to_si("1 kJ/(kg*degF)", cp) == Approx(1000.0 * 1.8).epsilon(kTight));
  CHECK(units.to_si("2 J/(kg*degC)", cp) == Approx(2.0).epsilon(kTight));
}

TEST_CASE("flows, energies, volumes and lengths convert", "[units]") {
  const UnitParser units;
  // 1 h = 3600 s, k = 1e3 (SI definitions).
  CHECK(units.to_si("50 kmol/h", SiUnit::of("mol/s")) ==
        Approx(50.0 * 1000.0 / 3600.0).epsilon(kTight));
  CHECK(units.to_si("-8.4 kJ/mol", SiUnit::of("J/mol")) == Approx(-8400.0).epsilon(kTight));
  CHECK(units.to_si("2 m3", SiUnit::of("m3")) == Approx(2.0).epsilon(kTight));
  CHECK(units.to_si("2 m^3", SiUnit::of("m3")) == Approx(2.0).epsilon(kTight));
  CHECK(units.to_si("500 L", SiUnit::of("m3")) == Approx(0.5).epsilon(kTight));
  CHECK(units.to_si("3 mm", SiUnit::of("m")) == Approx(0.003).epsilon(kTight));
  // lb = 0.453 592 37 kg (SP 811 lists 4.535 924 E-01 kg; the exact
  // definition is from memory), so 1 lbmol = 453.592 37 mol.
  CHECK(units.to_si("1 lbmol", SiUnit::of("mol")) == Approx(453.59237).epsilon(1e-7));
}

TEST_CASE("calories: IT by default, thermochemical on request", "[units]") {
  const UnitParser units;
  const SiUnit j = SiUnit::of("J", "an energy");
  const SiUnit jmol = SiUnit::of("J/mol", "a molar energy");
  UnitOptions thermo;
  thermo.plain_cal_is_thermochemical = true;
  // SP 811 App. B: cal_th = 4.184 J, cal_IT = 4.1868 J, both exact.
  CHECK(units.to_si("1 cal_th", j) == Approx(4.184).epsilon(kTight));
  CHECK(units.to_si("1 kcal_th", j) == Approx(4184.0).epsilon(kTight));
  CHECK(units.to_si("1 cal_IT", j) == Approx(4.1868).epsilon(kTight));
  CHECK(units.to_si("1 cal", j) == Approx(4.1868).epsilon(kTight));
  CHECK(units.to_si("-8.4 kcal/mol", jmol) == Approx(-8.4 * 4186.8).epsilon(kTight));

  CHECK(units.to_si("1 cal", j, thermo) == Approx(4.184).epsilon(kTight));
  CHECK(units.to_si("-8.4 kcal/mol", jmol, thermo) == Approx(-8.4 * 4184.0).epsilon(kTight));
  CHECK(units.to_si("2 kcal/(mol)", jmol, thermo) == Approx(8368.0).epsilon(kTight));
  // Explicit names keep their meaning with the option on.
  CHECK(units.to_si("1 cal_IT", j, thermo) == Approx(4.1868).epsilon(kTight));
  CHECK(units.to_si("1 kcal_th/mol", jmol, thermo) == Approx(4184.0).epsilon(kTight));
  // The option changes this call only; the next default call is IT again.
  CHECK(units.to_si("1 cal", j) == Approx(4.1868).epsilon(kTight));
}

TEST_CASE("rate constants convert to numerator / base^power", "[units]") {
  const UnitParser units;
  // Unit algebra with bar = 1e5 Pa, L = 1e-3 m3 (SP 811).
  const SiUnit first_order_p = SiUnit::per_power("mol/(kg*s)", "Pa", 1.0, "a rate constant");
  CHECK(units.to_si("3e-2 mol/(kg*s*bar)", first_order_p) == Approx(3e-7).epsilon(kTight));

  const SiUnit first_order_c = SiUnit::per_power("mol/(m3*s)", "mol/m3", 1.0);
  CHECK(units.to_si("0.5 1/s", first_order_c) == Approx(0.5).epsilon(kTight));
  CHECK(units.to_si("30 1/min", first_order_c) == Approx(0.5).epsilon(kTight));

  const SiUnit second_order_c = SiUnit::per_power("mol/(m3*s)", "mol/m3", 2.0);
  CHECK(units.to_si("2 L/(mol*s)", second_order_c) == Approx(2e-3).epsilon(kTight));
  // A first-order unit is not a second-order one.
  CHECK_THROWS_AS(units.to_si("0.5 1/s", second_order_c), UnitError);
}

TEST_CASE("fractional reaction orders convert exactly", "[units]") {
  const UnitParser units;
  const SiUnit k15 = SiUnit::per_power("mol/(kg*s)", "Pa", 1.5, "a rate constant");
  // 1 bar^1.5 = (1e5 Pa)^1.5.
  const double bar15 = std::pow(1e5, 1.5);
  CHECK(units.to_si("4 mol/(kg*s*bar^1.5)", k15) == Approx(4 / bar15).epsilon(1e-12));
  CHECK(units.to_si("4 mol/(kg*s*bar^(3/2))", k15) == Approx(4 / bar15).epsilon(1e-12));
  CHECK(units.to_si("4 mol/(kg*s*bar**1.5)", k15) == Approx(4 / bar15).epsilon(1e-12));
  CHECK(units.to_si("4 mol*bar^-1.5/(kg*s)", k15) == Approx(4 / bar15).epsilon(1e-12));
  CHECK(units.to_si("4 mol/(kg*s*Pa^1.5)", k15) == Approx(4.0).epsilon(1e-12));
  // kmol/h = 1000/3600 mol/s; atm = 101325 Pa (SP 811).
  const SiUnit k05 = SiUnit::per_power("mol/(kg*s)", "Pa", 0.5);
  CHECK(units.to_si("2 kmol/(kg*h*atm^0.5)", k05) ==
        Approx(2 * 1000.0 / 3600.0 / std::sqrt(101325.0)).epsilon(1e-12));
  // A fractional power on a group: (kmol/m3)^0.5 = sqrt(1000) (mol/m3)^0.5.
  const SiUnit c05 = SiUnit::per_power("mol/(m3*s)", "mol/m3", 0.5);
  CHECK(units.to_si("1 (kmol/m3)^0.5/s", c05) == Approx(std::sqrt(1000.0)).epsilon(1e-12));
  // Nested fractional powers: (bar^0.5)^3 = bar^1.5.
  CHECK(units.to_si("4 mol/(kg*s*(bar^0.5)^3)", k15) == Approx(4 / bar15).epsilon(1e-12));
  // Orders summed in floating point (0.1 + 0.2) still match "0.3".
  const SiUnit k03 = SiUnit::per_power("mol/(kg*s)", "Pa", 0.1 + 0.2);
  CHECK(units.to_si("1 mol/(kg*s*Pa^0.3)", k03) == Approx(1.0).epsilon(1e-12));
  // Integer-exponent units do not fit a fractional order, and vice versa.
  CHECK_THROWS_WITH(units.to_si("4 mol/(kg*s*bar)", k15),
                    Contains("cannot be converted to mol/(kg*s) / Pa^1.5"));
  const SiUnit k1 = SiUnit::per_power("mol/(kg*s)", "Pa", 1.0);
  CHECK_THROWS_AS(units.to_si("4 mol/(kg*s*bar^1.5)", k1), UnitError);
  // udunits alone would read "bar1.5" as bar times a number; we refuse it.
  CHECK_THROWS_WITH(units.to_si("4 mol/(kg*s*bar1.5)", k15), Contains("'^'"));
}

TEST_CASE("wrong dimensions and bad input are clear errors", "[units]") {
  const UnitParser units;
  const SiUnit kelvin = SiUnit::of("K", "a temperature");
  CHECK_THROWS_WITH(units.to_si("3 bar", kelvin),
                    StartsWith("expected a temperature (K), got \"3 bar\""));
  CHECK_THROWS_WITH(units.to_si("3 furlongs/fortnight", kelvin),
                    Contains("\"furlongs/fortnight\" cannot be converted to K"));
  CHECK(message_of(units, "", kelvin) == "expected a temperature (K), got an empty value");
  CHECK(message_of(units, "   ", kelvin) == "expected a temperature (K), got an empty value");
  CHECK_THROWS_WITH(units.to_si("abc", kelvin), Contains("starts with a number"));
  CHECK_THROWS_WITH(units.to_si("1e999 K", kelvin), Contains("out of range"));
  CHECK_THROWS_WITH(units.to_si("nan K", kelvin), Contains("not finite"));
  CHECK_THROWS_WITH(units.to_si("inf", kelvin), Contains("not finite"));
  CHECK_THROWS_WITH(units.to_si("3 furlongz", kelvin), Contains("unknown unit \"furlongz\""));
  CHECK_THROWS_WITH(units.to_si("3 3", kelvin), Contains("is a number, not a unit"));
  CHECK_THROWS_AS(units.to_si("3 K junk(", kelvin), UnitError);
  CHECK_THROWS_AS(units.to_si("0x10 K", kelvin), UnitError);
  CHECK_THROWS_AS(units.to_si("3 s since 1970-01-01", SiUnit::of("s")), UnitError);
  // Without a description the message still names the SI unit.
  CHECK_THROWS_WITH(units.to_si("1 m", SiUnit::of("mol/s")),
                    StartsWith("expected a value in mol/s, got \"1 m\""));
  // A result that overflows in SI is an error, not an infinity.
  CHECK_THROWS_WITH(units.to_si("1e300 Tm^3", SiUnit::of("m3")), Contains("out of range"));
}

TEST_CASE("is_convertible checks the dimension only", "[units]") {
  const UnitParser units;
  const SiUnit kelvin = SiUnit::of("K");
  CHECK(units.is_convertible("degF", kelvin));
  CHECK(units.is_convertible(" degC ", kelvin));
  CHECK_FALSE(units.is_convertible("bar", kelvin));
  CHECK_FALSE(units.is_convertible("furlongz", kelvin));
  CHECK_FALSE(units.is_convertible("", kelvin));
  const SiUnit k15 = SiUnit::per_power("mol/(kg*s)", "Pa", 1.5);
  CHECK(units.is_convertible("kmol/(kg*h*bar^1.5)", k15));
  CHECK_FALSE(units.is_convertible("kmol/(kg*h*bar)", k15));
}

TEST_CASE("SiUnit describes itself", "[units]") {
  CHECK(SiUnit::of("K").to_string() == "K");
  CHECK(SiUnit::per_power("mol/(kg*s)", "Pa", 1.5).to_string() == "mol/(kg*s) / Pa^1.5");
  CHECK(SiUnit::per_power("mol/(kg*s)", "Pa", 1.0).to_string() == "mol/(kg*s) / Pa");
  CHECK(SiUnit::per_power("mol/(kg*s)", "Pa", 0.0).to_string() == "mol/(kg*s)");
  // What --write-case writes reads back as the same unit: 1 of it is 1 SI.
  const UnitParser parser;
  for (const SiUnit& w :
       {SiUnit::per_power("mol/(kg*s)", "mol/m3", 1.5), SiUnit::per_power("mol/(kg*s)", "Pa", 2.0),
        SiUnit::per_power("mol/(m3*s)", "mol/m3", 1.0), SiUnit::per_power("1", "Pa", 0.5)}) {
    INFO(w.to_parsable());
    CHECK(parser.to_si("1 " + w.to_parsable(), w) == Approx(1.0).epsilon(1e-15));
  }
  CHECK(SiUnit::per_power("mol/(kg*s)", "mol/m3", 1.5).to_parsable() ==
        "mol/(kg*s) / (mol/m3)^1.5");
  CHECK(SiUnit::per_power("mol/(kg*s)", "Pa", 2.0).to_parsable() == "mol/(kg*s) / Pa^2");
  const SiUnit u = SiUnit::of("J/mol", "a molar energy");
  CHECK(u.description == "a molar energy");
  CHECK(u.base.empty());
  CHECK(u.base_power == 0);
}

TEST_CASE("UnitParser is movable and each owns its own unit system", "[units]") {
  UnitParser a;
  UnitParser b(std::move(a));
  CHECK(b.to_si("1 bar", SiUnit::of("Pa")) == Approx(1e5).epsilon(kTight));
  UnitParser c;
  c = std::move(b);
  CHECK(c.to_si("1 cal_th", SiUnit::of("J")) == Approx(4.184).epsilon(kTight));
  // Two parsers alive at once, each with its own added symbols.
  const UnitParser d;
  CHECK(d.to_si("1 kcal_th", SiUnit::of("J")) == Approx(4184.0).epsilon(kTight));
  CHECK(c.to_si("1 kcal_th", SiUnit::of("J")) == Approx(4184.0).epsilon(kTight));
}
