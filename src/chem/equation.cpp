// Reaction equation parser; grammar in equation.hpp.
#include "rxtrain/chem/equation.hpp"

#include <charconv>
#include <cmath>
#include <optional>
#include <system_error>

#include "rxtrain/base/utf8.hpp"

namespace rxtrain {

namespace {

bool is_space(char c) { return c == ' ' || c == '\t'; }
bool is_digit(char c) { return c >= '0' && c <= '9'; }
bool is_letter(char c) { return (c >= 'A' && c <= 'Z') || (c >= 'a' && c <= 'z'); }
bool is_id_char(char c) { return is_letter(c) || is_digit(c) || c == '_' || c == '-'; }

class EquationReader {
 public:
  explicit EquationReader(std::string_view text) : text_(text) {}

  ParsedEquation read() {
    ParsedEquation out;
    skip_space();
    out.reactants = side("reactants", "before the arrow");
    const auto arrow = read_arrow();
    if (!arrow) {
      if (at_end()) fail("missing arrow: expected '->' or '<->' after the reactants");
      unexpected();
    }
    out.reversible = *arrow;
    out.products = side("products", "after the arrow");
    if (!at_end()) {
      const std::size_t at = pos_;
      if (read_arrow()) fail_at(at, "a second arrow; an equation has exactly one");
      unexpected();
    }
    return out;
  }

 private:
  // side: term ("+" term)*. Stops before an arrow or at the end.
  std::vector<EquationTerm> side(const char* name, const char* where) {
    std::vector<EquationTerm> terms;
    if (at_end() || at_arrow()) fail(std::string("no ") + name + " " + where);
    for (;;) {
      EquationTerm t = term();
      for (const auto& other : terms) {
        if (other.species == t.species) {
          fail_at(t.column, "species \"" + t.species + "\" appears twice among the " + name +
                                "; combine the coefficients");
        }
      }
      terms.push_back(std::move(t));
      skip_space();
      if (at_end() || at_arrow()) return terms;
      if (text_[pos_] != '+') unexpected();
      const std::size_t plus = pos_;
      ++pos_;
      skip_space();
      if (at_end() || at_arrow() || text_[pos_] == '+') {
        fail_at(plus, "'+' must be followed by a species");
      }
    }
  }

  // term: [coefficient whitespace] id
  EquationTerm term() {
    EquationTerm t;
    const std::size_t start = pos_;
    if ((text_[pos_] == '-' || text_[pos_] == '+') && pos_ + 1 < text_.size() &&
        (is_digit(text_[pos_ + 1]) || text_[pos_ + 1] == '.')) {
      fail("a coefficient must be a positive number");
    }
    if (const std::size_t end = number_end(pos_); end != pos_) {
      const bool spaced = end < text_.size() && is_space(text_[end]);
      const bool bare = end == text_.size() || text_[end] == '+' || at_arrow_at(end);
      if (spaced || bare) {
        t.coefficient = coefficient(start, end);
        pos_ = end;
        skip_space();
        if (at_end() || at_arrow() || !is_id_char(text_[pos_])) {
          fail_at(start, "coefficient " + std::string(text_.substr(start, end - start)) +
                             " is not followed by a species");
        }
      }
    }
    t.column = pos_;
    t.species = id();
    return t;
  }

  // id: [A-Za-z0-9_-]+ with at least one letter. A '-' directly before '>'
  // is the arrow "->", not part of the id.
  std::string id() {
    const std::size_t start = pos_;
    while (pos_ < text_.size() && is_id_char(text_[pos_])) {
      if (text_[pos_] == '-' && pos_ + 1 < text_.size() && text_[pos_ + 1] == '>') break;
      ++pos_;
    }
    if (pos_ == start) unexpected();
    const std::string_view s = text_.substr(start, pos_ - start);
    bool has_letter = false;
    for (const char c : s) has_letter = has_letter || is_letter(c);
    if (!has_letter) fail_at(start, "species id \"" + std::string(s) + "\" needs a letter");
    return std::string(s);
  }

