#include "rxtrain/sweep/case_path.hpp"

#include <fmt/format.h>

#include <variant>

#include "rxtrain/base/suggest.hpp"

namespace rxtrain::sweep {

CasePathTable::CasePathTable(const Case& base) {
  for (CaseField& f : case_fields(base))
    if (offered_to_sweeps(f, base)) paths_.push_back(std::move(f));
  for (const auto& s : base.train)
    if (const auto* r = std::get_if<ReactorSpec>(&s); r && r->type == ReactorType::Cstr)
      has_stirred_tank_ = true;
}

std::vector<std::string> CasePathTable::names() const {
  std::vector<std::string> out;
  for (const auto& p : paths_) out.push_back(p.name);
  return out;
}

std::size_t CasePathTable::find(std::string_view name, const std::string& option) const {
  for (std::size_t i = 0; i < paths_.size(); ++i)
    if (paths_[i].name == name) return i;
  throw InputError({option, 0, 0}, fmt::format("unknown case path \"{}\"{}", name,
                                               suggest_nearest(name, names(), "valid names", 40)));
}

double CasePathTable::base_value(std::size_t i, const Case& base) const {
  return paths_[i].get(base);
}

CaseEditor::CaseEditor(const CasePathTable& table, std::vector<std::size_t> which) {
  for (std::size_t i : which) paths_.push_back(table.at(i));
}

void CaseEditor::apply(const Case& base, std::span<const double> values, Case& work) const {
  // The feed and every edited stage start again from the base, so edits
  // that interact (flow and composition, catalyst and bulk density) always
  // combine the same way whatever the previous run set. Mechanism fields
  // are all rewritten on every run.
  work.feed = base.feed;
  for (const auto& p : paths_)
    if (p.spec->owner == FieldOwner::Stage) work.train[p.index] = base.train[p.index];
  set_case_fields(work, paths_, values);
  validate_case(work);
}

}  // namespace rxtrain::sweep
