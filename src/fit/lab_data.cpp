#include "rxtrain/fit/lab_data.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <optional>
#include <set>

#include "rxtrain/base/error.hpp"
#include "rxtrain/base/suggest.hpp"
#include "rxtrain/sweep/study.hpp"

namespace rxtrain::fit {

namespace {

struct Cell {
  std::string text;
  int column = 0;  // from 1
};

std::string trim(std::string_view s) {
  const auto b = s.find_first_not_of(" \t\r");
  if (b == std::string_view::npos) return "";
  const auto e = s.find_last_not_of(" \t\r");
  return std::string(s.substr(b, e - b + 1));
}

std::vector<Cell> split(const std::string& line) {
  std::vector<Cell> out;
  std::size_t start = 0;
  while (true) {
    const auto comma = line.find(',', start);
    const std::string raw =
        line.substr(start, comma == std::string::npos ? std::string::npos : comma - start);
    const auto lead = raw.find_first_not_of(" \t");
    out.push_back(
        {trim(raw), static_cast<int>(start + (lead == std::string::npos ? 0 : lead)) + 1});
    if (comma == std::string::npos) break;
    start = comma + 1;
  }
  return out;
}

bool is_number(const std::string& s) {
  if (s.empty()) return false;
  char* end = nullptr;
  std::strtod(s.c_str(), &end);
  return end && *end == '\0';
}

// What a column holds.
struct Column {
  enum class Kind { Input, Output, Sigma } kind = Kind::Input;
  std::size_t index = 0;  // input position, or output position (Output, Sigma)
  SiUnit unit;
  bool chemistry_units = false;
  std::string name;
};

SiUnit output_unit(const std::string& si) { return SiUnit::of(si == "-" ? "1" : si); }

}  // namespace

LabData read_lab_data(const std::string& text, const std::string& file, const Case& lab,
                      const sweep::CasePathTable& table, const UnitParser& units,
                      const std::map<std::string, std::string>& sigma) {
  LabData d;
  d.file = file;
  // Lines, with comments and blank lines dropped but their numbers kept.
  std::vector<std::pair<int, std::string>> lines;
  {
    std::size_t pos = 0;
    int n = 0;
    while (pos <= text.size()) {
      const auto nl = text.find('\n', pos);
      std::string line = text.substr(pos, nl == std::string::npos ? std::string::npos : nl - pos);
      ++n;
      if (!line.empty() && line.back() == '\r') line.pop_back();
      const std::string t = trim(line);
      if (!t.empty() && t[0] != '#') lines.emplace_back(n, line);
      if (nl == std::string::npos) break;
      pos = nl + 1;
    }
  }
  const auto fail = [&](int line, int col, const std::string& msg) -> void {
    throw InputError({file, line, col}, msg);
  };
  if (lines.empty()) fail(1, 1, "the lab data has no header line (column names) and no runs");
  const auto header = split(lines[0].second);
  const int header_line = lines[0].first;

  // Outputs first (they make an OutputSpec), then inputs and sigmas.
  std::vector<std::string> output_names;
  std::vector<Column> cols(header.size());
  std::set<std::string> seen;
  for (std::size_t c = 0; c < header.size(); ++c) {
    const std::string& name = header[c].text;
    if (name.empty()) fail(header_line, header[c].column, "an empty column name in the header");
    if (!seen.insert(name).second)
      fail(header_line, header[c].column, fmt::format("column \"{}\" is given twice", name));
    if (name.rfind("sigma.", 0) == 0) continue;
    const auto& paths = table.names();
    if (std::find(paths.begin(), paths.end(), name) != paths.end()) continue;
    // Not a case path: a measured output, as the sweep names them.
    try {
      (void)sweep::OutputSpec::parse(name, lab);
    } catch (const InputError&) {
      std::vector<std::string> candidates = paths;
      for (const auto& o : sweep::OutputSpec::defaults(lab).names()) candidates.push_back(o);
      fail(header_line, header[c].column,
           fmt::format("unknown column \"{}\": a column is a case path (an input of the run, "
                       "e.g. feed.T), an output of the run (the measurement, e.g. X or "
                       "R1.outlet.T) or sigma.OUTPUT{}",
                       name, suggest_nearest(name, candidates, "valid names", 40)));
    }
    cols[c].kind = Column::Kind::Output;
    cols[c].index = output_names.size();
    output_names.push_back(name);
  }
  if (output_names.empty())
    fail(header_line, 1,
         "the lab data names no measured output: give at least one column named as a sweep "
         "output (X, STAGE.outlet.T, STAGE.x_out.SP, ...)");
  std::string list;
  for (const auto& o : output_names) list += (list.empty() ? "" : ",") + o;
  d.outputs = sweep::OutputSpec::parse(list, lab);
  const auto out_units = d.outputs.units();
  for (std::size_t c = 0; c < header.size(); ++c) {
    const std::string& name = header[c].text;
    Column& col = cols[c];
    col.name = name;
    if (col.kind == Column::Kind::Output) {
      col.unit = output_unit(out_units[col.index]);
      continue;
    }
    if (name.rfind("sigma.", 0) == 0) {
      const std::string of = name.substr(6);
      const auto it = std::find(output_names.begin(), output_names.end(), of);
      if (it == output_names.end())
        fail(header_line, header[c].column,
             fmt::format("column \"{}\" gives the SD of \"{}\", which is not a measured column "
                         "of this file",
                         name, of));
      col.kind = Column::Kind::Sigma;
      col.index = static_cast<std::size_t>(it - output_names.begin());
      col.unit = output_unit(out_units[col.index]);
      continue;
    }
    col.kind = Column::Kind::Input;
    const std::size_t path = table.find(name, "t");
    col.index = d.input_paths.size();
    col.unit = table.at(path).unit;
    col.chemistry_units = table.at(path).chemistry_units;
    d.input_paths.push_back(path);
    d.input_names.push_back(name);
  }

  // An optional unit line: no cell of it is a number.
  std::size_t first = 1;
  std::vector<std::string> col_units(header.size());
  if (lines.size() > 1) {
    const auto u = split(lines[1].second);
    const bool unit_line =
        std::none_of(u.begin(), u.end(), [](const Cell& c) { return is_number(c.text); });
    if (unit_line) {
      if (u.size() != header.size())
        fail(lines[1].first, 1,
             fmt::format("the unit line has {} cells for the header's {} columns", u.size(),
                         header.size()));
      for (std::size_t c = 0; c < u.size(); ++c) {
        const std::string& t = u[c].text;
        if (t.empty() || t == "-") continue;
        if (!units.is_convertible(t, cols[c].unit))
          fail(lines[1].first, u[c].column,
               fmt::format(
                   "unit \"{}\" of column {} is not {} ({})", t, cols[c].name,
                   cols[c].unit.description.empty() ? "of its dimension" : cols[c].unit.description,
                   cols[c].unit.to_string()));
        col_units[c] = t;
      }
      first = 2;
    }
  }

  // --sigma NAME=VALUE, one SD for every run of an output.
  std::vector<std::optional<double>> option_sigma(output_names.size());
  for (const auto& [name, value] : sigma) {
    const auto it = std::find(output_names.begin(), output_names.end(), name);
    if (it == output_names.end())
      throw InputError({"--sigma", 0, 0},
                       fmt::format("\"{}\" is not a measured column of {}", name, file));
    const auto k = static_cast<std::size_t>(it - output_names.begin());
    double v = 0;
    try {
      v = units.difference_to_si(value, output_unit(out_units[k]));
    } catch (const UnitError& e) {
      throw InputError({"--sigma", 0, 0}, fmt::format("{}={}: {}", name, value, e.what()));
    }
    if (!(v > 0))
      throw InputError({"--sigma", 0, 0},
                       fmt::format("{}={}: a standard deviation must be above 0", name, value));
    option_sigma[k] = v;
  }
  std::vector<bool> has_sigma_column(output_names.size(), false);
  for (const auto& col : cols)
    if (col.kind == Column::Kind::Sigma) has_sigma_column[col.index] = true;
  bool any_sigma = false, all_sigma = true;
  for (std::size_t k = 0; k < output_names.size(); ++k) {
    const bool has = has_sigma_column[k] || option_sigma[k];
    any_sigma = any_sigma || has;
    all_sigma = all_sigma && has;
  }
  if (any_sigma && !all_sigma) {
    for (std::size_t k = 0; k < output_names.size(); ++k)
      if (!has_sigma_column[k] && !option_sigma[k])
        fail(header_line, 1,
             fmt::format("output {} has no standard deviation while others have one: give "
                         "sigma.{} (a column or --sigma {}=VALUE) so that the weights compare",
                         output_names[k], output_names[k], output_names[k]));
  }

  for (std::size_t l = first; l < lines.size(); ++l) {
    const auto [line_no, line] = lines[l];
    const auto cells = split(line);
    if (cells.size() != header.size())
      fail(line_no, 1,
           fmt::format("this run has {} cells for the header's {} columns", cells.size(),
                       header.size()));
    std::vector<double> in(d.input_paths.size()), meas(output_names.size()),
        sd(output_names.size());
    for (std::size_t k = 0; k < output_names.size(); ++k) sd[k] = option_sigma[k].value_or(0);
    for (std::size_t c = 0; c < cells.size(); ++c) {
      const Column& col = cols[c];
      std::string t = cells[c].text;
      if (t.empty())
        fail(line_no, cells[c].column, fmt::format("column {} has no value in this run", col.name));
      if (is_number(t) && !col_units[c].empty()) t += " " + col_units[c];
      double v = 0;
      try {
        UnitOptions uo;
        uo.plain_cal_is_thermochemical = col.chemistry_units;
        v = col.kind == Column::Kind::Sigma ? units.difference_to_si(t, col.unit, uo)
                                            : units.to_si(t, col.unit, uo);
      } catch (const UnitError& e) {
        fail(line_no, cells[c].column,
             fmt::format("column {} needs {}: {}", col.name, col.unit.to_string(), e.what()));
      }
      if (!std::isfinite(v))
        fail(line_no, cells[c].column,
             fmt::format("column {} needs a finite number, got \"{}\"", col.name, cells[c].text));
      if (col.kind == Column::Kind::Input) {
        const CaseField& f = table.at(d.input_paths[col.index]);
        if (!f.contains(v))
          fail(line_no, cells[c].column,
               out_of_range_text(f.name, f.range, f.spec->si, v, cells[c].text));
        in[col.index] = v;
      } else if (col.kind == Column::Kind::Output) {
        meas[col.index] = v;
      } else {
        if (!(v > 0))
          fail(line_no, cells[c].column,
               fmt::format("{} is a standard deviation and must be above 0, got \"{}\"", col.name,
                           cells[c].text));
        sd[col.index] = v;
      }
    }
    d.inputs.push_back(std::move(in));
    d.measured.push_back(std::move(meas));
    if (any_sigma) d.sigma.push_back(std::move(sd));
    d.lines.push_back(line_no);
  }
  if (d.runs() == 0) fail(header_line, 1, "the lab data has a header but no runs");
  return d;
}

}  // namespace rxtrain::fit
