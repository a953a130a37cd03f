// Case loader: YAML text -> validated, immutable Case in SI. The only user of
// yaml-cpp. The format and every rule checked here are documented in
// docs/case-format.md; keep the two in step.
#include "rxtrain/case/case.hpp"

#include <fmt/format.h>
#include <yaml-cpp/yaml.h>

#include <algorithm>
#include <array>
#include <cctype>
#include <cerrno>
#include <charconv>
#include <cmath>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <initializer_list>
#include <map>
#include <sstream>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "rxtrain/base/input_limits.hpp"
#include "rxtrain/base/suggest.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case_fields.hpp"
#include "rxtrain/chem/equation.hpp"
#include "rxtrain/chem/formula.hpp"

namespace rxtrain {

double Case::quench_shares() const {
  double sum = 0;
  for (const auto& s : train)
    if (const auto* q = std::get_if<QuenchSpec>(&s); q && q->share) sum += *q->share;
  return sum;
}

const InterchangerSpec* Case::interchanger() const {
  for (const auto& s : train)
    if (const auto* x = std::get_if<InterchangerSpec>(&s)) return x;
  return nullptr;
}

const std::string& stage_id(const StageSpec& s) {
  return std::visit([](const auto& x) -> const std::string& { return x.id; }, s);
}

namespace {

// Limits that keep a malformed or hostile file from exhausting memory; far
// above any reactor train a person writes by hand.
constexpr std::uintmax_t kMaxFileBytes = 10u * 1024u * 1024u;  // 10 MiB
constexpr std::size_t kMaxSpecies = 1000;
constexpr std::size_t kMaxReactions = 5000;
constexpr std::size_t kMaxStages = 1000;
// A given mw and the one from the formula must agree this closely
// (relative): enough for rounded table values, tight enough to catch a typo.
constexpr double kMwTolerance = 0.005;
// Mole fractions must sum to 1 within this (absolute).
constexpr double kCompositionTolerance = 1e-6;

// ---- small text helpers --------------------------------------------------

// "; did you mean "x"?" for a near candidate, else the list of candidates.
std::string suggest(std::string_view word, const std::vector<std::string>& candidates,
                    std::string_view what = "valid keys") {
  return suggest_nearest(word, candidates, what);
}

std::vector<std::string> to_strings(std::initializer_list<std::string_view> keys) {
  return {keys.begin(), keys.end()};
}

std::string describe(const YAML::Node& n) {
  switch (n.Type()) {
    case YAML::NodeType::Sequence:
      return n.size() == 0 ? "an empty list" : "a list";
    case YAML::NodeType::Map:
      return "a mapping";
    case YAML::NodeType::Scalar:
      return fmt::format("\"{}\"", n.Scalar());
    default:
      return "nothing";
  }
}

// Parses a dimensionless number ("0.95", "-1.5e3", "+2"); nullopt if the
// whole text is not one finite number.
std::optional<double> parse_number(std::string_view s) {
  while (!s.empty() && std::isspace(static_cast<unsigned char>(s.front()))) s.remove_prefix(1);
  while (!s.empty() && std::isspace(static_cast<unsigned char>(s.back()))) s.remove_suffix(1);
  if (!s.empty() && s.front() == '+') s.remove_prefix(1);
  if (s.empty()) return std::nullopt;
  double v = 0;
  const auto [end, ec] = std::from_chars(s.data(), s.data() + s.size(), v);
  if (ec != std::errc{} || end != s.data() + s.size() || !std::isfinite(v)) return std::nullopt;
  return v;
}

// Ids appear in equations, so they follow the equation grammar's id rule.
bool valid_id(std::string_view id) {
  if (id.empty()) return false;
  bool letter = false;
  for (char c : id) {
    const auto u = static_cast<unsigned char>(c);
    if (std::isalpha(u)) letter = true;
    if (!std::isalnum(u) && c != '_' && c != '-') return false;
  }
  return letter;
}

std::string join_and(const std::vector<std::string>& items) {
  std::string out;
  for (std::size_t i = 0; i < items.size(); ++i) {
    if (i) out += i + 1 == items.size() ? " and " : ", ";
    out += items[i];
  }
  return out;
}

// ---- units of the fields outside the table (case_fields.hpp) -------------

SiUnit temperature_unit() { return SiUnit::of("K", "a temperature"); }
SiUnit molar_energy_unit() { return SiUnit::of("J/mol", "an energy per mole"); }
SiUnit molar_cp_unit() { return SiUnit::of("J/(mol*K)", "a molar heat capacity"); }
SiUnit molar_entropy_unit() { return SiUnit::of("J/(mol*K)", "a molar entropy"); }

// Chemistry tables quote kcal/mol and cal/(mol K) in thermochemical calories.
UnitOptions chemistry_units() {
  UnitOptions o;
  o.plain_cal_is_thermochemical = true;
  return o;
}

// ---- the loader ----------------------------------------------------------

class Loader;

// One YAML mapping: checked to be a mapping with unique scalar keys; lookups
// by key; unknown keys refused with a suggestion.
class Fields {
 public:
  struct Entry {
    std::string name;
    YAML::Node key;
    YAML::Node value;
  };

  Fields(const Loader& loader, const YAML::Node& node, std::string context);

  // Refuses any key not in `allowed`, naming the nearest valid one.
  void check(std::initializer_list<std::string_view> allowed) const;
  const YAML::Node* find(std::string_view key) const;
  const YAML::Node* key_of(std::string_view key) const;
  // The value of a required key; a missing key is reported at the mapping.
  const YAML::Node& need(std::string_view key, std::string_view expected) const;
  void set_context(std::string context) { context_ = std::move(context); }
  const std::string& context() const { return context_; }
  const YAML::Node& node() const { return node_; }
  const std::vector<Entry>& entries() const { return entries_; }

 private:
  const Loader& loader_;
  YAML::Node node_;
  std::string context_;
  std::vector<Entry> entries_;
};

// Which stage needs the heat capacity of every species, if any.
struct EnergyNeed {
  std::string stage;
  std::string why;
};

// Per-species facts the loader keeps beside the Species it builds.
struct SpeciesInfo {
  YAML::Node node;
  std::optional<YAML::Node> thermo;  // the thermo mapping, when given
};

class Loader {
 public:
  Loader(std::string file, const UnitParser& units) : file_(std::move(file)), units_(units) {}

  Case load(const YAML::Node& root);

  SourceLocation at(const YAML::Node& n, std::size_t column_offset = 0) const {
    if (n.IsNull())
      for (const auto& [value, key] : null_values_)
        if (value.is(n)) return at(key);
    const YAML::Mark m = n.Mark();
    if (m.is_null()) return {file_, 0, 0};
    return {file_, m.line + 1, m.column + 1 + static_cast<int>(column_offset)};
  }
  int line_of(const YAML::Node& n) const { return at(n).line; }
  [[noreturn]] void fail(const YAML::Node& n, const std::string& message) const {
    throw InputError(at(n), message);
  }
  // An empty value ("key:") carries the mark of the token after it, often on
  // the next line; errors about it point at its key instead.
  void remember_null(const YAML::Node& value, const YAML::Node& key) const {
    null_values_.emplace_back(value, key);
  }

 private:
  // Values.
  std::string text(const YAML::Node& n, std::string_view field, std::string_view expected) const;
  double quantity(const YAML::Node& n, std::string_view field, const SiUnit& unit,
                  const UnitOptions& options = {}) const;
  double temperature(const YAML::Node& n, std::string_view field) const;
  void check_range(const YAML::Node& n, std::string_view field, const FieldRange& range,
                   std::string_view si, double v) const;
  // A field of the table (case_fields.hpp), which gives its unit, range
  // and name; `id` is its owner's. `unit` replaces the table's (a rate
  // constant's, which depends on its law).
  double field(const YAML::Node& n, CaseFieldKind kind, std::string_view id = {},
               const SiUnit* unit = nullptr) const;
  double number(const YAML::Node& n, std::string_view field) const;
  std::vector<double> numbers(const YAML::Node& n, std::string_view field, std::size_t min_count,
                              std::size_t max_count) const;
  std::array<double, 2> temperature_range(const YAML::Node& n, std::string_view field) const;
  std::string choice(const YAML::Node& n, std::string_view field,
                     std::initializer_list<std::string_view> options) const;
  std::string id(const YAML::Node& n, std::string_view kind);
  int species_index(const YAML::Node& n, std::string_view where) const;

  // Sections.
  void read_species(const YAML::Node& list);
  Species read_one_species(const YAML::Node& node, std::size_t index);
  ThermoModel read_thermo(const YAML::Node& node, const std::string& owner) const;
  CpModel read_cp(const YAML::Node& node, const std::string& owner) const;
  ShomateSet read_shomate_set(const YAML::Node& node, const std::string& owner) const;
  Nasa7 read_nasa7(const YAML::Node& node, const std::string& owner) const;
  void read_reactions(const YAML::Node& list);
  Reaction read_one_reaction(const YAML::Node& node, std::size_t index);
  RateLaw read_rate(const YAML::Node& node, const std::string& rx_id,
                    const ParsedEquation& eq) const;
  Adsorption read_adsorption(const YAML::Node& node, const std::string& ctx, Driving driving) const;
  AdsorptionTerm read_adsorption_term(const YAML::Node& node, const std::string& ctx,
                                      Driving driving) const;
  double read_dH(const Fields& f, const Reaction& rx) const;
  EquilibriumSource read_equilibrium(const Fields& f, const Reaction& rx) const;
  void read_feed(const YAML::Node& node);
  void read_key(const YAML::Node& node);
  void read_train(const YAML::Node& list);
  void read_train_target(const YAML::Node& node, Case& c) const;
  OutletTarget read_outlet_target(const YAML::Node& node, const std::string& ctx) const;
  void read_exchanger_size(const Fields& f, ExchangerSpec& x) const;
  TankCooling read_tank_cooling(const YAML::Node& node, const std::string& sid,
                                const std::string& ctx) const;
  TemperatureLimits read_limits(const YAML::Node& node) const;
  PelletSpec read_pellet(const YAML::Node& node, const std::string& ctx) const;
  BedGeometry read_geometry(const Fields& f, const std::string& ctx) const;
  CoolingSpec read_cooling(const YAML::Node& node, const std::string& sid,
                           const std::string& ctx) const;
  QuenchSpec read_quench(const Fields& f, const YAML::Node& node, const std::string& sid) const;
  ViscosityLaw read_fluid(const YAML::Node& node) const;
  void apply_fluid(const YAML::Node* fluid);
  std::vector<int> read_space_velocity_basis(const YAML::Node& node) const;
  std::vector<int> read_products(const YAML::Node& node) const;
  StageSpec read_stage(const YAML::Node& node, std::size_t index);
  void check_energy_needs() const;
  void check_loop() const;
  void check_catalyst_basis() const;
  void add_range_warnings();

  double sensible_sum(const std::vector<double>& nu, double T) const;

