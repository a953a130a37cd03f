#include "rxtrain/sweep/outputs.hpp"

#include <fmt/format.h>

#include <cmath>
#include <variant>

#include "rxtrain/base/suggest.hpp"

namespace rxtrain::sweep {

namespace {

// Stage fields that are plain numbers in the JSON result.
constexpr const char* kScalarFields[] = {
    "volume",  "catalyst_mass", "bulk_density", "space_time", "space_velocity", "ghsv",
    "whsv",    "lhsv",          "duty",         "T_max",      "T_min",          "conversion",
    "inlet.T", "inlet.P",       "outlet.T",     "outlet.P",   "over_limit"};
constexpr const char* kEquilibriumFields[] = {"X_ad_eq", "T_ad_eq", "X_eq_out", "approach_X",
                                              "approach_T"};

std::optional<double> finite(std::optional<double> v) {
  if (v && std::isfinite(*v)) return v;
  return std::nullopt;
}

std::vector<std::string> all_names(const Case& c) {
  std::vector<std::string> names{"X", "T_out"};
  for (const auto& s : c.train) {
    const std::string& id = stage_id(s);
    for (const char* f : kScalarFields) names.push_back(id + "." + f);
    for (const auto& sp : c.mechanism.species()) {
      names.push_back(id + ".inlet.flows." + sp.id);
      names.push_back(id + ".outlet.flows." + sp.id);
    }
    for (const char* f : kEquilibriumFields) names.push_back(id + ".equilibrium." + f);
  }
  return names;
}

OutputColumn column(const std::string& name, const Case& c) {
  const auto fail = [&]() -> OutputColumn {
    throw InputError({"--output", 0, 0},
                     fmt::format("unknown output \"{}\"{}", name,
                                 suggest_nearest(name, all_names(c), "valid names", 40)));
  };
  if (name == "X" || name == "T_out") return {name, -1, name, -1};
  const auto dot = name.find('.');
  if (dot == std::string::npos) return fail();
  const std::string id = name.substr(0, dot), field = name.substr(dot + 1);
  int stage = -1;
  for (std::size_t k = 0; k < c.train.size(); ++k)
    if (stage_id(c.train[k]) == id) stage = static_cast<int>(k);
  if (stage < 0) return fail();
  for (const char* f : kScalarFields)
    if (field == f) return {name, stage, field, -1};
  for (const char* f : kEquilibriumFields)
    if (field == std::string("equilibrium.") + f) return {name, stage, field, -1};
  for (const char* side : {"inlet.flows.", "outlet.flows."}) {
    const std::string pre = side;
    if (field.rfind(pre, 0) == 0) {
      const int i = c.mechanism.index_of(field.substr(pre.size()));
      if (i >= 0) return {name, stage, pre.substr(0, pre.size() - 1), i};
    }
  }
  return fail();
}

const char* unit_of(const OutputColumn& col) {
  const std::string& f = col.field;
  const auto ends = [&](std::string_view tail) { return f.ends_with(tail); };
  if (col.species >= 0) return "mol/s";
  if (f == "T_out" || f == "T_max" || f == "T_min" || f == "over_limit" || ends(".T") ||
      ends("T_ad_eq") || ends("approach_T"))
    return "K";
  if (ends(".P")) return "Pa";
  if (f == "volume") return "m3";
  if (f == "catalyst_mass") return "kg";
  if (f == "bulk_density") return "kg/m3";
  if (f == "space_time") return "s";
  if (f == "space_velocity") return "1/s";
  if (f == "ghsv" || f == "whsv" || f == "lhsv") return "1/h";
  if (f == "duty") return "W";
  return "-";  // X, conversion, equilibrium X and approach_X
}

}  // namespace

OutputSpec OutputSpec::defaults(const Case& c) {
  OutputSpec o;
  o.columns_.push_back(column("X", c));
  o.columns_.push_back(column("T_out", c));
  for (const auto& s : c.train) {
    const std::string& id = stage_id(s);
    // An exchanger's T_max is only the hotter of its ends; its outlet says it.
    if (!std::holds_alternative<ExchangerSpec>(s)) {
      o.columns_.push_back(column(id + ".T_max", c));
      if (c.limits.T_max || c.limits.T_in_min) o.columns_.push_back(column(id + ".over_limit", c));
    }
    o.columns_.push_back(column(id + ".outlet.T", c));
    if (const auto* r = std::get_if<ReactorSpec>(&s); r && r->target_conversion) {
      o.columns_.push_back(column(id + ".volume", c));
      if (r->bulk_density) o.columns_.push_back(column(id + ".catalyst_mass", c));
    }
  }
  return o;
}

OutputSpec OutputSpec::parse(const std::string& list, const Case& c) {
  OutputSpec o;
  std::size_t start = 0;
  while (start <= list.size()) {
    auto end = list.find(',', start);
    if (end == std::string::npos) end = list.size();
    std::string name = list.substr(start, end - start);
    while (!name.empty() && name.front() == ' ') name.erase(0, 1);
    while (!name.empty() && name.back() == ' ') name.pop_back();
    if (name.empty())
      throw InputError({"--output", 0, 0},
                       fmt::format("empty column name in \"{}\"; expected names separated by "
                                   "commas, e.g. X,T_out,R1.T_max",
                                   list));
    for (const auto& existing : o.columns_)
      if (existing.name == name)
        throw InputError({"--output", 0, 0}, fmt::format("column \"{}\" is given twice", name));
    o.columns_.push_back(column(name, c));
    start = end + 1;
  }
  return o;
}

std::vector<std::string> OutputSpec::names() const {
  std::vector<std::string> out;
  for (const auto& col : columns_) out.push_back(col.name);
  return out;
}

std::vector<std::string> OutputSpec::units() const {
  std::vector<std::string> out;
  for (const auto& col : columns_) out.emplace_back(unit_of(col));
  return out;
}

bool OutputSpec::needs_equilibrium_views() const {
  for (const auto& col : columns_)
    if (col.field.rfind("equilibrium.", 0) == 0) return true;
  return false;
}

std::optional<double> OutputSpec::extract(std::size_t i, const TrainResult& r) const {
  const OutputColumn& col = columns_[i];
  if (col.stage < 0) return finite(col.field == "X" ? r.conversion : r.outlet.T);
  const StageResult& s = r.stages.at(static_cast<std::size_t>(col.stage));
  const std::string& f = col.field;
  if (col.species >= 0) {
    const Stream& st = f == "inlet.flows" ? s.inlet : s.outlet;
    return finite(st.F.at(static_cast<std::size_t>(col.species)));
  }
  if (f == "volume") return finite(s.volume);
  if (f == "catalyst_mass") return finite(s.catalyst_mass);
  if (f == "bulk_density") return finite(s.bulk_density);
  if (f == "space_time") return finite(s.space_time);
  if (f == "space_velocity") return finite(s.space_velocity);
  if (f == "ghsv") return finite(s.ghsv);
  if (f == "whsv") return finite(s.whsv);
  if (f == "lhsv") return finite(s.lhsv);
  if (f == "duty") return finite(s.duty);
  if (f == "T_max") return finite(s.T_max);
  if (f == "T_min") return finite(s.T_min);
  if (f == "over_limit") {
    if (!r.limit_check.applies() || s.kind == StageKind::Exchanger) return std::nullopt;
    return finite(r.limit_check.past(s.id));
  }
  if (f == "conversion") return finite(s.conversion);
  if (f == "inlet.T") return finite(s.inlet.T);
  if (f == "inlet.P") return finite(s.inlet.P);
  if (f == "outlet.T") return finite(s.outlet.T);
  if (f == "outlet.P") return finite(s.outlet.P);
  if (!s.equilibrium) return std::nullopt;
  const auto& e = *s.equilibrium;
  if (f == "equilibrium.X_ad_eq") return finite(e.X_ad_eq);
  if (f == "equilibrium.T_ad_eq") return finite(e.T_ad_eq);
  if (f == "equilibrium.X_eq_out") return finite(e.X_eq_out);
  if (f == "equilibrium.approach_X") return finite(e.approach_X);
  if (f == "equilibrium.approach_T") return finite(e.approach_T);
  return std::nullopt;
}

std::vector<std::string> design_margin_columns(const Case& c) {
  std::vector<std::string> out;
  for (const auto& s : c.train)
    if (const auto* r = std::get_if<ReactorSpec>(&s); r && r->target_conversion)
      out.push_back(r->id + (r->bulk_density ? ".catalyst_mass" : ".volume"));
  return out;
}

}  // namespace rxtrain::sweep
