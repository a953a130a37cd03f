#include "rxtrain/sweep/outputs.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <variant>

#include "rxtrain/base/suggest.hpp"

namespace rxtrain::sweep {

namespace {

std::optional<double> finite(std::optional<double> v) {
  if (v && std::isfinite(*v)) return v;
  return std::nullopt;
}

std::vector<std::string> all_names(const Case& c) {
  std::vector<std::string> names;
  for (const auto& f : train_result_fields()) names.emplace_back(f.name);
  for (const auto& s : c.train) {
    const std::string& id = stage_id(s);
    for (const auto& f : stage_result_fields())
      if (f.scope == ResultScope::Stage) names.push_back(id + "." + std::string(f.name));
    for (const auto& sp : c.mechanism.species())
      for (const auto& f : stage_result_fields())
        if (f.scope == ResultScope::Flow)
          names.push_back(fmt::format("{}.{}.{}", id, f.name, sp.id));
    for (const int p : c.products)
      for (const auto& f : stage_result_fields())
        if (f.scope == ResultScope::Product)
          names.push_back(fmt::format("{}.{}.{}", id, f.name, c.mechanism.species()[p].id));
    for (const auto& f : stage_result_fields())
      if (f.scope == ResultScope::Equilibrium) names.push_back(id + "." + std::string(f.name));
    if (std::holds_alternative<ReactorSpec>(s))
      for (const auto& rx : c.mechanism.reactions())
        for (const auto& f : stage_result_fields())
          if (f.scope == ResultScope::Reaction)
            names.push_back(fmt::format("{}.{}.{}", id, f.name, rx.id));
  }
  return names;
}

// A reactor's mean rate of one reaction: the reaction must exist and be
// readable from flows.
OutputColumn rate_column(const std::string& name, int stage, const std::string& rx,
                         const ResultFieldSpec& f, const Case& c) {
  const auto& reactions = c.mechanism.reactions();
  int j = -1;
  std::vector<std::string> ids;
  for (std::size_t k = 0; k < reactions.size(); ++k) {
    ids.push_back(reactions[k].id);
    if (reactions[k].id == rx) j = static_cast<int>(k);
  }
  if (j < 0)
    throw InputError({"--output", 0, 0},
                     fmt::format("\"{}\": the case has no reaction \"{}\"{}", name, rx,
                                 suggest_nearest(rx, ids, "its reactions", 40)));
  if (!std::holds_alternative<ReactorSpec>(c.train.at(static_cast<std::size_t>(stage))))
    throw InputError({"--output", 0, 0},
                     fmt::format("\"{}\": {} is not a reactor; a rate is a reactor's output", name,
                                 stage_id(c.train.at(static_cast<std::size_t>(stage)))));
  const Stoichiometry st = Stoichiometry::of(reactions);
  if (!st.independent())
    throw InputError({"--output", 0, 0},
                     fmt::format("\"{}\": the case's reactions are not independent (one's "
                                 "coefficients are a combination of the others'), so no "
                                 "measurement of flows can tell their rates apart; expected "
                                 "a case whose reactions are independent",
                                 name));
  return {name, stage, std::string(f.name), j, &f, std::string(result_field_unit(f, st, j))};
}

OutputColumn column(const std::string& name, const Case& c) {
  const auto fail = [&]() -> OutputColumn {
    throw InputError({"--output", 0, 0},
                     fmt::format("unknown output \"{}\"{}", name,
                                 suggest_nearest(name, all_names(c), "valid names", 40)));
  };
  for (const auto& f : train_result_fields())
    if (name == f.name) return {name, -1, name, -1, &f, std::string(f.unit)};
  const auto dot = name.find('.');
  if (dot == std::string::npos) return fail();
  const std::string id = name.substr(0, dot), field = name.substr(dot + 1);
  int stage = -1;
  for (std::size_t k = 0; k < c.train.size(); ++k)
    if (stage_id(c.train[k]) == id) stage = static_cast<int>(k);
  if (stage < 0) return fail();
  if (field == "T_max")  // the name this column had before T_max meant only the limit
    throw InputError({"--output", 0, 0},
                     fmt::format("\"{}\" is now \"{}.T_peak\" (the stage's hottest point; "
                                 "T_max names only the catalyst's limit)",
                                 name, id));
  for (const auto& f : stage_result_fields()) {
    if (f.scope != ResultScope::Flow && f.scope != ResultScope::Product &&
        f.scope != ResultScope::Reaction) {
      if (field == f.name) return {name, stage, field, -1, &f, std::string(f.unit)};
      continue;
    }
    const std::string pre = std::string(f.name) + ".";
    if (field.rfind(pre, 0) != 0) continue;
    if (f.scope == ResultScope::Reaction)
      return rate_column(name, stage, field.substr(pre.size()), f, c);
    const int i = c.mechanism.index_of(field.substr(pre.size()));
    if (i < 0) continue;
    if (f.scope == ResultScope::Product &&
        std::find(c.products.begin(), c.products.end(), i) == c.products.end())
      throw InputError({"--output", 0, 0},
                       fmt::format("\"{}\": {} is not one of the case's wanted products; "
                                   "expected a species the case lists under products:",
                                   name, field.substr(pre.size())));
    return {name, stage, std::string(f.name), i, &f, std::string(f.unit)};
  }
  return fail();
}

}  // namespace

OutputSpec OutputSpec::defaults(const Case& c) {
  OutputSpec o;
  o.columns_.push_back(column("X", c));
  o.columns_.push_back(column("T_out", c));
  for (const auto& s : c.train) {
    const std::string& id = stage_id(s);
    // An exchanger's peak is only the hotter of its ends; its outlet says it.
    if (std::holds_alternative<ReactorSpec>(s)) {
      o.columns_.push_back(column(id + ".T_peak", c));
      if (c.limits.T_max || c.limits.T_in_min) o.columns_.push_back(column(id + ".over_limit", c));
    }
    o.columns_.push_back(column(id + ".outlet.T", c));
    if (const auto* r = std::get_if<ReactorSpec>(&s); r && r->sized()) {
      o.columns_.push_back(column(id + ".volume", c));
      if (r->bulk_density) o.columns_.push_back(column(id + ".catalyst_mass", c));
      if (r->target_outlet)
        o.columns_.push_back(
            column(id + ".x_out." + c.mechanism.species()[r->target_outlet->species].id, c));
    }
  }
  // The wanted products' yields at the last reactor (cumulative from the
  // feed, so the train's).
  const std::string* last = nullptr;
  for (const auto& s : c.train)
    if (std::holds_alternative<ReactorSpec>(s)) last = &stage_id(s);
  if (last)
    for (const int p : c.products)
      o.columns_.push_back(column(*last + ".yield." + c.mechanism.species()[p].id, c));
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
                                   "commas, e.g. X,T_out,R1.T_peak",
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
  for (const auto& col : columns_) out.push_back(col.unit);
  return out;
}

bool OutputSpec::needs_equilibrium_views() const {
  for (const auto& col : columns_)
    if (col.spec->scope == ResultScope::Equilibrium) return true;
  return false;
}

std::optional<double> OutputSpec::extract(std::size_t i, const TrainResult& r) const {
  const OutputColumn& col = columns_[i];
  const StageResult* s =
      col.stage < 0 ? nullptr : &r.stages.at(static_cast<std::size_t>(col.stage));
  return finite(col.spec->get(r, s, col.species));
}

std::vector<std::string> design_margin_columns(const Case& c) {
  std::vector<std::string> out;
  for (const auto& s : c.train)
    if (const auto* r = std::get_if<ReactorSpec>(&s); r && r->sized())
      out.push_back(r->id + (r->bulk_density ? ".catalyst_mass" : ".volume"));
  return out;
}

}  // namespace rxtrain::sweep
