// Chemical formulas -> element counts -> molar mass.
#include "rxtrain/chem/formula.hpp"

#include <array>
#include <charconv>
#include <cmath>
#include <system_error>
#include <utility>
#include <vector>

#include "rxtrain/base/utf8.hpp"

namespace rxtrain {

namespace {

struct AtomicWeight {
  std::string_view symbol;
  double grams_per_mole;
};

// IUPAC/CIAAW conventional (abridged) atomic weights, g/mol.
// H, C, N, O, S, Cl: the conventional values quoted in
// /work/shared/reference-data.md §6 (IUPAC/CIAAW).
// Others: IUPAC/CIAAW abridged standard atomic weights (2021 table), from
// memory; elements with an interval use the conventional value.
constexpr std::array<AtomicWeight, 36> kAtomicWeights{{
    {"H", 1.008},   {"He", 4.0026}, {"Li", 6.94},   {"Be", 9.0122}, {"B", 10.81},   {"C", 12.011},
    {"N", 14.007},  {"O", 15.999},  {"F", 18.998},  {"Ne", 20.180}, {"Na", 22.990}, {"Mg", 24.305},
    {"Al", 26.982}, {"Si", 28.085}, {"P", 30.974},  {"S", 32.06},   {"Cl", 35.45},  {"Ar", 39.95},
    {"K", 39.098},  {"Ca", 40.078}, {"Ti", 47.867}, {"Cr", 51.996}, {"Mn", 54.938}, {"Fe", 55.845},
    {"Co", 58.933}, {"Ni", 58.693}, {"Cu", 63.546}, {"Zn", 65.38},  {"Br", 79.904}, {"Mo", 95.95},
    {"Ag", 107.87}, {"Sn", 118.71}, {"I", 126.90},  {"Pt", 195.08}, {"Hg", 200.59}, {"Pb", 207.2},
}};

const AtomicWeight* find_element(std::string_view symbol) {
  for (const auto& e : kAtomicWeights) {
    if (e.symbol == symbol) return &e;
  }
  return nullptr;
}

bool is_upper(char c) { return c >= 'A' && c <= 'Z'; }
bool is_lower(char c) { return c >= 'a' && c <= 'z'; }
bool is_digit(char c) { return c >= '0' && c <= '9'; }

class FormulaReader {
 public:
  explicit FormulaReader(std::string_view text) : text_(text) {}

  ElementCounts read() {
    if (text_.empty()) throw FormulaError("empty chemical formula");
    // One map per open parenthesis; the bottom one is the whole formula.
    std::vector<std::pair<ElementCounts, std::size_t>> stack;  // counts, '(' position
    stack.emplace_back(ElementCounts{}, 0);
    while (pos_ < text_.size()) {
      const char c = text_[pos_];
      if (c == '(') {
        stack.emplace_back(ElementCounts{}, pos_);
        ++pos_;
      } else if (c == ')') {
        if (stack.size() == 1) fail("')' without a matching '('");
        ++pos_;
        auto [group, open] = std::move(stack.back());
        stack.pop_back();
        if (group.empty()) fail_at(open, "empty parentheses");
        const double n = count();
        for (const auto& [element, k] : group) stack.back().first[element] += k * n;
      } else if (is_upper(c)) {
        const std::size_t start = pos_;
        ++pos_;
        if (pos_ < text_.size() && is_lower(text_[pos_])) ++pos_;
        const std::string_view symbol = text_.substr(start, pos_ - start);
        if (!find_element(symbol)) {
          fail_at(start, "unknown element \"" + std::string(symbol) + "\"");
        }
        stack.back().first[std::string(symbol)] += count();
      } else if (is_lower(c)) {
        fail("element symbols start with a capital letter");
      } else if (is_digit(c)) {
        fail("a count must follow an element or ')'");
      } else {
        fail("unexpected character " + quoted_character(text_, pos_));
      }
    }
    if (stack.size() > 1) fail_at(stack.back().second, "'(' is never closed");
    return std::move(stack.front().first);
  }

 private:
  // Optional count after an element or group: "2", "12", "0.5"; default 1.
  double count() {
    if (pos_ >= text_.size() || !is_digit(text_[pos_])) return 1;
    const std::size_t start = pos_;
    while (pos_ < text_.size() && is_digit(text_[pos_])) ++pos_;
    if (pos_ + 1 < text_.size() && text_[pos_] == '.' && is_digit(text_[pos_ + 1])) {
      ++pos_;
      while (pos_ < text_.size() && is_digit(text_[pos_])) ++pos_;
    }
    double n = 0;
    const auto res = std::from_chars(text_.data() + start, text_.data() + pos_, n);
    if (res.ec != std::errc() || !std::isfinite(n)) fail_at(start, "count out of range");
    if (n <= 0) fail_at(start, "a count must be positive");
    return n;
  }

  [[noreturn]] void fail(const std::string& what) const { fail_at(pos_, what); }

  [[noreturn]] void fail_at(std::size_t at, const std::string& what) const {
    throw FormulaError("bad chemical formula \"" + std::string(text_) + "\" at character " +
                       std::to_string(at + 1) + ": " + what);
  }

  std::string_view text_;
  std::size_t pos_ = 0;
};

}  // namespace

ElementCounts parse_formula(std::string_view formula) { return FormulaReader(formula).read(); }

double atomic_weight(std::string_view symbol) {
  const AtomicWeight* e = find_element(symbol);
  if (!e) throw FormulaError("unknown element \"" + std::string(symbol) + "\"");
  return e->grams_per_mole;
}

double molar_mass(const ElementCounts& elements) {
  double grams = 0;
  for (const auto& [symbol, count] : elements) grams += count * atomic_weight(symbol);
  return grams * 1e-3;  // g/mol -> kg/mol
}

}  // namespace rxtrain
