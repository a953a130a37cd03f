#include "rxtrain/studies/write_case.hpp"

#include <fmt/format.h>

#include <sstream>
#include <vector>

#include "rxtrain/base/caution.hpp"
#include "rxtrain/base/error.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case_fields.hpp"

namespace rxtrain {

namespace {

std::vector<std::string> lines_of(const std::string& text) {
  std::vector<std::string> lines;
  std::istringstream in(text);
  std::string line;
  while (std::getline(in, line)) lines.push_back(line);
  return lines;
}

bool top_level_key(const std::string& line) {
  if (line.empty()) return false;
  const char c = line[0];
  return c != ' ' && c != '\t' && c != '#' && c != '-' && c != '\r';
}

// Enough digits that the run reproduces the optimizer's numbers to far
// below what the tests compare (1e-10 relative).
constexpr int kDigits = 12;
std::string number(double v) { return fmt::format("{:.{}g}", v, kDigits); }

// "key: value unit" of a field of the table (case_fields.hpp), in SI.
std::string field_text(CaseFieldKind kind, double v) {
  const CaseFieldSpec& s = case_field_spec(kind);
  return fmt::format("{}: {}", s.key(), case_field_text(s, v, kDigits));
}

}  // namespace

std::string design_case_text(const Case& c, const std::string& case_text, const DesignResult& d,
                             const DesignLayout& layout, const UnitParser& units,
                             const std::string& name) {
  const auto lines = lines_of(case_text);
  std::size_t begin = lines.size();
  for (std::size_t i = 0; i < lines.size(); ++i)
    if (lines[i].rfind("train:", 0) == 0) {
      begin = i;
      break;
    }
  if (begin == lines.size())
    throw InputError({c.file, 0, 0},
                     "--write-case needs the case's top-level keys in block style (a line "
                     "starting with \"train:\"); this case's train could not be located");
  std::size_t end = begin + 1;
  while (end < lines.size() && !top_level_key(lines[end])) ++end;
  // Column-0 comments just above the next key belong to that key.
  while (end > begin + 1 && end <= lines.size() && !lines[end - 1].empty() &&
         lines[end - 1][0] == '#')
    --end;

  std::string block;
  const double total =
      d.catalyst_objective ? layout.total_catalyst.value_or(0.0) : layout.total_volume;
  block += fmt::format(
      "# The optimum layout written by `rxtrain optimize` ({} adiabatic beds, total {} {} {}{}).\n"
      "# {}\n",
      layout.beds, d.catalyst_objective ? "catalyst" : "volume", number(total),
      case_field_spec(d.catalyst_objective ? CaseFieldKind::Catalyst : CaseFieldKind::Volume).si,
      d.margin > 0 ? fmt::format("; every bed temperature kept {:g} K inside the limits (--margin)",
                                 d.margin)
                   : "",
      kCaution);
  block += "train:\n";
  const auto train = design_train(c, d, layout);
  {
    // The layout as a case built in code, checked before any text of it.
    Case built = c;
    built.train = train;
    validate_case(built);
  }
  std::size_t bed = 0;
  for (const auto& sp : train) {
    if (const auto* x = std::get_if<ExchangerSpec>(&sp)) {
      block += fmt::format("  - {{type: exchanger, id: {}, {}}}   # {:.2f} degC\n", x->id,
                           field_text(CaseFieldKind::ExchangerTout, *x->T_out),
                           *x->T_out - kZeroCelsius);
      continue;
    }
    const auto& r = std::get<ReactorSpec>(sp);
    const DesignBed& b = layout.bed[bed++];
    std::string size = r.catalyst_mass ? field_text(CaseFieldKind::Catalyst, *r.catalyst_mass)
                                       : field_text(CaseFieldKind::Volume, *r.volume);
    if (r.bulk_density) size += ", " + field_text(CaseFieldKind::BulkDensity, *r.bulk_density);
    block +=
        fmt::format("  - {{type: pfr, id: {}, {}}}   # X {:.6f} -> {:.6f}, {:.2f} -> {:.2f} degC\n",
                    r.id, size, b.X_in, b.X_out, b.T_in - kZeroCelsius, b.T_out - kZeroCelsius);
  }

  std::string text = fmt::format(
      "# Written by rxtrain optimize from {}: the case as given, with the train replaced\n"
      "# by the optimum layout (see the train below).\n",
      c.file);
  for (std::size_t i = 0; i < begin; ++i) text += lines[i] + "\n";
  text += block;
  for (std::size_t i = end; i < lines.size(); ++i) text += lines[i] + "\n";

  // The file must load, with the train just written.
  const Case back = load_case_from_string(text, name, units);
  if (back.train.size() != train.size())
    throw InputError({c.file, 0, 0},
                     "--write-case could not replace the case's train (it spans more than the "
                     "lines after \"train:\"); write the train as the last block of the case");
  return text;
}

}  // namespace rxtrain
