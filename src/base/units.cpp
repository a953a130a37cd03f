// Unit strings -> SI values with udunits2.
//
// Two ways to convert, chosen per call:
//  * the udunits converter (ut_get_converter), used whenever the given unit
//    and the expected unit have integer exponents only. It is exact and
//    applies offsets (degC, degF).
//  * a "canonical form" (scale x product of base units with real exponents),
//    used when the expected unit is numerator / base^power with a
//    non-integer power, or the given unit has a fractional exponent such as
//    "bar^1.5". udunits units carry integer exponents only (and its parser
//    reads "bar^1.5" as bar^1 * 5 without complaint), so fractional factors
//    are cut out of the string, replaced by placeholder base units, and put
//    back in the canonical form with their real exponent.
#include "rxtrain/base/units.hpp"

#include <fmt/format.h>
#include <udunits2.h>

#include <array>
#include <charconv>
#include <cmath>
#include <map>
#include <optional>
#include <string>
#include <system_error>
#include <utility>
#include <variant>
#include <vector>

namespace rxtrain {

namespace {

struct SystemDeleter {
  void operator()(ut_system* s) const noexcept { ut_free_system(s); }
};
struct UnitDeleter {
  void operator()(ut_unit* u) const noexcept { ut_free(u); }
};
struct ConverterDeleter {
  void operator()(cv_converter* c) const noexcept { cv_free(c); }
};
using SystemPtr = std::unique_ptr<ut_system, SystemDeleter>;
using UnitPtr = std::unique_ptr<ut_unit, UnitDeleter>;
using ConverterPtr = std::unique_ptr<cv_converter, ConverterDeleter>;

// Placeholders for fractional-power factors in one unit string. Eight is far
// more than any rate-constant unit needs.
constexpr std::size_t kMaxFractionalFactors = 8;

// Relative tolerance on dimension exponents: they come from decimal reaction
// orders summed in double arithmetic (e.g. 0.5 + 1.3 vs "1.8").
constexpr double kExponentTolerance = 1e-9;

std::string_view trim(std::string_view s) {
  const auto is_space = [](char c) {
    return c == ' ' || c == '\t' || c == '\n' || c == '\r' || c == '\f' || c == '\v';
  };
  while (!s.empty() && is_space(s.front())) s.remove_prefix(1);
  while (!s.empty() && is_space(s.back())) s.remove_suffix(1);
  return s;
}

bool is_ident_char(char c) {
  const auto u = static_cast<unsigned char>(c);
  return (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z') || c == '_' || u >= 0x80;
}
bool is_digit(char c) { return c >= '0' && c <= '9'; }

std::string format_number(double x) {
  std::array<char, 32> buf{};
  const auto res = std::to_chars(buf.data(), buf.data() + buf.size(), x);
  return std::string(buf.data(), res.ptr);
}

// A unit as scale x product of basic units raised to real powers. Offsets
// are not kept: the canonical form is only used for composite units, where
// udunits drops offsets too.
struct Canonical {
  double scale = 1;
  std::map<std::string, double> powers;  // basic-unit key -> exponent

  void add(const Canonical& other, double power) {
    scale *= std::pow(other.scale, power);
    for (const auto& [key, p] : other.powers) powers[key] += p * power;
  }
};

bool same_dimensions(const Canonical& a, const Canonical& b) {
  std::map<std::string, double> diff = a.powers;
  for (const auto& [key, p] : b.powers) diff[key] -= p;
  for (const auto& [key, p] : diff) {
    if (std::abs(p) > kExponentTolerance) return false;
  }
  return true;
}

// Collects a udunits unit into a Canonical through udunits' visitor API.
struct VisitState {
  Canonical out;
  bool unsupported = false;  // timestamp or logarithmic unit
};

std::string basic_key(const ut_unit* unit) {
  std::array<char, 128> buf{};
  const int n = ut_format(unit, buf.data(), buf.size(), UT_ASCII);
  if (n <= 0 || static_cast<std::size_t>(n) >= buf.size()) return "?";
  return std::string(buf.data(), static_cast<std::size_t>(n));
}

ut_status visit_basic(const ut_unit* unit, void* arg) {
  auto* state = static_cast<VisitState*>(arg);
  // Dimensionless basic units (radian, steradian) convert to 1.
  if (!ut_is_dimensionless(unit)) state->out.powers[basic_key(unit)] += 1;
  return UT_SUCCESS;
}

ut_status visit_product(const ut_unit*, int count, const ut_unit* const* basic_units,
                        const int* powers, void* arg) {
  auto* state = static_cast<VisitState*>(arg);
  for (int i = 0; i < count; ++i) {
    if (ut_is_dimensionless(basic_units[i])) continue;
    state->out.powers[basic_key(basic_units[i])] += powers[i];
  }
  return UT_SUCCESS;
}

ut_status visit_galilean(const ut_unit*, double scale, const ut_unit* underlying, double,
                         void* arg);

ut_status visit_timestamp(const ut_unit*, const ut_unit*, double, void* arg) {
  static_cast<VisitState*>(arg)->unsupported = true;
  return UT_SUCCESS;
}

ut_status visit_logarithmic(const ut_unit*, double, const ut_unit*, void* arg) {
  static_cast<VisitState*>(arg)->unsupported = true;
  return UT_SUCCESS;
}

constexpr ut_visitor kCanonicalVisitor{visit_basic, visit_product, visit_galilean, visit_timestamp,
                                       visit_logarithmic};

// udunits' Galilean unit: value_in_underlying = scale * (value + offset).
ut_status visit_galilean(const ut_unit*, double scale, const ut_unit* underlying, double,
                         void* arg) {
  static_cast<VisitState*>(arg)->out.scale *= scale;
  return ut_accept_visitor(underlying, &kCanonicalVisitor, arg);
}

// Result of reading a unit string (no number).
struct ParsedUnit {
  UnitPtr whole;            // udunits unit; contains placeholders when fractional
  bool fractional = false;  // had at least one non-integer exponent
  Canonical canonical;      // placeholders expanded
};

// The SI target as a canonical form, plus the udunits unit when it has
// integer exponents (needed for offsets and exact factors).
struct Target {
  Canonical canonical;
  UnitPtr unit;  // null for a fractional base power
};

// Why a unit string could not be read; becomes the tail of a UnitError.
struct UnitProblem {
  std::string reason;
};

std::optional<double> parse_plain_number(std::string_view s) {
  s = trim(s);
  if (!s.empty() && s.front() == '+') s.remove_prefix(1);
  if (s.empty()) return std::nullopt;
  double v = 0;
  const auto res = std::from_chars(s.data(), s.data() + s.size(), v);
  if (res.ec != std::errc() || res.ptr != s.data() + s.size()) return std::nullopt;
  return v;
}

// Replaces plain calorie tokens with the thermochemical calorie; tokens are
// whole identifiers, so "cal_IT" and "kcal_th" are left alone.
std::string thermochemical_calories(std::string_view unit) {
  static constexpr std::array<std::pair<std::string_view, std::string_view>, 6> kMap{{
      {"cal", "cal_th"},
      {"kcal", "kcal_th"},
      {"calorie", "cal_th"},
      {"calories", "cal_th"},
      {"kilocalorie", "kcal_th"},
      {"kilocalories", "kcal_th"},
  }};
  std::string out;
  std::size_t i = 0;
  while (i < unit.size()) {
    if (!is_ident_char(unit[i])) {
      out += unit[i++];
      continue;
    }
    std::size_t j = i;
    while (j < unit.size() && is_ident_char(unit[j])) ++j;
    const std::string_view token = unit.substr(i, j - i);
    std::string_view replacement = token;
    for (const auto& [from, to] : kMap) {
      if (token == from) replacement = to;
    }
    out += replacement;
    i = j;
  }
  return out;
}

// A fractional exponent found in a unit string: text [begin, end) is
// "operand^exponent" and operand is [begin, op_end).
struct FractionalFactor {
  std::size_t begin = 0;
  std::size_t op_end = 0;
  std::size_t end = 0;
  double exponent = 0;
};

// Reads the exponent after '^' or '**' at `pos`. Returns the exponent and the
// end position when it is non-integer ("1.5", "-0.5", "(3/2)"); nullopt for
// an integer exponent, which udunits handles itself.
std::optional<std::pair<double, std::size_t>> fractional_exponent(const std::string& s,
                                                                  std::size_t pos) {
  std::size_t i = pos;
  while (i < s.size() && s[i] == ' ') ++i;
  if (i < s.size() && s[i] == '(') {
    const std::size_t close = s.find(')', i);
    if (close == std::string::npos) return std::nullopt;
    const std::string_view inner = trim(std::string_view(s).substr(i + 1, close - i - 1));
    const std::size_t slash = inner.find('/');
    std::optional<double> value;
    if (slash == std::string_view::npos) {
      value = parse_plain_number(inner);
    } else {
      const auto p = parse_plain_number(inner.substr(0, slash));
      const auto q = parse_plain_number(inner.substr(slash + 1));
      if (p && q && *q != 0) value = *p / *q;
    }
    if (!value || !std::isfinite(*value)) return std::nullopt;
    return std::pair{*value, close + 1};
  }
  std::size_t j = i;
  if (j < s.size() && (s[j] == '+' || s[j] == '-')) ++j;
  const std::size_t digits_begin = j;
  while (j < s.size() && is_digit(s[j])) ++j;
  // Only "digits.digits" is a decimal exponent; "m2.s" is m^2 times s.
  if (j + 1 < s.size() && s[j] == '.' && is_digit(s[j + 1])) {
    ++j;
    while (j < s.size() && is_digit(s[j])) ++j;
  } else if (!(j == digits_begin && j < s.size() && s[j] == '.')) {
    return std::nullopt;  // integer exponent (or not a number at all)
  } else {
    ++j;  // ".5"
    while (j < s.size() && is_digit(s[j])) ++j;
  }
  const auto value = parse_plain_number(std::string_view(s).substr(i, j - i));
  if (!value) return std::nullopt;
  return std::pair{*value, j};
}

// Finds the operand that ends just before `pos` (an identifier with optional
// trailing digits, a number, or a parenthesized group). Returns its start.
std::optional<std::size_t> operand_start(const std::string& s, std::size_t pos) {
  std::size_t end = pos;
  while (end > 0 && s[end - 1] == ' ') --end;
  if (end == 0) return std::nullopt;
  if (s[end - 1] == ')') {
    int depth = 0;
    for (std::size_t k = end; k > 0; --k) {
      if (s[k - 1] == ')') ++depth;
      if (s[k - 1] == '(' && --depth == 0) return k - 1;
    }
    return std::nullopt;
  }
  std::size_t k = end;
  while (k > 0 && (is_ident_char(s[k - 1]) || is_digit(s[k - 1]))) --k;
  if (k == end) return std::nullopt;
  return k;
}

// udunits reads "bar1.5" as a product of bar and a number; nobody means that.
std::optional<std::string> ambiguous_decimal_exponent(std::string_view s) {
  for (std::size_t i = 1; i < s.size(); ++i) {
    if (!is_digit(s[i]) || !is_ident_char(s[i - 1])) continue;
    std::size_t j = i;
    while (j < s.size() && is_digit(s[j])) ++j;
    if (j + 1 < s.size() && s[j] == '.' && is_digit(s[j + 1])) {
      std::size_t k = i - 1;
      while (k > 0 && is_ident_char(s[k - 1])) --k;
      return std::string(s.substr(k, j + 2 - k));
    }
  }
  return std::nullopt;
}

}  // namespace

struct UnitParser::Impl {
  SystemPtr system;
  std::vector<UnitPtr> placeholders;  // base units standing in for X^r
  std::vector<std::string> placeholder_names;

