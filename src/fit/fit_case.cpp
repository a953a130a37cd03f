#include "rxtrain/fit/fit_case.hpp"

#include <fmt/format.h>
#include <yaml-cpp/yaml.h>

#include <algorithm>
#include <sstream>

#include "rxtrain/base/error.hpp"
#include "rxtrain/case/case_fields.hpp"

namespace rxtrain::fit {

namespace {

struct Edit {
  std::size_t pos = 0, len = 0;
  std::string text;
};

std::vector<std::string> split_path(const std::string& path) {
  std::vector<std::string> parts;
  std::stringstream s(path);
  for (std::string p; std::getline(s, p, '.');) parts.push_back(p);
  return parts;
}

// The node at `parts` (a list entry by its id, or by its index where the
// entries have none); undefined where missing.
YAML::Node find(YAML::Node n, const std::vector<std::string>& parts) {
  for (std::size_t i = 0; i < parts.size(); ++i) {
    if (!n.IsMap()) return YAML::Node(YAML::NodeType::Undefined);
    YAML::Node next = n[parts[i]];
    if (!next) return next;
    if (next.IsSequence() && i + 1 < parts.size()) {
      YAML::Node entry(YAML::NodeType::Undefined);
      for (std::size_t j = 0; j < next.size(); ++j)
        if (next[j]["id"] ? next[j]["id"].Scalar() == parts[i + 1]
                          : std::to_string(j) == parts[i + 1])
          entry.reset(next[j]);
      n.reset(entry);
      ++i;
      if (!n) return n;
      continue;
    }
    n.reset(next);
  }
  return n;
}

// The span of a scalar's text at its mark: a quoted scalar with its quotes.
Edit scalar_span(const std::string& text, const YAML::Node& n) {
  const auto pos = static_cast<std::size_t>(n.Mark().pos);
  const std::string& s = n.Scalar();
  if (pos < text.size() && (text[pos] == '"' || text[pos] == '\'')) {
    const auto close = text.find(text[pos], pos + 1);
    return {pos, close - pos + 1, ""};
  }
  if (text.compare(pos, s.size(), s) != 0) return {pos, std::string::npos, ""};
  return {pos, s.size(), ""};
}

}  // namespace

std::string fitted_case_text(const std::string& text, const std::string& file, const FitResult& r,
                             const UnitParser& units, const std::string& name) {
  YAML::Node root;
  try {
    root = YAML::Load(text);
  } catch (const YAML::Exception& e) {
    throw InputError({file, 0, 0}, fmt::format("cannot read the case to write into: {}", e.what()));
  }
  std::vector<Edit> edits;
  const auto replace = [&](const std::string& path, const std::string& value) {
    const YAML::Node n = find(root, split_path(path));
    if (!n || !n.IsScalar())
      throw InputError({file, 0, 0},
                       fmt::format("{} has no value in the text for {} to replace: write it out "
                                   "in the case (e.g. the rate's orders: {{...}})",
                                   file, path));
    Edit e = scalar_span(text, n);
    if (e.len == std::string::npos)
      throw InputError({file, n.Mark().line + 1, n.Mark().column + 1},
                       fmt::format("cannot locate the text of {} to replace", path));
    e.text = value;
    edits.push_back(e);
  };
  for (const FittedParameter& p : r.parameters) {
    const CaseFieldSpec* spec = nullptr;
    std::string unit;  // a rate or adsorption constant's SI unit, which depends on the law
    for (const auto& f : case_fields(r.fitted))
      if (f.name == p.path) {
        spec = f.spec;
        if (spec->kind == CaseFieldKind::RateA || spec->kind == CaseFieldKind::AdsorptionK)
          unit = f.unit.to_parsable();
      }
    if (!spec) continue;
    replace(p.path, unit.empty() ? case_field_text(*spec, p.estimate, 17)
                                 : fmt::format("{:.17g} {}", p.estimate, unit));
    if (!p.T_ref) continue;
    // The T_ref the estimate of A holds at: replaced, or added beside A.
    const std::string rate = p.path.substr(0, p.path.rfind('.'));
    const std::string tref = fmt::format("{:.17g} K", *p.T_ref);
    const YAML::Node t = find(root, split_path(rate + ".T_ref"));
    if (t) {
      replace(rate + ".T_ref", tref);
      continue;
    }
    const YAML::Node a = find(root, split_path(p.path));
    const YAML::Node law = find(root, split_path(rate));
    const Edit ea = scalar_span(text, a);
    const std::size_t end = ea.pos + ea.len;
    if (law.Style() == YAML::EmitterStyle::Flow) {
      edits.push_back({end, 0, ", T_ref: " + tref});
    } else {
      const std::size_t line_start = text.rfind('\n', ea.pos) + 1;  // npos + 1 = 0
      const std::size_t key = text.find_first_not_of(' ', line_start);
      const std::size_t eol = std::min(text.find('\n', end), text.size());
      edits.push_back({eol, 0, "\n" + std::string(key - line_start, ' ') + "T_ref: " + tref});
    }
  }
  std::sort(edits.begin(), edits.end(), [](const Edit& a, const Edit& b) { return a.pos > b.pos; });
  std::string out = text;
  for (const Edit& e : edits) out.replace(e.pos, e.len, e.text);
  (void)load_case_from_string(out, name, units);
  return out;
}

}  // namespace rxtrain::fit