  std::string file_;
  const UnitParser& units_;
  Phase phase_ = Phase::Gas;
  std::vector<Species> species_;
  std::vector<SpeciesInfo> species_info_;
  std::vector<Reaction> reactions_;
  Stream feed_;
  int key_ = 0;
  std::vector<StageSpec> train_;
  std::vector<YAML::Node> stage_nodes_;
  std::vector<std::string> warnings_;
  // Every id so far (species, reactions, stages share one namespace).
  std::map<std::string, std::pair<std::string, int>> ids_;
  // Empty values and their keys (see remember_null); filled while reading,
  // from const readers too, and used only for error locations.
  mutable std::vector<std::pair<YAML::Node, YAML::Node>> null_values_;
};

// ---- Fields --------------------------------------------------------------

Fields::Fields(const Loader& loader, const YAML::Node& node, std::string context)
    : loader_(loader), node_(node), context_(std::move(context)) {
  if (!node.IsMap())
    loader.fail(node, fmt::format("{} needs a mapping (key: value lines), got {}", context_,
                                  describe(node)));
  for (auto it = node.begin(); it != node.end(); ++it) {
    const YAML::Node k = it->first;
    if (!k.IsScalar())
      loader.fail(k, fmt::format("{}: a key must be a plain name, got {}", context_, describe(k)));
    std::string name = k.Scalar();
    for (const auto& e : entries_)
      if (e.name == name)
        loader.fail(k, fmt::format("duplicate key \"{}\" in {} (first given at line {})", name,
                                   context_, loader.line_of(e.key)));
    if (it->second.IsNull()) loader.remember_null(it->second, k);
    entries_.push_back({std::move(name), k, it->second});
  }
}

void Fields::check(std::initializer_list<std::string_view> allowed) const {
  for (const auto& e : entries_) {
    if (std::find(allowed.begin(), allowed.end(), e.name) != allowed.end()) continue;
    loader_.fail(e.key, fmt::format("unknown key \"{}\" in {}{}", e.name, context_,
                                    suggest(e.name, to_strings(allowed))));
  }
}

const YAML::Node* Fields::find(std::string_view key) const {
  for (const auto& e : entries_)
    if (e.name == key) return &e.value;
  return nullptr;
}

const YAML::Node* Fields::key_of(std::string_view key) const {
  for (const auto& e : entries_)
    if (e.name == key) return &e.key;
  return nullptr;
}

const YAML::Node& Fields::need(std::string_view key, std::string_view expected) const {
  if (const YAML::Node* v = find(key)) return *v;
  loader_.fail(node_, fmt::format("{} is missing \"{}\" ({})", context_, key, expected));
}

// ---- values --------------------------------------------------------------

std::string Loader::text(const YAML::Node& n, std::string_view field,
                         std::string_view expected) const {
  if (!n.IsScalar() || n.Scalar().empty())
    fail(n, fmt::format("{} needs {}, got {}", field, expected, describe(n)));
  return n.Scalar();
}

double Loader::quantity(const YAML::Node& n, std::string_view field, const SiUnit& unit,
                        const UnitOptions& options) const {
  const std::string expected = fmt::format("{} ({})", unit.description, unit.to_string());
  if (!n.IsScalar() || n.Scalar().empty())
    fail(n, fmt::format("{} needs {}, got {}", field, expected, describe(n)));
  try {
    const double v = units_.to_si(n.Scalar(), unit, options);
    if (!std::isfinite(v))
      fail(n, fmt::format("{} needs a finite value, got \"{}\"", field, n.Scalar()));
    return v;
  } catch (const UnitError& e) {
    // The parser's message repeats the expectation; keep only its reason.
    std::string reason = e.what();
    const std::string tail = "\": ";
    if (const auto pos = reason.find(tail); pos != std::string::npos)
      reason = reason.substr(pos + tail.size());
    fail(n, fmt::format("{} needs {}, got \"{}\": {}", field, expected, n.Scalar(), reason));
  }
}

double Loader::temperature(const YAML::Node& n, std::string_view field) const {
  const double v = quantity(n, field, temperature_unit());
  check_range(n, field, kPositive, "K", v);
  return v;
}

void Loader::check_range(const YAML::Node& n, std::string_view field, const FieldRange& range,
                         std::string_view si, double v) const {
  if (!range.contains(v)) fail(n, out_of_range_text(field, range, si, v, n.Scalar()));
}

double Loader::field(const YAML::Node& n, CaseFieldKind kind, std::string_view id,
                     const SiUnit* unit) const {
  const CaseFieldSpec& s = case_field_spec(kind);
  const std::string label = fmt::format(fmt::runtime(s.label), id);
  const double v =
      s.plain() ? number(n, label)
                : quantity(n, label,
                           unit ? *unit : SiUnit::of(std::string(s.si), std::string(s.quantity)),
                           s.chemistry_units ? chemistry_units() : UnitOptions{});
  check_range(n, label, s.range, s.si, v);
  return v;
}

double Loader::number(const YAML::Node& n, std::string_view field) const {
  if (n.IsScalar())
    if (const auto v = parse_number(n.Scalar())) return *v;
  fail(n, fmt::format("{} needs a plain number, got {}", field, describe(n)));
}

std::vector<double> Loader::numbers(const YAML::Node& n, std::string_view field,
                                    std::size_t min_count, std::size_t max_count) const {
  const std::string count = min_count == max_count ? std::to_string(min_count)
                                                   : fmt::format("{} to {}", min_count, max_count);
  if (!n.IsSequence() || n.size() < min_count || n.size() > max_count)
    fail(n, fmt::format("{} needs a list of {} numbers, got {}{}", field, count, describe(n),
                        n.IsSequence() ? fmt::format(" of {}", n.size()) : ""));
  std::vector<double> out;
  for (const auto& item : n) out.push_back(number(item, field));
  return out;
}

std::array<double, 2> Loader::temperature_range(const YAML::Node& n, std::string_view field) const {
  if (!n.IsSequence() || n.size() != 2)
    fail(n, fmt::format("{} needs a list of two temperatures [low, high], got {}", field,
                        describe(n)));
  const double lo = temperature(n[0], field);
  const double hi = temperature(n[1], field);
  if (lo >= hi) fail(n, fmt::format("{} needs low < high, got [{:g} K, {:g} K]", field, lo, hi));
  return {lo, hi};
}

std::string Loader::choice(const YAML::Node& n, std::string_view field,
                           std::initializer_list<std::string_view> options) const {
  const std::vector<std::string> all = to_strings(options);
  std::string listed;
  for (const auto& o : all) listed += (listed.empty() ? "" : " | ") + o;
  if (!n.IsScalar() || n.Scalar().empty())
    fail(n, fmt::format("{} needs one of {}, got {}", field, listed, describe(n)));
  const std::string& v = n.Scalar();
  if (std::find(all.begin(), all.end(), v) != all.end()) return v;
  fail(n, fmt::format("{} needs one of {}, got \"{}\"{}", field, listed, v,
                      suggest(v, all, "valid values")));
}

std::string Loader::id(const YAML::Node& n, std::string_view kind) {
  const std::string s = text(n, fmt::format("id of {}", kind), "a name");
  if (!valid_id(s))
    fail(n, fmt::format("id \"{}\" of {} may hold only letters, digits, _ and -, and needs at "
                        "least one letter",
                        s, kind));
  const auto [it, inserted] = ids_.try_emplace(s, std::string(kind), line_of(n));
  if (!inserted)
    fail(n, fmt::format("duplicate id \"{}\": already used by a {} at line {} (ids are unique "
                        "across species, reactions and stages)",
                        s, it->second.first, it->second.second));
  return s;
}

int Loader::species_index(const YAML::Node& n, std::string_view where) const {
  const std::string s = text(n, where, "a species id");
  for (std::size_t i = 0; i < species_.size(); ++i)
    if (species_[i].id == s) return static_cast<int>(i);
  std::vector<std::string> known;
  for (const auto& sp : species_) known.push_back(sp.id);
  fail(n, fmt::format("unknown species \"{}\" in {}{}", s, where,
                      suggest(s, known, "declared species")));
}

// ---- species -------------------------------------------------------------

void Loader::read_species(const YAML::Node& list) {
  if (!list.IsSequence() || list.size() == 0)
    fail(list, fmt::format("species needs a list of species (- id: ...), got {}", describe(list)));
  if (list.size() > kMaxSpecies)
    fail(list, fmt::format("too many species: {} (the limit is {})", list.size(), kMaxSpecies));
  for (std::size_t i = 0; i < list.size(); ++i) {
    species_.push_back(read_one_species(list[i], i));
  }
}

Species Loader::read_one_species(const YAML::Node& node, std::size_t index) {
  Fields f(*this, node, fmt::format("species entry {}", index + 1));
  Species sp;
  sp.id = id(f.need("id", "a species id, e.g. id: NC5"), "species");
  f.set_context("species " + sp.id);
  f.check({"id", "name", "formula", "mw", "thermo", "density"});
  const std::string& ctx = f.context();

  sp.name = sp.id;
  if (const auto* n = f.find("name")) sp.name = text(*n, "name of " + ctx, "a display name");

  if (const auto* n = f.find("formula")) {
    const std::string formula = text(*n, "formula of " + ctx, "a chemical formula, e.g. C5H12");
    try {
      sp.formula = parse_formula(formula);
    } catch (const FormulaError& e) {
      fail(*n, fmt::format("formula of {}: {}", ctx, e.what()));
    }
  }
  if (const auto* n = f.find("mw")) {
    sp.mw = field(*n, CaseFieldKind::MolarMass, sp.id);
    if (sp.formula) {
      const double from_formula = molar_mass(*sp.formula);
      if (std::abs(*sp.mw - from_formula) > kMwTolerance * from_formula)
        fail(*n, fmt::format("mw of {} is {:g} g/mol, but its formula gives {:.3f} g/mol (they "
                             "must agree within 0.5 %)",
                             ctx, *sp.mw * 1000, from_formula * 1000));
    }
  } else if (sp.formula) {
    sp.mw = molar_mass(*sp.formula);
  }
  SpeciesInfo info{node, std::nullopt};
  if (const auto* n = f.find("thermo")) {
    sp.thermo = read_thermo(*n, sp.id);
    info.thermo = *n;
  }
  if (const auto* n = f.find("density")) sp.density = field(*n, CaseFieldKind::Density, sp.id);

  if (phase_ == Phase::Liquid) {
    // Liquid volumes come from mw / density of every species (ideal mixing).
    if (!sp.density)
      fail(node, fmt::format("{} is missing \"density\" (a liquid density, e.g. density: 620 "
                             "kg/m3), needed for every species in phase: liquid",
                             ctx));
    if (!sp.mw)
      fail(node, fmt::format("{} needs mw or formula: phase: liquid computes volumes from the "
                             "molar mass and density of every species",
                             ctx));
  }
  species_info_.push_back(std::move(info));
  return sp;
}

ThermoModel Loader::read_thermo(const YAML::Node& node, const std::string& owner) const {
  Fields f(*this, node, "thermo of species " + owner);
  f.check({"h_f", "s", "cp", "nasa7"});
  const std::string& ctx = f.context();
  try {
    if (const auto* n = f.find("nasa7")) {
      for (const char* k : {"h_f", "s", "cp"})
        if (const auto* extra = f.key_of(k))
          fail(*extra,
               fmt::format("{}: nasa7 carries its own {}; remove \"{}\"", ctx,
                           std::string_view(k) == "cp" ? "heat capacity" : "reference h and s", k));
      return ThermoModel(read_nasa7(*n, owner), std::nullopt, std::nullopt);
    }
    const YAML::Node& cp_node =
        f.need("cp",
               "a heat capacity: e.g. cp: 120 J/mol/K, {poly: [...]}, {shomate: [...], T_range: "
               "[...]}; or give nasa7 instead");
    CpModel cp = read_cp(cp_node, owner);
    std::optional<double> h_f, s;
    if (const auto* n = f.find("h_f"))
      h_f = quantity(*n, "h_f of species " + owner, molar_energy_unit(), chemistry_units());
    if (const auto* n = f.find("s"))
      s = quantity(*n, "s of species " + owner, molar_entropy_unit(), chemistry_units());
    return ThermoModel(std::move(cp), h_f, s);
  } catch (const std::invalid_argument& e) {
    // The model's own checks; the loader's come first, so this is a backstop.
    fail(node, fmt::format("{}: {}", ctx, e.what()));
  }
}

CpModel Loader::read_cp(const YAML::Node& node, const std::string& owner) const {
  const std::string field = "cp of species " + owner;
  if (node.IsScalar()) {
    const double cp = quantity(node, field, molar_cp_unit(), chemistry_units());
    check_range(node, field, kPositive, molar_cp_unit().numerator, cp);
    return CpConstant{cp};
  }
  if (node.IsSequence()) {
    if (node.size() == 0) fail(node, field + " needs at least one Shomate set");
    CpShomate m;
    for (const auto& item : node) {
      ShomateSet set = read_shomate_set(item, owner);
      if (!m.sets.empty() && set.T_low < m.sets.back().T_high)
        fail(item, fmt::format("{}: Shomate sets must be listed by rising temperature without "
                               "overlap; this one starts at {:g} K, below the {:g} K where the "
                               "one before ends",
                               field, set.T_low, m.sets.back().T_high));
      m.sets.push_back(set);
    }
    return m;
  }
  if (node.IsMap()) {
    Fields f(*this, node, field);
    if (f.find("poly") && f.find("shomate"))
      fail(*f.key_of("shomate"), field + " gives both poly and shomate; give one");
    if (f.find("poly")) {
      f.check({"poly", "T_range"});
      const auto a = numbers(*f.find("poly"), field + " poly", 1, 4);
      CpPolynomial p;
      std::copy(a.begin(), a.end(), p.a.begin());
      if (const auto* r = f.find("T_range")) p.T_range = temperature_range(*r, field + " T_range");
      return p;
    }
    if (f.find("shomate")) return CpShomate{{read_shomate_set(node, owner)}};
  }
  fail(node, fmt::format("{} needs a constant (e.g. 120 J/mol/K), {{poly: [a, b, c, d]}}, "
                         "{{shomate: [A, B, C, D, E], T_range: [low, high]}} or a list of "
                         "Shomate sets, got {}",
                         field, describe(node)));
}

ShomateSet Loader::read_shomate_set(const YAML::Node& node, const std::string& owner) const {
  const std::string field = "cp of species " + owner;
  Fields f(*this, node, field + " (Shomate set)");
  f.check({"shomate", "T_range"});
  const auto c =
      numbers(f.need("shomate", "five coefficients [A, B, C, D, E]"), field + " shomate", 5, 5);
  const auto range = temperature_range(
      f.need("T_range", "the set's validity range, e.g. T_range: [298, 1200]"), field + " T_range");
  ShomateSet set;
  std::copy(c.begin(), c.end(), set.c.begin());
  set.T_low = range[0];
  set.T_high = range[1];
  return set;
}

Nasa7 Loader::read_nasa7(const YAML::Node& node, const std::string& owner) const {
  const std::string field = "nasa7 of species " + owner;
  Fields f(*this, node, field);
  f.check({"T_mid", "low", "high", "T_low", "T_high"});
  Nasa7 m;
  m.T_mid = temperature(f.need("T_mid", "the temperature between the two ranges, e.g. 1000"),
                        field + " T_mid");
  const auto lo =
      numbers(f.need("low", "seven coefficients a1..a7 below T_mid"), field + " low", 7, 7);
  const auto hi =
      numbers(f.need("high", "seven coefficients a1..a7 above T_mid"), field + " high", 7, 7);
  std::copy(lo.begin(), lo.end(), m.low.begin());
  std::copy(hi.begin(), hi.end(), m.high.begin());
  if (const auto* n = f.find("T_low")) {
    m.T_low = temperature(*n, field + " T_low");
    if (m.T_low >= m.T_mid)
      fail(*n,
           fmt::format("{} T_low ({:g} K) must be below T_mid ({:g} K)", field, m.T_low, m.T_mid));
  }
  if (const auto* n = f.find("T_high")) {
    m.T_high = temperature(*n, field + " T_high");
    if (m.T_high <= m.T_mid)
      fail(*n, fmt::format("{} T_high ({:g} K) must be above T_mid ({:g} K)", field, m.T_high,
                           m.T_mid));
  }
  return m;
}

// ---- reactions -----------------------------------------------------------

void Loader::read_reactions(const YAML::Node& list) {
  if (!list.IsSequence() || list.size() == 0)
    fail(list,
         fmt::format("reactions needs a list of reactions (- id: ...), got {}", describe(list)));
  if (list.size() > kMaxReactions)
    fail(list, fmt::format("too many reactions: {} (the limit is {})", list.size(), kMaxReactions));
  for (std::size_t i = 0; i < list.size(); ++i) reactions_.push_back(read_one_reaction(list[i], i));
}

double Loader::sensible_sum(const std::vector<double>& nu, double T) const {
  double s = 0;
  for (std::size_t i = 0; i < nu.size(); ++i)
    if (nu[i] != 0) s += nu[i] * species_[i].thermo.h_sensible(T);
  return s;
}

Reaction Loader::read_one_reaction(const YAML::Node& node, std::size_t index) {
  Fields f(*this, node, fmt::format("reaction entry {}", index + 1));
  Reaction rx;
  rx.id = id(f.need("id", "a reaction id, e.g. id: isom"), "reaction");
  f.set_context("reaction " + rx.id);
  f.check({"id", "equation", "rate", "dH", "equilibrium"});
  rx.where = at(node);
  const std::size_t n = species_.size();

  // Equation. Error columns point into the text; a quoted scalar starts one
  // column after its mark.
  const YAML::Node& eq_node = f.need("equation", "e.g. equation: NC5 <=> IC5");
  rx.equation = text(eq_node, "equation of reaction " + rx.id, "an equation like A + 2 B => C");
  const std::size_t quote =
      eq_node.Tag() == "!" && rx.equation.find('\n') == std::string::npos ? 1 : 0;
  ParsedEquation eq;
  try {
    eq = parse_equation(rx.equation);
  } catch (const EquationError& e) {
    throw InputError(at(eq_node, quote + e.column()),
                     fmt::format("equation of reaction {}: {}", rx.id, e.what()));
  }
  rx.reversible = eq.reversible;
  rx.nu.assign(n, 0.0);
  auto index_of = [&](const EquationTerm& t) {
    for (std::size_t i = 0; i < n; ++i)
      if (species_[i].id == t.species) return i;
    std::vector<std::string> known;
    for (const auto& sp : species_) known.push_back(sp.id);
    throw InputError(at(eq_node, quote + t.column),
                     fmt::format("unknown species \"{}\" in the equation of reaction {}{}",
                                 t.species, rx.id, suggest(t.species, known, "declared species")));
  };
  for (const auto& t : eq.reactants) rx.nu[index_of(t)] -= t.coefficient;
  for (const auto& t : eq.products) rx.nu[index_of(t)] += t.coefficient;
  if (std::all_of(rx.nu.begin(), rx.nu.end(), [](double v) { return v == 0; }))
    fail(eq_node, fmt::format("equation of reaction {} has no net change (every species "
                              "appears equally on both sides)",
                              rx.id));

  // Element balance, when every species has a formula.
  if (std::all_of(species_.begin(), species_.end(), [](const Species& s) { return s.formula; })) {
    std::map<std::string, std::pair<double, double>> sides;  // element -> (left, right)
    for (const auto& t : eq.reactants)
      for (const auto& [el, count] : *species_[index_of(t)].formula)
        sides[el].first += t.coefficient * count;
    for (const auto& t : eq.products)
      for (const auto& [el, count] : *species_[index_of(t)].formula)
        sides[el].second += t.coefficient * count;
    std::vector<std::string> off;
    for (const auto& [el, lr] : sides) {
      const double scale = std::max({1.0, std::abs(lr.first), std::abs(lr.second)});
      if (std::abs(lr.first - lr.second) > 1e-9 * scale)
        off.push_back(
            fmt::format("{} ({:g} on the left, {:g} on the right)", el, lr.first, lr.second));
    }
    if (!off.empty())
      fail(eq_node,
           fmt::format("equation of reaction {} is not balanced in {}", rx.id, join_and(off)));
  }

  rx.rate = read_rate(f.need("rate", "a rate law: {A: ..., Ea: ...}"), rx.id, eq);

  // Warn where the reverse term of a reversible law is singular at zero.
  if (rx.reversible)
    for (std::size_t i = 0; i < n; ++i)
      if (rx.rate.orders[i] + rx.nu[i] < 0)
        warnings_.push_back(fmt::format(
            "reaction {}: species {} has order {:g} and coefficient {:g}, so the reverse term "
            "of the rate law has a negative exponent and is unbounded where {} is absent",
            rx.id, species_[i].id, rx.rate.orders[i], rx.nu[i], species_[i].id));

  rx.dH_298 = read_dH(f, rx);
  rx.equilibrium = read_equilibrium(f, rx);
  return rx;
}

RateLaw Loader::read_rate(const YAML::Node& node, const std::string& rx_id,
                          const ParsedEquation& eq) const {
  Fields f(*this, node, "rate of reaction " + rx_id);
  f.check({"per", "A", "Ea", "T_ref", "driving", "orders", "adsorption"});
  const std::string& ctx = f.context();
  RateLaw law;
  law.orders.assign(species_.size(), 0.0);
  if (const auto* n = f.find("per"))
    law.basis = choice(*n, "per of " + ctx, {"volume", "catalyst"}) == "catalyst"
                    ? RateBasis::Catalyst
                    : RateBasis::Volume;
  if (const auto* n = f.find("driving")) {
    law.driving = choice(*n, "driving of " + ctx, {"concentration", "pressure"}) == "pressure"
                      ? Driving::Pressure
                      : Driving::Concentration;
    if (law.driving == Driving::Pressure && phase_ == Phase::Liquid)
      fail(*n, fmt::format("driving: pressure in {} needs phase: gas; a liquid-phase rate is "
                           "driven by concentrations",
                           ctx));
  }
  if (const auto* n = f.find("orders")) {
    Fields orders(*this, *n, "orders of " + ctx);
    for (const auto& e : orders.entries()) {
      const int i = species_index(e.key, "orders of " + ctx);
      const double o = number(e.value, fmt::format("order of {} in {}", e.name, ctx));
      if (o < 0)
        fail(e.value, fmt::format("order of {} in {} must not be negative (the rate would be "
                                  "infinite where {} is absent), got {:g}",
                                  e.name, ctx, e.name, o));
      law.orders[i] = o;
    }
  } else {
    // Default: elementary in the reactants.
    for (const auto& t : eq.reactants)
      for (std::size_t i = 0; i < species_.size(); ++i)
        if (species_[i].id == t.species) law.orders[i] += t.coefficient;
  }
  double total_order = 0;
  for (double o : law.orders) total_order += o;

  const bool per_cat = law.basis == RateBasis::Catalyst;
  const bool pressure = law.driving == Driving::Pressure;
  const SiUnit unit = rate_constant_unit(
      law, fmt::format("a rate constant for a rate per {} with {} driving force and orders summing "
                       "to {:g}",
                       per_cat ? "kg of catalyst" : "m3 of reactor",
                       pressure ? "a partial-pressure" : "a concentration", total_order));
  law.A = field(f.need("A", "the pre-exponential factor, e.g. A: 3.0e-2 mol/(kg*s*bar)"),
                CaseFieldKind::RateA, rx_id, &unit);
  law.Ea = field(f.need("Ea", "the activation energy, e.g. Ea: 65 kJ/mol (0 for none)"),
                 CaseFieldKind::RateEa, rx_id);
  if (const auto* n = f.find("T_ref")) law.T_ref = field(*n, CaseFieldKind::RateTref, rx_id);
  for (const char* key : {"A", "Ea", "T_ref"})
    if (const auto* n = f.find(key); n && n->IsScalar())
      law.as_written +=
          fmt::format("{}{}: {}", law.as_written.empty() ? "" : ", ", key, n->Scalar());
  if (const auto* n = f.find("adsorption")) {
    law.adsorption = read_adsorption(*n, ctx, law.driving);
    // The terms as written, after the rate constant's parameters.
    const auto& terms = (*n)["terms"];
    law.as_written += fmt::format("; adsorption, exponent {:g}:", law.adsorption->exponent);
    for (std::size_t t = 0; t < terms.size(); ++t) {
      std::string term;
      for (const char* key : {"K", "dH", "T_ref"})
        if (const auto v = terms[t][key]; v && v.IsScalar())
          term += fmt::format("{}{}: {}", term.empty() ? "" : ", ", key, v.Scalar());
      const auto& powers = law.adsorption->terms[t].powers;
      for (std::size_t i = 0; i < powers.size(); ++i)
        if (powers[i] != 0) term += fmt::format(", {}: {:g}", species_[i].id, powers[i]);
      law.as_written += fmt::format(" [{}]", term);
    }
  }
  return law;
}

// adsorption: {exponent: n, terms: [{K, dH, T_ref, species: {SP: m}}, ...]}
// (kinetics.hpp gives the law).
Adsorption Loader::read_adsorption(const YAML::Node& node, const std::string& ctx,
                                   Driving driving) const {
  const std::string where = "adsorption of " + ctx;
  Fields f(*this, node, where);
  f.check({"exponent", "terms"});
  Adsorption a;
  if (const auto* n = f.find("exponent")) {
    const std::string label = "exponent of " + where;
    a.exponent = number(*n, label);
    check_range(*n, label, kPositive, "1", a.exponent);
  }
  const YAML::Node& list = f.need("terms",
                                  "a list of terms, e.g. terms: [{K: 8.0 1/bar, dH: -30 kJ/mol, "
                                  "species: {A: 1}}]");
  if (!list.IsSequence() || list.size() == 0)
    fail(list, fmt::format("terms of {} needs a list of adsorption terms (- {{K: ..., dH: ..., "
                           "species: {{...}}}}), got {}",
                           where, describe(list)));
  if (list.size() > Adsorption::kMaxTerms)
    fail(list, fmt::format("too many terms in {}: {} (the limit is {})", where, list.size(),
                           Adsorption::kMaxTerms));
  for (std::size_t t = 0; t < list.size(); ++t)
    a.terms.push_back(read_adsorption_term(
        list[t], fmt::format("adsorption term {} of {}", t + 1, ctx), driving));
  return a;
}

AdsorptionTerm Loader::read_adsorption_term(const YAML::Node& node, const std::string& ctx,
                                            Driving driving) const {
  Fields f(*this, node, ctx);
  f.check({"K", "dH", "T_ref", "species"});
  AdsorptionTerm t;
  t.powers.assign(species_.size(), 0.0);
  // The species first: they fix the unit of K.
  const YAML::Node& sp = f.need("species",
                                "the adsorbing species and their powers, e.g. "
                                "species: {H2: 0.5} for dissociative adsorption");
  Fields powers(*this, sp, "species of " + ctx);
  double total = 0;
  for (const auto& e : powers.entries()) {
    const int i = species_index(e.key, "species of " + ctx);
    const std::string label = fmt::format("power of {} in {}", e.name, ctx);
    const double m = number(e.value, label);
    check_range(e.value, label, kNonNegative, "1", m);
    t.powers[i] = m;
    total += m;
  }
  if (!(total > 0))
    fail(sp, fmt::format("species of {} needs at least one species with a positive power, e.g. "
                         "{{A: 1}}",
                         ctx));
  const bool pressure = driving == Driving::Pressure;
  const SiUnit unit = adsorption_constant_unit(
      driving, t,
      fmt::format("an adsorption constant for a {} driving force and species powers summing "
                  "to {:g}",
                  pressure ? "partial-pressure" : "concentration", total));
  const YAML::Node& K = f.need("K", "the adsorption constant, e.g. K: 8.0 1/bar");
  t.K = quantity(K, "K of " + ctx, unit);
  check_range(K, "K of " + ctx, kPositive, "", t.K);
  t.dH = quantity(f.need("dH",
                         "the adsorption enthalpy, e.g. dH: -30 kJ/mol (0 for a K "
                         "independent of T)"),
                  "dH of " + ctx, molar_energy_unit(), chemistry_units());
  if (const auto* n = f.find("T_ref")) t.T_ref = temperature(*n, "T_ref of " + ctx);
  return t;
}

double Loader::read_dH(const Fields& f, const Reaction& rx) const {
  const std::string field = "dH of reaction " + rx.id;
  if (const auto* n = f.find("dH")) {
    if (!n->IsMap()) return quantity(*n, field, molar_energy_unit(), chemistry_units());
    Fields d(*this, *n, field);
    d.check({"value", "T"});
    const double value = quantity(d.need("value", "the heat of reaction, e.g. value: -7.9 kJ/mol"),
                                  field, molar_energy_unit(), chemistry_units());
    const double T =
        temperature(d.need("T", "the temperature the value holds at, e.g. T: 450 K"), field + " T");
    // Kirchhoff: dH(T) = dH_298 + sum nu_i hs_i(T), inverted.
    return value - sensible_sum(rx.nu, T);
  }
  double dH = 0;
  for (std::size_t i = 0; i < species_.size(); ++i) {
    if (rx.nu[i] == 0) continue;
    if (!species_[i].thermo.has_h_f())
      fail(f.node(), fmt::format("reaction {} is missing \"dH\" and species {} has no h_f to "
                                 "compute it from; give dH (e.g. dH: -7.9 kJ/mol) or h_f for "
                                 "every species in the reaction",
                                 rx.id, species_[i].id));
    dH += rx.nu[i] * *species_[i].thermo.h_f();
  }
  return dH;
}

EquilibriumSource Loader::read_equilibrium(const Fields& f, const Reaction& rx) const {
  const YAML::Node* n = f.find("equilibrium");
  EquilibriumSource eq;
  if (!rx.reversible) {
    if (n)
      fail(*f.key_of("equilibrium"),
           fmt::format("reaction {} is irreversible (=>), so it takes no equilibrium; write <=> "
                       "for a reversible reaction or remove \"equilibrium\"",
                       rx.id));
    return eq;
  }
  if (!n)
    fail(f.node(), fmt::format("reversible reaction {} (<=>) is missing \"equilibrium\" "
                               "(equilibrium: thermo, or equilibrium: {{K: 2.9, T: 450 K}}); "
                               "write => for an irreversible reaction",
                               rx.id));
  const std::string field = "equilibrium of reaction " + rx.id;
  if (n->IsScalar()) {
    choice(*n, field, {"thermo"});
    for (std::size_t i = 0; i < species_.size(); ++i) {
      if (rx.nu[i] == 0) continue;
      const auto& t = species_[i].thermo;
      if (!t.has_h_f() || !t.has_s())
        fail(*n, fmt::format("{}: thermo needs h_f and s of every species in the reaction; "
                             "species {} has no {}",
                             field, species_[i].id, t.has_h_f() ? "s" : "h_f"));
    }
    eq.kind = EquilibriumSource::Kind::Thermo;
    return eq;
  }
  Fields e(*this, *n, field);
  e.check({"K", "T", "dH"});
  eq.K_ref = this->field(e.need("K", "the equilibrium constant at T (activity basis), e.g. K: 2.9"),
                         CaseFieldKind::EquilibriumK, rx.id);
  eq.T_ref = this->field(e.need("T", "the temperature of K, e.g. T: 450 K"),
                         CaseFieldKind::EquilibriumT, rx.id);
  if (const auto* d = e.find("dH"))
    eq.dH = this->field(*d, CaseFieldKind::EquilibriumDH, rx.id);
  else
    eq.dH = rx.dH_298 + sensible_sum(rx.nu, eq.T_ref);
  eq.kind = EquilibriumSource::Kind::VantHoff;
  return eq;
}

// ---- feed, key -----------------------------------------------------------

void Loader::read_feed(const YAML::Node& node) {
  Fields f(*this, node, "feed");
  f.check({"T", "P", "flow", "composition", "flows"});
  feed_.T = field(f.need("T", "the feed temperature, e.g. T: 130 degC"), CaseFieldKind::FeedT);
  feed_.P = field(f.need("P", "the feed pressure, e.g. P: 25 bar"), CaseFieldKind::FeedP);
  feed_.F.assign(species_.size(), 0.0);
  const YAML::Node* flow = f.find("flow");
  const YAML::Node* comp = f.find("composition");
  const YAML::Node* flows = f.find("flows");
  if (flows && (flow || comp))
    fail(*f.key_of("flows"), "feed gives both flows and flow/composition; give one of them");
  if (!flows && !flow && !comp)
    fail(node,
         "feed is missing its flow: give flow (total, e.g. 50 kmol/h) with composition "
         "(mole fractions), or flows (one per species)");
  if (flows) {
    Fields fl(*this, *flows, "feed flows");
    double total = 0;
    for (const auto& e : fl.entries()) {
      const int i = species_index(e.key, "feed flows");
      const double F = field(e.value, CaseFieldKind::FeedFlowOf, e.name);
      feed_.F[i] = F;
      total += F;
    }
    if (total <= 0) fail(*flows, "feed flows are all zero; the feed needs a positive total flow");
    return;
  }
  if (!comp)
    fail(node,
         "feed gives flow but is missing \"composition\" (mole fractions, e.g. "
         "composition: {NC5: 0.95, IC5: 0.05})");
  if (!flow)
    fail(node,
         "feed gives composition but is missing \"flow\" (the total molar flow, e.g. "
         "flow: 50 kmol/h)");
  const double total = field(*flow, CaseFieldKind::FeedFlow);
  Fields c(*this, *comp, "feed composition");
  double sum = 0;
  for (const auto& e : c.entries()) {
    const int i = species_index(e.key, "feed composition");
    const double x = field(e.value, CaseFieldKind::FeedFraction, e.name);
    feed_.F[i] = x * total;
    sum += x;
  }
  if (std::abs(sum - 1.0) > kCompositionTolerance)
    fail(*comp, fmt::format("feed composition sums to {:.9g}; mole fractions must sum to 1 "
                            "(within {:g})",
                            sum, kCompositionTolerance));
}

void Loader::read_key(const YAML::Node& node) {
  key_ = species_index(node, "key");
  const std::string& k = species_[key_].id;
  if (feed_.F[key_] <= 0)
    fail(node, fmt::format("key species {} has no flow in the feed; conversion is measured "
                           "against its feed flow",
                           k));
  const bool consumed = std::any_of(reactions_.begin(), reactions_.end(),
                                    [&](const Reaction& rx) { return rx.nu[key_] < 0; });
  if (!consumed)
    fail(node, fmt::format("key species {} is consumed by no reaction; the key is the reactant "
                           "whose conversion the train reports",
                           k));
}

// ---- train ---------------------------------------------------------------

void Loader::read_train(const YAML::Node& list) {
  if (!list.IsSequence() || list.size() == 0)
    fail(list, fmt::format("train needs a list of at least one stage (- {{type: pfr, id: R1, "
                           "volume: 2.5 m3}}), got {}",
                           describe(list)));
  if (list.size() > kMaxStages)
    fail(list, fmt::format("too many stages: {} (the limit is {})", list.size(), kMaxStages));
  double shares = 0;
  for (std::size_t i = 0; i < list.size(); ++i) {
    train_.push_back(read_stage(list[i], i));
    stage_nodes_.push_back(list[i]);
    if (const auto* q = std::get_if<QuenchSpec>(&train_.back()); q && q->share) {
      shares += *q->share;
      if (shares >= 1)
        fail(list[i]["share"],
             fmt::format("the quench shares sum to {:g} at stage {}; they are parts of the feed "
                         "that bypass the first stage, so they must sum to less than 1",
                         shares, q->id));
    }
  }
}

StageSpec Loader::read_stage(const YAML::Node& node, std::size_t index) {
  Fields f(*this, node, fmt::format("stage entry {}", index + 1));
  const std::string type = choice(f.need("type", "pfr | cstr | exchanger | quench | interchanger"),
                                  fmt::format("type of stage entry {}", index + 1),
                                  {"pfr", "cstr", "exchanger", "quench", "interchanger"});
  const std::string sid = id(f.need("id", "a stage id, e.g. id: R1"), "stage");
  f.set_context("stage " + sid);
  const std::string& ctx = f.context();

  if (type == "exchanger") {
    f.check({"type", "id", "T_out", "duty", "U", "utility"});
    ExchangerSpec x;
    x.id = sid;
    x.where = at(node);
    const auto* t_out = f.find("T_out");
    const auto* duty = f.find("duty");
    if (t_out && duty)
      fail(*f.key_of("duty"), fmt::format("{} gives both T_out and duty; give exactly one", ctx));
    if (!t_out && !duty)
      fail(node, fmt::format("{} needs exactly one of T_out (outlet temperature, e.g. T_out: 125 "
                             "degC) or duty (heat added, e.g. duty: -1.2 MW)",
                             ctx));
    if (t_out) x.T_out = field(*t_out, CaseFieldKind::ExchangerTout, sid);
    if (duty) x.duty = field(*duty, CaseFieldKind::ExchangerDuty, sid);
    read_exchanger_size(f, x);
    return x;
  }

  if (type == "quench") return read_quench(f, node, sid);

  if (type == "interchanger") {
    f.check({"type", "id", "hot_from", "UA", "arrangement"});
    InterchangerSpec x;
    x.id = sid;
    x.where = at(node);
    x.hot_from = text(f.need("hot_from",
                             "the stage whose outlet passes the hot side, e.g. "
                             "hot_from: R1"),
                      "hot_from of " + ctx, "a stage id");
    x.UA = field(f.need("UA", "the interchanger's UA, e.g. UA: 45 kW/K"),
                 CaseFieldKind::InterchangerUA, sid);
    if (const auto* a = f.find("arrangement"))
      x.arrangement = choice(*a, "arrangement of " + ctx, {"counter", "parallel"}) == "parallel"
                          ? FlowArrangement::Parallel
                          : FlowArrangement::Counter;
    return x;
  }

  f.check({"type", "id", "volume", "catalyst", "bulk_density", "target", "heat", "activity",
           "pellet", "effectiveness", "bed", "tubes", "heat_capacity"});
  ReactorSpec r;
  r.id = sid;
  r.type = type == "cstr" ? ReactorType::Cstr : ReactorType::Pfr;
  r.where = at(node);
  const char* size_keys[] = {"volume", "catalyst", "target"};
  const char* first = nullptr;
  for (const char* k : size_keys) {
    if (!f.find(k)) continue;
    if (first)
      fail(*f.key_of(k), fmt::format("{} gives both {} and {}; give exactly one of volume, "
                                     "catalyst or target",
                                     ctx, first, k));
    first = k;
  }
  if (!first)
    fail(node, fmt::format("{} needs one of volume (e.g. volume: 2.5 m3), catalyst (a mass, with "
                           "bulk_density) or target (e.g. target: {{conversion: 0.65}})",
                           ctx));
  if (const auto* n = f.find("bulk_density"))
    r.bulk_density = field(*n, CaseFieldKind::BulkDensity, sid);
  if (const auto* n = f.find("volume")) r.volume = field(*n, CaseFieldKind::Volume, sid);
  if (const auto* n = f.find("catalyst")) {
    r.catalyst_mass = field(*n, CaseFieldKind::Catalyst, sid);
    if (!r.bulk_density)
      fail(node, fmt::format("{} gives catalyst but is missing \"bulk_density\", which turns the "
                             "catalyst mass into a bed volume (e.g. bulk_density: 750 kg/m3)",
                             ctx));
    r.volume = *r.catalyst_mass / *r.bulk_density;
  }
  if (const auto* n = f.find("target")) {
    Fields t(*this, *n, "target of " + ctx);
    t.check({"conversion", "outlet"});
    if (t.find("conversion") && t.find("outlet"))
      fail(*t.key_of("outlet"), fmt::format("target of {} gives both conversion and outlet; give "
                                            "exactly one",
                                            ctx));
    if (const auto* o = t.find("outlet")) {
      r.target_outlet = read_outlet_target(*o, ctx);
    } else {
      const YAML::Node& x = t.need("conversion",
                                   "the overall key conversion to reach, e.g. 0.65, or an outlet "
                                   "purity, e.g. outlet: {C2H2: 1 ppm}");
      r.target_conversion = field(x, CaseFieldKind::StageTarget, sid);
    }
  }
  if (const auto* n = f.find("heat")) {
    if (n->IsMap())
      // A stirred tank is cooled through its wall (UA), a tubular stage
      // through its tubes (U).
      if (r.type == ReactorType::Cstr)
        r.tank_cooling = read_tank_cooling(*n, sid, ctx);
      else
        r.cooling = read_cooling(*n, sid, ctx);
    else
      r.heat = choice(*n, "heat of " + ctx, {"adiabatic", "isothermal"}) == "isothermal"
                   ? HeatMode::Isothermal
                   : HeatMode::Adiabatic;
  }
  if (const auto* n = f.find("heat_capacity")) {
    if (r.type != ReactorType::Cstr)
      fail(*f.key_of("heat_capacity"),
           fmt::format("{}: heat_capacity (of the vessel and catalyst) belongs to a stirred tank "
                       "(type: cstr), where it slows the temperature's dynamics",
                       ctx));
    r.heat_capacity = field(*n, CaseFieldKind::TankHeatCapacity, sid);
  }
  if (const auto* n = f.find("activity")) r.activity = field(*n, CaseFieldKind::Activity, sid);
  if (const auto* n = f.find("pellet")) r.pellet = read_pellet(*n, "pellet of " + ctx);
  if (f.find("bed") || f.find("tubes")) {
    if (r.type != ReactorType::Pfr)
      fail(*f.key_of(f.find("bed") ? "bed" : "tubes"),
           fmt::format("{}: bed and tubes describe a packed tubular stage (type: pfr); a stirred "
                       "tank has no bed geometry",
                       ctx));
    r.geometry = read_geometry(f, ctx);
  }
  if (r.cooling && (r.type != ReactorType::Pfr || !r.geometry || r.geometry->tubes == 0))
    fail(*f.key_of("heat"),
         fmt::format("{} is cooled (heat: {{U, coolant}}) but gives no tubes; the heat goes "
                     "through the tube walls, 4 / d per bed volume: give the tubes (type: pfr, "
                     "e.g. tubes: {{count: 2400, diameter: 38 mm, void_fraction: 0.42}})",
                     ctx));
  if (r.cooling && r.cooling->direction == CoolantFlow::Countercurrent && r.sized())
    fail(*f.key_of("target"),
         fmt::format("{} has a countercurrent coolant, whose outlet is found by shooting on the "
                     "whole bed: give the bed's size (volume or catalyst), not a target",
                     ctx));
  if (const auto* n = f.find("effectiveness")) {
    if (!r.pellet || r.pellet->D_eff.empty())
      fail(*f.key_of("effectiveness"),
           fmt::format("{} gives effectiveness but its pellet has no D_eff, the effective "
                       "diffusivity the effectiveness factors need (e.g. pellet: {{shape: sphere, "
                       "size: 3 mm, D_eff: 2.0e-6 m2/s, density: 1400 kg/m3}})",
                       ctx));
    r.pellet->effectiveness =
        choice(*n, "effectiveness of " + ctx, {"thiele", "pellet"}) == "thiele"
            ? EffectivenessModel::Thiele
            : EffectivenessModel::Pellet;
  }
  if (r.pellet && !r.pellet->D_eff.empty() && r.type != ReactorType::Pfr)
    fail(*f.key_of("pellet"),
         fmt::format("{}: effectiveness factors (pellet D_eff) are computed for tubular stages "
                     "(type: pfr) only",
                     ctx));
  // Effectiveness factors turn each per-catalyst rate into a rate per
  // pellet volume: that needs per-catalyst rates and the pellet's density
  // (the same rules stages/pfr.cpp applies to a case built in code).
  if (r.pellet && !r.pellet->D_eff.empty())
    for (const auto& rx : reactions_) {
      if (rx.rate.basis != RateBasis::Catalyst)
        fail(*f.find("pellet"), fmt::format("{}: effectiveness factors need per-catalyst rates "
                                            "(per: catalyst); reaction {} is per volume",
                                            ctx, rx.id));
      if (!r.pellet->density)
        fail(*f.find("pellet"),
             fmt::format("{}: the pellet needs a density (e.g. density: 1400 kg/m3) to turn the "
                         "per-catalyst rate of {} into a rate per pellet volume",
                         ctx, rx.id));
    }
  return r;
}

// A cooled stirred tank's `heat: {UA: 40 kW/K, coolant: {T: 300 K}}`.
TankCooling Loader::read_tank_cooling(const YAML::Node& node, const std::string& sid,
                                      const std::string& ctx) const {
  Fields g(*this, node, "heat of " + ctx);
  g.check({"UA", "coolant"});
  TankCooling c;
  c.UA = field(g.need("UA", "the wall's U times its area, e.g. UA: 40 kW/K"), CaseFieldKind::TankUA,
               sid);
  Fields k(*this, g.need("coolant", "the coolant, e.g. coolant: {T: 300 K}"), "coolant of " + ctx);
  k.check({"T"});
  c.T_coolant = field(k.need("T", "the coolant's temperature, e.g. T: 27 degC"),
                      CaseFieldKind::CoolantT, sid);
  return c;
}

// A cold shot: {share, T} of the feed, or a side {stream: {T, P, flows}}.
// It stands after a reactor (a quench before any has nothing to cool).
QuenchSpec Loader::read_quench(const Fields& f, const YAML::Node& node,
                               const std::string& sid) const {
  const std::string& ctx = f.context();
  f.check({"type", "id", "share", "T", "stream"});
  QuenchSpec q;
  q.id = sid;
  q.where = at(node);
  const bool after_reactor = std::any_of(train_.begin(), train_.end(), [](const StageSpec& st) {
    return std::holds_alternative<ReactorSpec>(st);
  });
  if (!after_reactor)
    fail(node, fmt::format("{} is a quench before the first reactor; a cold shot cools a "
                           "reactor's outlet, so it stands after one (to cool the feed, lower "
                           "its T or add an exchanger)",
                           ctx));
  const auto* share = f.find("share");
  const auto* stream = f.find("stream");
  if (share && stream)
    fail(*f.key_of("stream"), fmt::format("{} gives both share and stream; give one (share: a part "
                                          "of the feed, stream: an independent side stream)",
                                          ctx));
  if (!share && !stream)
    fail(node, fmt::format("{} needs share (a part of the feed, e.g. share: 0.2, with T) or "
                           "stream (e.g. stream: {{T: 40 degC, flows: {{H2: 120 kmol/h}}}})",
                           ctx));
  if (share) {
    q.share = field(*share, CaseFieldKind::QuenchShare, sid);
    if (const auto* t = f.find("T")) q.T = temperature(*t, "T of " + ctx);
    return q;
  }
  if (const auto* t = f.find("T"); t != nullptr)
    fail(*f.key_of("T"),
         fmt::format("{} gives T beside stream; the side stream gives its own T", ctx));
  Fields g(*this, *stream, "stream of " + ctx);
  g.check({"T", "P", "flows"});
  Stream st;
  st.T = temperature(g.need("T", "the side stream's temperature, e.g. T: 40 degC"),
                     "T of the stream of " + ctx);
  st.P = feed_.P;
  if (const auto* p = g.find("P")) {
    st.P = quantity(*p, "P of the stream of " + ctx, SiUnit::of("Pa", "a pressure"));
    check_range(*p, "P of the stream of " + ctx, kPositive, "Pa", st.P);
  }
  st.F.assign(species_.size(), 0.0);
  const YAML::Node& flows =
      g.need("flows", "the side stream's flows, e.g. flows: {H2: 120 kmol/h}");
  Fields fl(*this, flows, "flows of the stream of " + ctx);
  double total = 0;
  for (const auto& e : fl.entries()) {
    const int i = species_index(e.key, "flows of the stream of " + ctx);
    st.F[i] = quantity(e.value, "flow of " + e.name + " in the stream of " + ctx,
                       SiUnit::of("mol/s", "a molar flow"));
    check_range(e.value, "flow of " + e.name + " in the stream of " + ctx, kNonNegative, "mol/s",
                st.F[i]);
    total += st.F[i];
  }
  if (!(total > 0)) fail(flows, fmt::format("the side stream of {} has no flow", ctx));
  q.stream = st;
  return q;
}

// A cooled stage's heat: {U, coolant: {T}} (constant coolant) or
// {U, coolant: {T_in, flow, cp, direction}}.
CoolingSpec Loader::read_cooling(const YAML::Node& node, const std::string& sid,
                                 const std::string& ctx) const {
  Fields f(*this, node, "heat of " + ctx);
  if (f.find("UA"))
    fail(*f.key_of("UA"),
         fmt::format("heat of {}: UA (a wall's U times its area) cools a stirred tank (type: "
                     "cstr); a cooled tubular stage gives U on the tubes' inner surface and "
                     "tubes, e.g. heat: {{U: 220 W/m2/K, coolant: {{T: 250 degC}}}}",
                     ctx));
  f.check({"U", "coolant"});
  CoolingSpec c;
  c.where = at(node);
  const YAML::Node& co =
      f.need("coolant", "the coolant outside the tubes, e.g. coolant: {T: 250 degC}");
  if (!f.find("U"))
    fail(*f.key_of("coolant"),
         fmt::format("heat of {} gives a coolant without U, the overall heat transfer "
                     "coefficient on the tube's inner surface (e.g. U: 220 W/m2/K)",
                     ctx));
  c.U = field(*f.find("U"), CaseFieldKind::HeatU, sid);
  const std::string what = "coolant of " + ctx;
  Fields g(*this, co, what);
  g.check({"T", "T_in", "flow", "cp", "direction"});
  if (const auto* t = g.find("T")) {
    if (g.find("T_in") || g.find("flow") || g.find("cp") || g.find("direction"))
      fail(*g.key_of("T"), fmt::format("{} gives T (a constant coolant temperature: boiling) "
                                       "together with T_in, flow, cp or direction; give one kind",
                                       what));
    c.T = field(*t, CaseFieldKind::CoolantT, sid);
    return c;
  }
  const YAML::Node& dir =
      g.need("direction",
             "cocurrent or countercurrent, with T_in, flow and cp; or T for a constant "
             "coolant temperature");
  c.direction = choice(dir, "direction of " + what, {"cocurrent", "countercurrent"}) == "cocurrent"
                    ? CoolantFlow::Cocurrent
                    : CoolantFlow::Countercurrent;
  const char* words = c.direction == CoolantFlow::Cocurrent ? "cocurrent" : "countercurrent";
  if (!g.find("flow") || !g.find("cp"))
    fail(dir, fmt::format("{} is {} but gives no {}; a flowing coolant needs its mass flow and "
                          "specific heat (e.g. flow: 30 kg/s, cp: 1.55 kJ/kg/K)",
                          what, words, !g.find("flow") ? "flow" : "cp"));
  c.T = field(g.need("T_in", "the coolant's inlet temperature, e.g. T_in: 240 degC"),
              CaseFieldKind::CoolantTin, sid);
  const SiUnit flow_unit = SiUnit::of("kg/s", "a mass flow");
  c.flow = quantity(*g.find("flow"), "flow of " + what, flow_unit);
  check_range(*g.find("flow"), "flow of " + what, kPositive, "kg/s", *c.flow);
  const SiUnit cp_unit = SiUnit::of("J/(kg*K)", "a specific heat capacity");
  c.cp = quantity(*g.find("cp"), "cp of " + what, cp_unit);
  check_range(*g.find("cp"), "cp of " + what, kPositive, "J/(kg*K)", *c.cp);
  return c;
}

// An exchanger's sizing: U and its utility, both or neither. The utility
// is {T_in, T_out, cp} (sensible; cp optional, for its flow) or {T}
// (boiling or condensing at one temperature).
void Loader::read_exchanger_size(const Fields& f, ExchangerSpec& x) const {
  const std::string& ctx = f.context();
  const auto* U = f.find("U");
  const auto* u = f.find("utility");
  if (!U && !u) return;
  if (!U || !u)
    fail(U ? *f.key_of("U") : *f.key_of("utility"),
         fmt::format("{} gives {} without {}; an exchanger is sized from both (e.g. U: 350 "
                     "W/m2/K and utility: {{T_in: 30 degC, T_out: 45 degC, cp: 4.18 kJ/kg/K}})",
                     ctx, U ? "U" : "utility", U ? "utility" : "U"));
  const SiUnit u_unit = SiUnit::of("W/(m2*K)", "a heat transfer coefficient");
  x.U = quantity(*U, "U of " + ctx, u_unit);
  check_range(*U, "U of " + ctx, kPositive, u_unit.to_string(), *x.U);
  Fields g(*this, *u, "utility of " + ctx);
  g.check({"T", "T_in", "T_out", "cp"});
  UtilitySpec us;
  if (const auto* t = g.find("T")) {
    if (g.find("T_in") || g.find("T_out") || g.find("cp"))
      fail(*g.key_of("T"), fmt::format("utility of {} gives T (one temperature: boiling or "
                                       "condensing) together with T_in, T_out or cp; give one "
                                       "kind",
                                       ctx));
    us.T_in = us.T_out = temperature(*t, "T of the utility of " + ctx);
  } else {
    us.T_in = temperature(g.need("T_in", "the utility's inlet temperature, e.g. T_in: 30 degC"),
                          "T_in of the utility of " + ctx);
    us.T_out = temperature(g.need("T_out", "the utility's outlet temperature, e.g. T_out: 45 degC"),
                           "T_out of the utility of " + ctx);
    if (const auto* cp = g.find("cp")) {
      const SiUnit cp_unit = SiUnit::of("J/(kg*K)", "a specific heat capacity");
      us.cp = quantity(*cp, "cp of the utility of " + ctx, cp_unit);
      check_range(*cp, "cp of the utility of " + ctx, kPositive, cp_unit.to_string(), *us.cp);
    }
  }
  x.utility = us;
}

// An outlet purity: one species and its mole fraction ("1 ppm", "0.5 %"
// or a plain fraction), below the species' mole fraction at the stage
// inlet. Where no reactor stands before this one the inlet is the feed and
// that is checked here; after a reactor the stage checks it when it runs.
OutletTarget Loader::read_outlet_target(const YAML::Node& node, const std::string& ctx) const {
  const std::string where = "outlet target of " + ctx;
  if (!node.IsMap() || node.size() != 1)
    fail(node, fmt::format("{} needs one species and its outlet mole fraction, e.g. outlet: "
                           "{{C2H2: 1 ppm}}, got {}",
                           where, describe(node)));
  const auto entry = *node.begin();
  OutletTarget t;
  t.species = species_index(entry.first, where);
  const std::string& sp = species_[t.species].id;
  const YAML::Node& v = entry.second;
  std::string s = v.IsScalar() ? v.Scalar() : std::string{};
  double scale = 1;
  for (const auto& [suffix, factor] : {std::pair{"ppm", 1e-6}, std::pair{"%", 1e-2}}) {
    const std::string_view sv = suffix;
    if (s.size() > sv.size() && s.compare(s.size() - sv.size(), sv.size(), sv) == 0) {
      s.resize(s.size() - sv.size());
      scale = factor;
      break;
    }
  }
  while (!s.empty() && s.back() == ' ') s.pop_back();
  const auto x = parse_number(s);
  if (!x)
    fail(v, fmt::format("{} needs a mole fraction for {} (e.g. 1 ppm, 0.5 %, or 1e-6), got {}",
                        where, sp, describe(v)));
  t.x = *x * scale;
  if (!(t.x > 0 && t.x < 1))
    fail(v, fmt::format("{}: the outlet mole fraction of {} must lie between 0 and 1 "
                        "(exclusive), got {:g}",
                        where, sp, t.x));
  double total = 0;
  for (double F : feed_.F) total += F;
  const double x_feed = feed_.F[t.species] / total;
  if (!(x_feed > 0))
    fail(entry.first, fmt::format("{}: {} is not in the feed stream, so there is no outlet "
                                  "purity of it to reach",
                                  where, sp));
  const bool after_reactor = std::any_of(train_.begin(), train_.end(), [](const StageSpec& st) {
    return std::holds_alternative<ReactorSpec>(st);
  });
  if (!after_reactor && t.x >= x_feed)
    fail(v, fmt::format("{}: {} mole fraction {:.6g} ppm is not below its value at the stage "
                        "inlet ({:.6g} ppm); the target would be met by no catalyst at all",
                        where, sp, t.x * 1e6, x_feed * 1e6));
  return t;
}

// A stage's catalyst pellets (kinetics/pellet_spec.hpp).
PelletSpec Loader::read_pellet(const YAML::Node& node, const std::string& ctx) const {
  Fields f(*this, node, ctx);
  f.check({"shape", "size", "length", "D_eff", "density"});
  PelletSpec p;
  p.where = at(node);
  const std::string shape = choice(f.need("shape", "the pellet shape: sphere, cylinder or slab"),
                                   "shape of " + ctx, {"sphere", "cylinder", "slab"});
  p.shape = shape == "sphere"     ? PelletShape::Sphere
            : shape == "cylinder" ? PelletShape::Cylinder
                                  : PelletShape::Slab;
  const SiUnit length_unit = SiUnit::of("m", "a length");
  auto positive = [&](const YAML::Node& n, const std::string& label, const SiUnit& unit) {
    const double v = quantity(n, label, unit);
    check_range(n, label, kPositive, unit.to_string(), v);
    return v;
  };
  p.size = positive(f.need("size", "the pellet diameter (slab: thickness), e.g. size: 3 mm"),
                    "size of " + ctx, length_unit);
  if (const auto* n = f.find("length")) {
    if (p.shape != PelletShape::Cylinder)
      fail(*f.key_of("length"), fmt::format("{}: length applies to a cylinder only", ctx));
    p.length = positive(*n, "length of " + ctx, length_unit);
  }
  if (const auto* n = f.find("density"))
    p.density = positive(*n, "density of " + ctx, SiUnit::of("kg/m3", "a density"));
  if (const auto* n = f.find("D_eff")) {
    const SiUnit d_unit = SiUnit::of("m2/s", "a diffusivity");
    if (n->IsMap()) {
      // Per species; every species in the pellet needs one.
      p.D_eff.assign(species_.size(), 0.0);
      Fields per(*this, *n, "D_eff of " + ctx);
      for (const auto& e : per.entries())
        p.D_eff[species_index(e.key, "D_eff of " + ctx)] =
            positive(e.value, fmt::format("D_eff of {} in {}", e.name, ctx), d_unit);
      for (std::size_t i = 0; i < species_.size(); ++i)
        if (p.D_eff[i] == 0)
          fail(*n, fmt::format("D_eff of {} has no value for species {}; give every species one "
                               "(or one value for all, e.g. D_eff: 2.0e-6 m2/s)",
                               ctx, species_[i].id));
    } else {
      p.D_eff.assign(species_.size(), positive(*n, "D_eff of " + ctx, d_unit));
    }
  }
  return p;
}

// A tubular stage's bed: one vessel (`bed: {diameter, void_fraction}`) or
// a multitubular reactor (`tubes: {count, diameter, void_fraction}`).
BedGeometry Loader::read_geometry(const Fields& f, const std::string& ctx) const {
  if (f.find("bed") && f.find("tubes"))
    fail(*f.key_of("tubes"), fmt::format("{} gives both bed and tubes; give one (bed: one vessel, "
                                         "tubes: a multitubular reactor)",
                                         ctx));
  const bool tubes = f.find("tubes") != nullptr;
  const std::string what = fmt::format("{} of {}", tubes ? "tubes" : "bed", ctx);
  Fields g(*this, *f.find(tubes ? "tubes" : "bed"), what);
  if (tubes)
    g.check({"count", "diameter", "void_fraction", "dP_max"});
  else
    g.check({"diameter", "void_fraction", "dP_max"});
  BedGeometry b;
  b.where = at(g.node());
  const SiUnit length_unit = SiUnit::of("m", "a length");
  const YAML::Node& d =
      g.need("diameter", tubes ? "each tube's inside diameter, e.g. diameter: 38 mm"
                               : "the vessel's inside diameter, e.g. diameter: 3.2 m, or auto "
                                 "with dP_max");
  if (d.IsScalar() && d.Scalar() == "auto") {
    // The smallest diameter whose pressure drop does not exceed dP_max.
    const YAML::Node& m = g.need(
        "dP_max", "the allowed pressure drop that diameter: auto sizes to, e.g. dP_max: 0.3 bar");
    b.dP_max = quantity(m, "dP_max of " + what, SiUnit::of("Pa", "a pressure"));
    check_range(m, "dP_max of " + what, kPositive, "Pa", *b.dP_max);
  } else {
    if (const auto* m = g.find("dP_max"); m != nullptr)
      fail(*g.key_of("dP_max"),
           fmt::format("{} gives dP_max with a diameter; dP_max sizes the diameter: give "
                       "diameter: auto, or leave dP_max out",
                       what));
    b.diameter = quantity(d, "diameter of " + what, length_unit);
    check_range(d, "diameter of " + what, kPositive, "m", b.diameter);
  }
  const YAML::Node& e = g.need("void_fraction", "the bed voidage, e.g. void_fraction: 0.40");
  b.void_fraction = number(e, "void_fraction of " + what);
  check_range(e, "void_fraction of " + what, kOpenUnitInterval, "", b.void_fraction);
  if (tubes) {
    const YAML::Node& c =
        g.need("count", "the number of tubes the catalyst is packed in, e.g. count: 2400");
    const double count = number(c, "count of " + what);
    if (!(count >= 1 && count <= 1e7 && count == std::floor(count)))
      fail(c, fmt::format("count of {} must be a whole number of tubes from 1 to 10000000, got {}",
                          what, describe(c)));
    b.tubes = static_cast<int>(count);
  }
  return b;
}

// The fluid's viscosity: `viscosity: 2.6e-5 Pa*s` (constant) or
// `viscosity: {value: 2.6e-5 Pa*s, T: 700 K, exponent: 0.7}` (a power law
// in T).
ViscosityLaw Loader::read_fluid(const YAML::Node& node) const {
  Fields f(*this, node, "fluid");
  f.check({"viscosity"});
  const YAML::Node& v = f.need("viscosity",
                               "the fluid's dynamic viscosity, e.g. viscosity: 2.6e-5 Pa*s, or "
                               "viscosity: {value: 2.6e-5 Pa*s, T: 700 K, exponent: 0.7}");
  const SiUnit mu_unit = SiUnit::of("Pa*s", "a dynamic viscosity");
  ViscosityLaw law;
  const YAML::Node* value = &v;
  if (v.IsMap()) {
    Fields p(*this, v, "viscosity of fluid");
    p.check({"value", "T", "exponent"});
    value = &p.need("value", "the viscosity at T, e.g. value: 2.6e-5 Pa*s");
    law.value = quantity(*value, "value of the fluid viscosity", mu_unit);
    check_range(*value, "value of the fluid viscosity", kPositive, "Pa*s", law.value);
    law.T_ref = temperature(p.need("T", "the temperature of value, e.g. T: 700 K"),
                            "T of the fluid viscosity");
    if (const auto* x = p.find("exponent")) {
      law.exponent = number(*x, "exponent of the fluid viscosity");
      if (!(law.exponent >= 0 && law.exponent <= 3))
        fail(*x, fmt::format("exponent of the fluid viscosity must lie between 0 and 3 (a gas's "
                             "viscosity rises with T, about as T^0.5 to T^1), got {}",
                             describe(*x)));
    }
    return law;
  }
  law.value = quantity(v, "fluid viscosity", mu_unit);
  check_range(v, "fluid viscosity", kPositive, "Pa*s", law.value);
  return law;
}

// Gives every reactor the fluid's viscosity; a bed with a pellet needs it
// (and every species' molar mass, for the mass flux and the density).
void Loader::apply_fluid(const YAML::Node* fluid) {
  std::optional<ViscosityLaw> law;
  if (fluid) law = read_fluid(*fluid);
  for (auto& s : train_) {
    auto* r = std::get_if<ReactorSpec>(&s);
    if (!r) continue;
    r->viscosity = law;
    if (r->geometry && r->geometry->dP_max && !r->pellet)
      throw InputError(r->geometry->where,
                       fmt::format("stage {}: diameter: auto sizes the bed to its pressure drop, "
                                   "which needs a pellet (e.g. pellet: {{shape: sphere, size: 3 "
                                   "mm}})",
                                   r->id));
    if (!r->geometry || !r->pellet) continue;
    if (!law)
      throw InputError(r->geometry->where,
                       fmt::format("stage {} has a bed and a pellet, so its pressure drop is "
                                   "computed (Ergun), which needs the fluid's viscosity: add a "
                                   "top-level fluid: {{viscosity: 2.6e-5 Pa*s}}",
                                   r->id));
    for (const auto& sp : species_)
      if (!sp.mw)
        throw InputError(r->geometry->where,
                         fmt::format("stage {}: its pressure drop needs the mass flow, and "
                                     "species {} has no molar mass; give it a formula or mw",
                                     r->id, sp.id));
  }
}

// ---- train-level target and temperature limits --------------------------

void Loader::read_train_target(const YAML::Node& node, Case& c) const {
  Fields t(*this, node, "target");
  t.check({"conversion", "outlet"});
  if (t.find("conversion") && t.find("outlet"))
    fail(*t.key_of("outlet"), "target gives both conversion and outlet; give exactly one");
  if (const auto* o = t.find("outlet")) {
    OutletTarget target = read_outlet_target(*o, "the train");
    // Against the feed, which is the train's inlet (read_outlet_target
    // checks it only for a stage with no reactor before it).
    double total = 0;
    for (double F : feed_.F) total += F;
    const double x_feed = feed_.F[target.species] / total;
    if (target.x >= x_feed)
      fail(o->begin()->second,
           fmt::format("outlet target of the train: {} mole fraction {:.6g} ppm is not below its "
                       "value in the feed ({:.6g} ppm)",
                       species_[target.species].id, target.x * 1e6, x_feed * 1e6));
    c.target_outlet = target;
    return;
  }
  const YAML::Node& x = t.need("conversion",
                               "the overall key conversion the train should reach, e.g. 0.92, or "
                               "an outlet purity, e.g. outlet: {C2H2: 1 ppm}");
  c.target_conversion = field(x, CaseFieldKind::TrainTarget);
}

TemperatureLimits Loader::read_limits(const YAML::Node& node) const {
  Fields f(*this, node, "limits");
  f.check({"T_max", "T_in_min"});
  TemperatureLimits lim;
  lim.where = at(node);
  if (const auto* n = f.find("T_max")) lim.T_max = field(*n, CaseFieldKind::LimitTmax);
  if (const auto* n = f.find("T_in_min")) lim.T_in_min = field(*n, CaseFieldKind::LimitTinMin);
  if (lim.T_max && lim.T_in_min && !(*lim.T_in_min < *lim.T_max))
    fail(*f.find("T_in_min"),
         fmt::format("T_in_min of limits ({}) must be below T_max ({}): T_in_min is the lowest "
                     "useful bed inlet temperature, T_max the highest allowed in a bed",
                     temperature_words(*lim.T_in_min), temperature_words(*lim.T_max)));
  return lim;
}

// The species WHSV and LHSV are quoted on (the trade's "hydrocarbon feed"):
// a non-empty list of distinct declared species, each with a molar mass.
std::vector<int> Loader::read_space_velocity_basis(const YAML::Node& node) const {
  const char* example = "e.g. space_velocity_basis: [BZ, CH]";
  if (!node.IsSequence() || node.size() == 0)
    fail(node, fmt::format("space_velocity_basis needs a list of species ids ({}), got {}", example,
                           describe(node)));
  std::vector<int> basis;
  for (const auto& item : node) {
    const int i = species_index(item, "space_velocity_basis");
    if (std::find(basis.begin(), basis.end(), i) != basis.end())
      fail(item, fmt::format("species {} is named twice in space_velocity_basis", species_[i].id));
    if (!species_[i].mw)
      fail(item, fmt::format("species {} in space_velocity_basis has no molar mass; WHSV and "
                             "LHSV on it need one (give mw or formula)",
                             species_[i].id));
    basis.push_back(i);
  }
  return basis;
}

// The wanted products: distinct declared species, each formed (nu > 0) by
// some reaction, since a yield is counted on the reaction that forms it.
std::vector<int> Loader::read_products(const YAML::Node& node) const {
  if (!node.IsSequence() || node.size() == 0)
    fail(node, fmt::format("products needs a list of species ids (e.g. products: [C2H4]), got {}",
                           describe(node)));
  std::vector<int> products;
  for (const auto& item : node) {
    const int i = species_index(item, "products");
    if (std::find(products.begin(), products.end(), i) != products.end())
      fail(item, fmt::format("species {} is named twice in products", species_[i].id));
    if (i == key_)
      fail(item, fmt::format("products: {} is the key reactant; name the species the train "
                             "should make",
                             species_[i].id));
    const bool formed = std::any_of(reactions_.begin(), reactions_.end(),
                                    [&](const Reaction& rx) { return rx.nu[i] > 0; });
    if (!formed)
      fail(item, fmt::format("products: no reaction forms {}, so it has no yield", species_[i].id));
    products.push_back(i);
  }
  return products;
}

// Adiabatic reactors and exchangers close an energy balance, which needs
// cp of every species; an all-isothermal train does not.
void Loader::check_energy_needs() const {
  std::optional<EnergyNeed> need;
  for (const auto& s : train_) {
    if (const auto* r = std::get_if<ReactorSpec>(&s)) {
      if (r->heat == HeatMode::Adiabatic) {
        need = EnergyNeed{r->id,
                          r->type == ReactorType::Pfr ? "an adiabatic pfr" : "an adiabatic cstr"};
        break;
      }
    } else {
      need = EnergyNeed{stage_id(s), "an exchanger"};
      break;
    }
  }
  for (std::size_t i = 0; i < species_.size(); ++i) {
    if (species_info_[i].thermo) continue;
    if (need)
      fail(species_info_[i].node,
           fmt::format("species {} is missing \"thermo\": stage {} is {} and needs the heat "
                       "capacity of every species (e.g. thermo: {{cp: 120 J/mol/K, h_f: -146.8 "
                       "kJ/mol}})",
                       species_[i].id, need->stage, need->why));
  }
}

// A feed-effluent interchanger makes the train a loop (flowsheet/loop.hpp):
// one per train, its hot side after a later stage, and between the two only
// stages whose outlet follows from their inlet alone (a stirred tank can
// hold several steady states of its own, a sized stage changes its size with
// every pass).
void Loader::check_loop() const {
  std::optional<std::size_t> at_x;
  for (std::size_t k = 0; k < train_.size(); ++k) {
    const auto* x = std::get_if<InterchangerSpec>(&train_[k]);
    if (!x) continue;
    if (at_x)
      fail(stage_nodes_[k],
           fmt::format("stage {} is a second interchanger; a train holds one (stage {} is the "
                       "first): one loop is solved on one tear",
                       x->id, stage_id(train_[*at_x])));
    at_x = k;
    std::vector<std::string> ids;
    std::optional<std::size_t> at_hot;
    for (std::size_t j = 0; j < train_.size(); ++j) {
      ids.push_back(stage_id(train_[j]));
      if (ids.back() == x->hot_from) at_hot = j;
    }
    const YAML::Node hot = stage_nodes_[k]["hot_from"];
    if (!at_hot)
      fail(hot, fmt::format("hot_from of stage {}: no stage \"{}\"{}", x->id, x->hot_from,
                            suggest(x->hot_from, ids, "stages")));
    if (*at_hot <= k)
      fail(hot, fmt::format("hot_from of stage {}: stage {} {}; the hot side is the outlet of a "
                            "later stage, which the cold side's stream reaches after it is heated",
                            x->id, x->hot_from,
                            *at_hot == k ? "is the interchanger itself" : "stands before it"));
    for (std::size_t j = k + 1; j <= *at_hot; ++j) {
      const auto* r = std::get_if<ReactorSpec>(&train_[j]);
      if (!r) continue;
      if (r->type == ReactorType::Cstr)
        fail(stage_nodes_[j],
             fmt::format("stage {} is a stirred tank inside the loop of interchanger {}; a loop "
                         "holds tubular beds, exchangers and quenches (a tank's own steady states "
                         "would make the loop's pass many-valued)",
                         r->id, x->id));
      if (r->sized())
        fail(stage_nodes_[j],
             fmt::format("stage {} is sized to a target inside the loop of interchanger {}; give "
                         "it its volume or catalyst (its size would change with every pass)",
                         r->id, x->id));
    }
  }
}

void Loader::check_catalyst_basis() const {
  for (std::size_t k = 0; k < train_.size(); ++k) {
    const auto* r = std::get_if<ReactorSpec>(&train_[k]);
    if (!r || r->bulk_density) continue;
    for (const auto& rx : reactions_)
      if (rx.rate.basis == RateBasis::Catalyst)
        fail(stage_nodes_[k],
             fmt::format("stage {} has no bulk_density, but reaction {} has a per-catalyst rate "
                         "(per: catalyst); give the stage a bulk_density (e.g. bulk_density: "
                         "750 kg/m3)",
                         r->id, rx.id));
  }
}

void Loader::add_range_warnings() {
  auto check_at = [&](double T, const std::string& where) {
    for (std::size_t i = 0; i < species_.size(); ++i) {
      if (!species_info_[i].thermo) continue;
      const auto& t = species_[i].thermo;
      if (t.in_range(T)) continue;
      const auto range = t.declared_range();
      std::string declared = "its declared range";
      if (range)
        declared = std::isfinite((*range)[1])
                       ? fmt::format("its declared range {:g}-{:g} K", (*range)[0], (*range)[1])
                       : fmt::format("its declared range (from {:g} K)", (*range)[0]);
      warnings_.push_back(
          fmt::format("species {}: {} {:g} K is outside {} of the heat-capacity "
                      "data; cp is extrapolated",
                      species_[i].id, where, T, declared));
    }
  };
  check_at(feed_.T, "feed temperature");
  for (const auto& s : train_)
    if (const auto* x = std::get_if<ExchangerSpec>(&s); x && x->T_out)
      check_at(*x->T_out, "T_out of stage " + x->id + ",");
  for (std::size_t i = 0; i < species_.size(); ++i)
    if (!species_info_[i].thermo)
      warnings_.push_back(fmt::format(
          "species {} has no thermo: heats of reaction involving it are taken as independent "
          "of temperature",
          species_[i].id));
}

// ---- whole case ----------------------------------------------------------

Case Loader::load(const YAML::Node& root) {
  if (root.IsNull())
    throw InputError({file_, 0, 0},
                     "empty case file; expected a mapping with title, species, "
                     "reactions, feed, key and train");
  Fields top(*this, root, "the case");
  top.check({"title", "phase", "species", "reactions", "feed", "key", "train", "target", "limits",
             "space_velocity_basis", "products", "fluid"});
  Case c;
  c.file = file_;
  c.title = file_;
  if (const auto* n = top.find("title")) c.title = text(*n, "title", "a line of text");
  if (const auto* n = top.find("phase"))
    phase_ = choice(*n, "phase", {"gas", "liquid"}) == "liquid" ? Phase::Liquid : Phase::Gas;

  read_species(top.need("species", "the list of species"));
  read_reactions(top.need("reactions", "the list of reactions"));
  read_feed(top.need("feed", "the feed: T, P and flow with composition, or flows"));
  read_key(top.need("key", "the key reactant, e.g. key: NC5"));
  read_train(top.need("train", "the list of stages"));
  apply_fluid(top.find("fluid"));
  c.target_where = {file_, 0, 0};
  if (const auto* n = top.find("target")) {
    read_train_target(*n, c);
    c.target_where = at(*n);
  }
  c.limits.where = {file_, 0, 0};
  if (const auto* n = top.find("limits")) c.limits = read_limits(*n);
  if (const auto* n = top.find("space_velocity_basis"))
    c.space_velocity_basis = read_space_velocity_basis(*n);
  if (const auto* n = top.find("products")) c.products = read_products(*n);
  check_energy_needs();
  check_catalyst_basis();
  check_loop();

  // A heat capacity must be positive where the train starts.
  for (std::size_t i = 0; i < species_.size(); ++i) {
    if (!species_info_[i].thermo) continue;
    const double cp = species_[i].thermo.cp(feed_.T);
    if (!(cp > 0))
      fail(*species_info_[i].thermo,
           fmt::format("thermo of species {} gives cp = {:g} J/(mol K) at the feed temperature "
                       "{:g} K; a heat capacity must be positive",
                       species_[i].id, cp, feed_.T));
  }
  add_range_warnings();

  c.mechanism = Mechanism(phase_, std::move(species_), std::move(reactions_));
  c.feed = std::move(feed_);
  c.key = key_;
  c.train = std::move(train_);
  c.warnings = std::move(warnings_);
  // Every check above has a location in the file and comes first; this
  // keeps a loaded case and one built in code to one standard.
  validate_case(c);
  return c;
}

}  // namespace

Case load_case_from_string(const std::string& text, const std::string& name,
                           const UnitParser& units) {
  check_text_limits(text, name, {kMaxFileBytes});  // size, UTF-8, depth: before yaml-cpp
  check_parser_finishes(text, name);
  std::vector<YAML::Node> docs;
  try {
    docs = YAML::LoadAll(text);
  } catch (const YAML::Exception& e) {
    throw InputError({name, e.mark.line + 1, e.mark.column + 1}, "YAML syntax error: " + e.msg);
  }
  // A trailing "---" adds an empty document; anything more is refused.
  while (docs.size() > 1 && docs.back().IsNull()) docs.pop_back();
  if (docs.size() > 1)
    throw InputError({name, docs[1].Mark().line + 1, docs[1].Mark().column + 1},
                     "a case file holds one YAML document; found a second one");
  if (!docs.empty()) check_node_count(docs[0], name);  // aliases: before any walk of the tree
  Loader loader(name, units);
  try {
    return loader.load(docs.empty() ? YAML::Node() : docs[0]);
  } catch (const YAML::Exception& e) {
    // A yaml-cpp access error is a loader bug, but still report where.
    throw InputError({name, e.mark.line + 1, e.mark.column + 1}, e.msg);
  }
}

Case load_case(const std::string& path, const UnitParser& units) {
  namespace fs = std::filesystem;
  std::error_code ec;
  const fs::file_status st = fs::status(path, ec);
  if (ec || !fs::exists(st)) throw InputError({path, 0, 0}, "cannot open case file: no such file");
  if (fs::is_directory(st))
    throw InputError({path, 0, 0},
                     "cannot read case file: it is a directory, expected a YAML file");
  const std::uintmax_t size = fs::file_size(path, ec);
  if (!ec && size > kMaxFileBytes)
    throw InputError(
        {path, 0, 0},
        fmt::format("case file is {} bytes; the limit is {} bytes (10 MiB)", size, kMaxFileBytes));
  std::ifstream in(path, std::ios::binary);
  if (!in)
    throw InputError({path, 0, 0}, std::string("cannot open case file: ") + std::strerror(errno));
  std::ostringstream text;
  text << in.rdbuf();
  if (in.bad()) throw InputError({path, 0, 0}, "cannot read case file");
  return load_case_from_string(text.str(), path, units);
}

}  // namespace rxtrain