  ut_unit* parse_raw(const std::string& text) const {
    return ut_parse(system.get(), text.c_str(), UT_UTF8);
  }

  // Canonical form of a parsed unit (placeholders still present).
  std::optional<Canonical> canonical_of(const ut_unit* unit) const {
    VisitState state;
    if (ut_accept_visitor(unit, &kCanonicalVisitor, &state) != UT_SUCCESS || state.unsupported) {
      return std::nullopt;
    }
    return state.out;
  }

  std::variant<double, UnitProblem> convert(double value, std::string_view unit_text,
                                            const SiUnit& expected,
                                            const UnitOptions& options) const;
  Target target(const SiUnit& expected) const;

  // Parses a unit string without a number. Throws nothing; returns the
  // problem instead so callers can word it (or, for is_convertible, ignore it).
  std::variant<ParsedUnit, UnitProblem> parse_unit(std::string_view unit_text) const;

  void add_alias(const char* symbol, UnitPtr unit) {
    if (!unit || ut_map_symbol_to_unit(symbol, UT_ASCII, unit.get()) != UT_SUCCESS) {
      throw UnitError(std::string("cannot define the unit \"") + symbol + "\" in udunits");
    }
  }
};

std::variant<ParsedUnit, UnitProblem> UnitParser::Impl::parse_unit(
    std::string_view unit_text) const {
  std::string text(trim(unit_text));
  if (text.empty()) return UnitProblem{"no unit"};

  struct Cut {
    std::string operand;
    double exponent;
  };
  std::vector<Cut> cuts;
  // Replace each "operand^fraction" (innermost first, left to right) by a
  // placeholder; an operand may itself contain earlier placeholders.
  for (;;) {
    std::optional<FractionalFactor> found;
    for (std::size_t i = 0; i < text.size() && !found; ++i) {
      std::size_t after = 0;
      if (text[i] == '^') {
        after = i + 1;
      } else if (text[i] == '*' && i + 1 < text.size() && text[i + 1] == '*') {
        after = i + 2;
      } else {
        continue;
      }
      const auto exponent = fractional_exponent(text, after);
      if (!exponent) {
        if (text[i] == '*') ++i;
        continue;
      }
      const auto start = operand_start(text, i);
      if (!start) return UnitProblem{"an exponent has nothing to apply to"};
      found = FractionalFactor{*start, i, exponent->second, exponent->first};
    }
    if (!found) break;
    if (cuts.size() == placeholder_names.size()) {
      return UnitProblem{"too many fractional exponents"};
    }
    const std::string& name = placeholder_names[cuts.size()];
    cuts.push_back({std::string(trim(
                        std::string_view(text).substr(found->begin, found->op_end - found->begin))),
                    found->exponent});
    text = text.substr(0, found->begin) + "(" + name + ")" + text.substr(found->end);
  }
  if (const auto bad = ambiguous_decimal_exponent(text)) {
    return UnitProblem{"cannot read \"" + *bad + "\"; write a fractional exponent with '^'"};
  }

  ParsedUnit out;
  out.fractional = !cuts.empty();
  out.whole.reset(parse_raw(text));
  if (!out.whole) {
    return UnitProblem{"unknown unit \"" + std::string(trim(unit_text)) + "\""};
  }
  auto canonical = canonical_of(out.whole.get());
  if (!canonical) {
    return UnitProblem{"time stamps and logarithmic units are not accepted"};
  }
  // Expand placeholders, last first: placeholder k may appear only in the
  // operands of later cuts, so each expansion removes it for good.
  std::vector<Canonical> operands;
  for (const auto& cut : cuts) {
    UnitPtr op(parse_raw(cut.operand));
    if (!op) return UnitProblem{"unknown unit \"" + cut.operand + "\""};
    auto c = canonical_of(op.get());
    if (!c) return UnitProblem{"time stamps and logarithmic units are not accepted"};
    operands.push_back(std::move(*c));
  }
  for (std::size_t k = cuts.size(); k-- > 0;) {
    const std::string key = basic_key(placeholders[k].get());
    const auto expand = [&](Canonical& c) {
      const auto it = c.powers.find(key);
      if (it == c.powers.end()) return;
      const double count = it->second;
      c.powers.erase(it);
      c.add(operands[k], count * cuts[k].exponent);
    };
    expand(*canonical);
    for (std::size_t j = k + 1; j < cuts.size(); ++j) expand(operands[j]);
  }
  out.canonical = std::move(*canonical);
  return out;
}

// ---------------------------------------------------------------- SiUnit

SiUnit SiUnit::of(std::string si, std::string description) {
  SiUnit u;
  u.numerator = std::move(si);
  u.description = std::move(description);
  return u;
}

SiUnit SiUnit::per_power(std::string numerator, std::string base, double power,
                         std::string description) {
  SiUnit u;
  u.numerator = std::move(numerator);
  u.base = std::move(base);
  u.base_power = power;
  u.description = std::move(description);
  return u;
}

std::string SiUnit::to_string() const {
  if (base.empty() || base_power == 0) return numerator;
  std::string out = numerator;
  out += " / ";
  out += base;
  if (base_power != 1) {
    out += '^';
    out += format_number(base_power);
  }
  return out;
}

std::string SiUnit::to_parsable() const {
  if (base.empty() || base_power == 0) return numerator;
  const bool compound = base.find_first_of("/* ") != std::string::npos;
  std::string out = numerator + " / " + (compound ? "(" + base + ")" : base);
  if (base_power != 1) out += "^" + format_number(base_power);
  return out;
}

// ---------------------------------------------------------------- UnitParser

UnitParser::UnitParser() : impl_(std::make_unique<Impl>()) {
  // udunits prints parse errors to stderr by default; the core never prints.
  // The handler is process-wide in udunits, and ut_ignore is the only value
  // this program ever sets.
  ut_set_error_message_handler(ut_ignore);
  impl_->system.reset(ut_read_xml(nullptr));
  if (!impl_->system) {
    throw UnitError("cannot load the udunits2 unit database (udunits status " +
                    std::to_string(static_cast<int>(ut_get_status())) +
                    "); set UDUNITS2_XML_PATH to udunits2.xml");
  }
  // Extra symbols, defined in this parser's own unit system only.
  // cal_th = 4.184 J and cal_IT = 4.1868 J exactly (NIST SP 811, App. B);
  // udunits defines both under long names. "kcal_th" etc. come from prefixes.
  impl_->add_alias("cal_th", UnitPtr(impl_->parse_raw("thermochemical_calorie")));
  impl_->add_alias("cal_IT", UnitPtr(impl_->parse_raw("IT_calorie")));
  impl_->add_alias("Rankine", UnitPtr(impl_->parse_raw("degree_rankine")));
  impl_->add_alias("rankine", UnitPtr(impl_->parse_raw("degree_rankine")));
  // 1 lb = 0.453 592 37 kg exactly (NIST SP 811), so 1 lbmol = 453.592 37 mol.
  {
    UnitPtr mol(impl_->parse_raw("mol"));
    impl_->add_alias("lbmol", UnitPtr(mol ? ut_scale(453.59237, mol.get()) : nullptr));
  }
  // Placeholder base units for fractional-power factors (see parse_unit).
  // Names are letters only: udunits would read trailing digits as a power.
  for (std::size_t k = 0; k < kMaxFractionalFactors; ++k) {
    UnitPtr base(ut_new_base_unit(impl_->system.get()));
    std::string name = "rxtrainfractionalfactor";
    name += static_cast<char>('a' + k);
    if (!base || ut_map_symbol_to_unit(name.c_str(), UT_ASCII, base.get()) != UT_SUCCESS ||
        ut_map_unit_to_symbol(base.get(), name.c_str(), UT_ASCII) != UT_SUCCESS) {
      throw UnitError("cannot set up the udunits unit system");
    }
    impl_->placeholders.push_back(std::move(base));
    impl_->placeholder_names.push_back(std::move(name));
  }
}

UnitParser::~UnitParser() = default;
UnitParser::UnitParser(UnitParser&&) noexcept = default;
UnitParser& UnitParser::operator=(UnitParser&&) noexcept = default;

Target UnitParser::Impl::target(const SiUnit& expected) const {
  const auto internal = [&] {
    return UnitError("internal error: SI unit \"" + expected.to_string() + "\" is not a unit");
  };
  auto numerator = parse_unit(expected.numerator);
  auto* num = std::get_if<ParsedUnit>(&numerator);
  if (!num || num->fractional) throw internal();
  Target out{num->canonical, std::move(num->whole)};
  if (expected.base.empty() || expected.base_power == 0) return out;
  const double p = expected.base_power;
  auto base_or = parse_unit(expected.base);
  auto* base = std::get_if<ParsedUnit>(&base_or);
  if (!base || base->fractional || !std::isfinite(p)) throw internal();
  out.canonical.add(base->canonical, -p);
  if (p == std::round(p) && std::abs(p) < 1000) {
    UnitPtr raised(ut_raise(base->whole.get(), static_cast<int>(p)));
    if (!raised) throw internal();
    out.unit.reset(ut_divide(out.unit.get(), raised.get()));
    if (!out.unit) throw internal();
  } else {
    out.unit.reset();  // udunits units have integer exponents only
  }
  return out;
}

std::variant<double, UnitProblem> UnitParser::Impl::convert(double value,
                                                            std::string_view unit_text,
                                                            const SiUnit& expected,
                                                            const UnitOptions& options) const {
  const std::string unit_name(trim(unit_text));
  if (parse_plain_number(unit_name)) {
    return UnitProblem{"\"" + unit_name + "\" is a number, not a unit"};
  }
  const std::string unit_string =
      options.plain_cal_is_thermochemical ? thermochemical_calories(unit_name) : unit_name;
  auto parsed_or = parse_unit(unit_string);
  if (auto* problem = std::get_if<UnitProblem>(&parsed_or)) return std::move(*problem);
  const ParsedUnit& parsed = std::get<ParsedUnit>(parsed_or);
  const Target want = target(expected);

  const UnitProblem wrong{"\"" + unit_name + "\" cannot be converted to " + expected.to_string()};
  if (!same_dimensions(parsed.canonical, want.canonical)) return wrong;
  double si = 0;
  if (!parsed.fractional && want.unit) {
    if (!ut_are_convertible(parsed.whole.get(), want.unit.get())) return wrong;
    ConverterPtr converter(ut_get_converter(parsed.whole.get(), want.unit.get()));
    if (!converter) return wrong;
    si = cv_convert_double(converter.get(), value);
  } else {
    si = value * (parsed.canonical.scale / want.canonical.scale);
  }
  if (!std::isfinite(si)) return UnitProblem{"the value is out of range in SI units"};
  return si;
}

namespace {

std::string expectation(const SiUnit& expected) {
  if (expected.description.empty()) return "expected a value in " + expected.to_string();
  return "expected " + expected.description + " (" + expected.to_string() + ")";
}

}  // namespace

double UnitParser::to_si(std::string_view text, const SiUnit& expected,
                         const UnitOptions& options) const {
  const std::string_view given = trim(text);
  const auto fail = [&](const std::string& reason) {
    if (given.empty()) return UnitError(expectation(expected) + ", got an empty value");
    return UnitError(expectation(expected) + ", got \"" + std::string(given) + "\": " + reason);
  };
  if (given.empty()) throw fail("");

  // The number: locale-independent, no hex, no "inf"/"nan".
  std::string_view rest = given;
  if (rest.front() == '+') rest.remove_prefix(1);
  double value = 0;
  const auto res = std::from_chars(rest.data(), rest.data() + rest.size(), value);
  if (res.ec == std::errc::invalid_argument || res.ptr == rest.data()) {
    throw fail("a value starts with a number, e.g. \"25 bar\"");
  }
  if (res.ec == std::errc::result_out_of_range) throw fail("the number is out of range");
  if (!std::isfinite(value)) throw fail("the number is not finite");
  const auto unit_text = trim(rest.substr(static_cast<std::size_t>(res.ptr - rest.data())));
  if (unit_text.empty()) return value;  // a bare number is already SI

  auto result = impl_->convert(value, unit_text, expected, options);
  if (auto* problem = std::get_if<UnitProblem>(&result)) throw fail(problem->reason);
  return std::get<double>(result);
}

double UnitParser::difference_to_si(std::string_view text, const SiUnit& expected,
                                    const UnitOptions& options) const {
  const double v = to_si(text, expected, options);
  // The unit alone, as to_si split it off: its offset cancels in v - zero.
  std::string_view rest = trim(text);
  if (!rest.empty() && rest.front() == '+') rest.remove_prefix(1);
  double number = 0;
  const auto res = std::from_chars(rest.data(), rest.data() + rest.size(), number);
  const auto unit_text = trim(rest.substr(static_cast<std::size_t>(res.ptr - rest.data())));
  if (unit_text.empty()) return v;
  return v - to_si("0 " + std::string(unit_text), expected, options);
}

bool UnitParser::is_convertible(std::string_view unit, const SiUnit& expected) const {
  const std::string_view u = trim(unit);
  if (u.empty()) return false;
  return std::holds_alternative<double>(impl_->convert(1.0, u, expected, UnitOptions{}));
}

std::string temperature_words(double T) {
  return fmt::format("{:.2f} °C / {:.2f} K", T - kZeroCelsius, T);
}

}  // namespace rxtrain