  // End of a decimal number ("2", "0.5", ".5", "1.5e0", "1e-3") at `at`, or
  // `at` when there is none.
  std::size_t number_end(std::size_t at) const {
    std::size_t i = at;
    std::size_t digits = 0;
    for (; i < text_.size() && is_digit(text_[i]); ++i) ++digits;
    if (i < text_.size() && text_[i] == '.') {
      std::size_t j = i + 1;
      std::size_t frac = 0;
      for (; j < text_.size() && is_digit(text_[j]); ++j) ++frac;
      if (frac > 0 || digits > 0) {
        i = j;
        digits += frac;
      }
    }
    if (digits == 0) return at;
    if (i < text_.size() && (text_[i] == 'e' || text_[i] == 'E')) {
      std::size_t j = i + 1;
      if (j < text_.size() && (text_[j] == '+' || text_[j] == '-')) ++j;
      const std::size_t exp_start = j;
      while (j < text_.size() && is_digit(text_[j])) ++j;
      if (j > exp_start) i = j;
    }
    return i;
  }

  double coefficient(std::size_t start, std::size_t end) const {
    double v = 0;
    const auto res = std::from_chars(text_.data() + start, text_.data() + end, v);
    if (res.ec != std::errc() || res.ptr != text_.data() + end || !std::isfinite(v)) {
      fail_at(start,
              "coefficient " + std::string(text_.substr(start, end - start)) + " is out of range");
    }
    if (v <= 0) fail_at(start, "a coefficient must be a positive number");
    return v;
  }

  // The arrows, canonical first: "->" one way, "<->" reversible; the older
  // "=>" and "<=>" and the Unicode arrows (U+2192, U+21CC) are accepted too.
  // A reversible arrow is tried before the one-way arrow it contains.
  struct Arrow {
    std::string_view text;
    bool reversible;
  };
  static constexpr Arrow kArrows[] = {{"<->", true}, {"<=>", true}, {"\xE2\x87\x8C", true},
                                      {"->", false}, {"=>", false}, {"\xE2\x86\x92", false}};

  const Arrow* arrow_at(std::size_t at) const {
    for (const Arrow& a : kArrows)
      if (text_.substr(at, a.text.size()) == a.text) return &a;
    return nullptr;
  }

  // Consumes an arrow: true for a reversible one.
  std::optional<bool> read_arrow() {
    const Arrow* a = arrow_at(pos_);
    if (!a) return std::nullopt;
    pos_ += a->text.size();
    skip_space();
    return a->reversible;
  }

  bool at_arrow_at(std::size_t at) const { return arrow_at(at) != nullptr; }
  bool at_arrow() const { return at_arrow_at(pos_); }
  bool at_end() const { return pos_ >= text_.size(); }
  void skip_space() {
    while (pos_ < text_.size() && is_space(text_[pos_])) ++pos_;
  }

  [[noreturn]] void unexpected() const {
    if (at_end()) fail("unexpected end of the equation");
    const char c = text_[pos_];
    if (c == '=' || c == '<' || c == '>') fail("the arrow is '->' (one way) or '<->' (reversible)");
    const auto u = static_cast<unsigned char>(c);
    if (u < 0x20 || u >= 0x7f)
      fail("unexpected character " + quoted_character(text_, pos_) +
           "; species ids use only A-Z a-z 0-9 _ -");
    fail("unexpected character " + quoted_character(text_, pos_) +
         "; expected a species, '+' or the arrow");
  }

  [[noreturn]] void fail(const std::string& what) const { fail_at(pos_, what); }
  [[noreturn]] void fail_at(std::size_t at, const std::string& what) const {
    throw EquationError(what, at);
  }

  std::string_view text_;
  std::size_t pos_ = 0;
};

}  // namespace

ParsedEquation parse_equation(std::string_view text) { return EquationReader(text).read(); }

}  // namespace rxtrain
