#include "rxtrain/sweep/sweep_csv.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <charconv>
#include <set>

#include "rxtrain/base/error.hpp"

namespace rxtrain::sweep {

namespace {

constexpr const char* kMagic = "# rxtrain sweep";
constexpr const char* kShardPrefix = "# shard: ";

// Quoted when it holds a separator or a quote; line breaks become spaces so
// every row stays one line (merge reads rows line by line).
std::string csv_field(std::string s) {
  std::replace(s.begin(), s.end(), '\n', ' ');
  std::replace(s.begin(), s.end(), '\r', ' ');
  if (s.find_first_of(",\"") == std::string::npos) return s;
  std::string out = "\"";
  for (char c : s) {
    if (c == '"') out += '"';
    out += c;
  }
  return out + "\"";
}

std::vector<std::string> lines_of(const std::string& text) {
  std::vector<std::string> out;
  std::size_t start = 0;
  while (start < text.size()) {
    auto end = text.find('\n', start);
    if (end == std::string::npos) end = text.size();
    out.push_back(text.substr(start, end - start));
    start = end + 1;
  }
  return out;
}

struct ShardFile {
  std::string name;
  std::vector<std::string> identity;  // every header line but the shard's, and the column line
  Shard shard;
  std::size_t total = 0;  // from "# runs: "
  std::vector<std::string> rows;
};

ShardFile read_shard(const std::string& name, const std::string& text) {
  const auto fail = [&](int line, const std::string& msg) -> ShardFile {
    throw InputError({name, line, 0}, msg);
  };
  ShardFile f;
  f.name = name;
  const auto lines = lines_of(text);
  if (lines.empty() || lines[0] != kMagic)
    return fail(
        1, fmt::format("not a sweep CSV of rxtrain (the first line should read \"{}\")", kMagic));
  std::size_t i = 0;
  bool have_shard = false, have_runs = false;
  for (; i < lines.size() && !lines[i].empty() && lines[i][0] == '#'; ++i) {
    const std::string& l = lines[i];
    if (l.rfind(kShardPrefix, 0) == 0) {
      try {
        f.shard = Shard::parse(l.substr(std::string(kShardPrefix).size()));
      } catch (const InputError&) {
        return fail(static_cast<int>(i + 1), "malformed shard line: " + l);
      }
      have_shard = true;
      continue;
    }
    if (l.rfind("# runs: ", 0) == 0) {
      const std::string v = l.substr(8);
      const auto r = std::from_chars(v.data(), v.data() + v.size(), f.total);
      if (r.ec != std::errc() || r.ptr != v.data() + v.size())
        return fail(static_cast<int>(i + 1), "malformed runs line: " + l);
      have_runs = true;
    }
    f.identity.push_back(l);
  }
  if (!have_shard || !have_runs)
    return fail(static_cast<int>(i), "the header lacks its \"# shard\" or \"# runs\" line");
  if (i >= lines.size() || lines[i].rfind("run,", 0) != 0)
    return fail(static_cast<int>(i + 1), "expected the column line (run,...) after the header");
  f.identity.push_back(lines[i]);
  const auto [first, last] = f.shard.range(f.total);
  for (++i; i < lines.size(); ++i) {
    const std::string& l = lines[i];
    const std::size_t expect = first + f.rows.size();
    std::size_t run = 0;
    const auto comma = l.find(',');
    const auto r =
        std::from_chars(l.data(), l.data() + (comma == std::string::npos ? l.size() : comma), run);
    if (comma == std::string::npos || r.ec != std::errc() || run != expect || run >= last)
      return fail(static_cast<int>(i + 1),
                  fmt::format("expected the row of run {} of shard {} (runs {} to {}), got \"{}\"",
                              expect, f.shard.to_string(), first, last - 1, l.substr(0, 40)));
    f.rows.push_back(l);
  }
  if (first + f.rows.size() != last)
    return fail(static_cast<int>(lines.size()),
                fmt::format("shard {} is incomplete: it holds {} of the {} rows of runs {} to {}",
                            f.shard.to_string(), f.rows.size(), last - first, first, last - 1));
  return f;
}

std::vector<std::string> split_list(const std::string& s) {
  std::vector<std::string> out;
  std::size_t start = 0;
  while (start <= s.size() && !s.empty()) {
    auto end = s.find(',', start);
    if (end == std::string::npos) end = s.size();
    out.push_back(s.substr(start, end - start));
    start = end + 1;
  }
  return out;
}

// The header's fields from the identity lines (all but the column line).
StudyHeader read_header(const std::vector<std::string>& identity) {
  StudyHeader h;
  for (std::size_t i = 1; i + 1 < identity.size(); ++i) {
    const std::string l = identity[i].substr(2);  // after "# "
    const auto value = [&](const char* key) { return l.substr(std::string(key).size()); };
    if (l.rfind("version: ", 0) == 0)
      h.version = value("version: ");
    else if (l.rfind("case-sha256: ", 0) == 0)
      h.case_sha256 = value("case-sha256: ");
    else if (l.rfind("outputs: ", 0) == 0)
      h.outputs = split_list(value("outputs: "));
    else if (l.rfind("margin: ", 0) == 0)
      h.margin = split_list(value("margin: "));
    else if (l.rfind("units: ", 0) == 0)
      for (const auto& pair : split_list(value("units: "))) {
        const auto eq = pair.rfind('=');
        if (eq != std::string::npos) h.units.emplace_back(pair.substr(0, eq), pair.substr(eq + 1));
      }
    else
      h.definition.push_back(l);
  }
  return h;
}

RunStatus status_of(const std::string& name, const std::string& file) {
  for (RunStatus s : {RunStatus::Ok, RunStatus::OverLimit, RunStatus::Infeasible,
                      RunStatus::SolverFailure, RunStatus::InvalidInput})
    if (name == run_status_name(s)) return s;
  throw InputError({file, 0, 0}, fmt::format("unknown run status \"{}\"", name));
}

double number_of(const std::string& text, const std::string& file) {
  double v = 0;
  const auto r = std::from_chars(text.data(), text.data() + text.size(), v);
  if (r.ec != std::errc() || r.ptr != text.data() + text.size())
    throw InputError({file, 0, 0}, fmt::format("\"{}\" in a row is not a number", text));
  return v;
}

}  // namespace

std::vector<std::string> split_csv_line(const std::string& line) {
  std::vector<std::string> out(1);
  bool quoted = false;
  for (std::size_t i = 0; i < line.size(); ++i) {
    const char c = line[i];
    if (quoted) {
      if (c == '"' && i + 1 < line.size() && line[i + 1] == '"') {
        out.back() += '"';
        ++i;
      } else if (c == '"') {
        quoted = false;
      } else {
        out.back() += c;
      }
    } else if (c == '"') {
      quoted = true;
    } else if (c == ',') {
      out.emplace_back();
    } else {
      out.back() += c;
    }
  }
  return out;
}

std::string sweep_csv(const StudyHeader& header, const Shard& shard,
                      const std::vector<std::string>& input_names,
                      const std::vector<RunRow>& rows) {
  std::string out = std::string(kMagic) + "\n";
  out += fmt::format("# version: {}\n", header.version);
  out += fmt::format("# case-sha256: {}\n", header.case_sha256);
  for (const auto& d : header.definition) out += "# " + d + "\n";
  std::string names;
  for (const auto& n : header.outputs) names += (names.empty() ? "" : ",") + n;
  out += fmt::format("# outputs: {}\n", names);
  if (!header.units.empty()) {
    std::string units;
    for (const auto& [name, unit] : header.units)
      units += fmt::format("{}{}={}", units.empty() ? "" : ",", name, unit);
    out += fmt::format("# units: {}\n", units);
  }
  if (!header.margin.empty()) {
    std::string margin;
    for (const auto& n : header.margin) margin += (margin.empty() ? "" : ",") + n;
    out += fmt::format("# margin: {}\n", margin);
  }
  out += fmt::format("{}{}\n", kShardPrefix, shard.to_string());
  out += "run";
  for (const auto& n : input_names) out += "," + csv_field(n);
  for (const auto& n : header.outputs) out += "," + csv_field(n);
  out += ",status,message\n";
  for (const auto& r : rows) {
    out += fmt::format("{}", r.run);
    for (double v : r.inputs) out += fmt::format(",{}", v);
    for (const auto& v : r.result.outputs) out += v ? fmt::format(",{}", *v) : std::string(",");
    out += fmt::format(",{},{}\n", run_status_name(r.result.status), csv_field(r.result.message));
  }
  return out;
}

MergeResult merge_sweep_csv(const std::vector<std::pair<std::string, std::string>>& files) {
  if (files.empty()) throw InputError({"merge", 0, 0}, "no shard files given");
  std::vector<ShardFile> shards;
  for (const auto& [name, text] : files) shards.push_back(read_shard(name, text));
  const ShardFile& ref = shards.front();
  for (const auto& s : shards) {
    if (s.shard.n != ref.shard.n)
      throw InputError({s.name, 0, 0},
                       fmt::format("is shard {} but {} is shard {}: the shard counts differ",
                                   s.shard.to_string(), ref.name, ref.shard.to_string()));
    for (std::size_t i = 0; i < std::max(s.identity.size(), ref.identity.size()); ++i) {
      const std::string a = i < ref.identity.size() ? ref.identity[i] : "(nothing)";
      const std::string b = i < s.identity.size() ? s.identity[i] : "(nothing)";
      if (a != b)
        throw InputError({s.name, 0, 0},
                         fmt::format("belongs to another study than {}: \"{}\" there, \"{}\" here",
                                     ref.name, a, b));
    }
  }
  std::vector<const ShardFile*> by_k(ref.shard.n + 1, nullptr);
  for (const auto& s : shards) {
    if (by_k[s.shard.k])
      throw InputError({s.name, 0, 0}, fmt::format("repeats shard {} of {}", s.shard.to_string(),
                                                   by_k[s.shard.k]->name));
    by_k[s.shard.k] = &s;
  }
  std::string missing;
  for (std::size_t k = 1; k <= ref.shard.n; ++k)
    if (!by_k[k]) missing += (missing.empty() ? "" : ", ") + fmt::format("{}/{}", k, ref.shard.n);
  if (!missing.empty())
    throw InputError({"merge", 0, 0},
                     fmt::format("missing shard{} {}",
                                 missing.find(',') == std::string::npos ? "" : "s", missing));
  MergeResult m;
  // The unsharded header: the identity with "# shard: 1/1" before the column line.
  for (std::size_t i = 0; i + 1 < ref.identity.size(); ++i) m.csv += ref.identity[i] + "\n";
  m.csv += std::string(kShardPrefix) + "1/1\n";
  m.csv += ref.identity.back() + "\n";
  m.header = read_header(ref.identity);
  const auto columns = split_csv_line(ref.identity.back());
  const std::size_t n_out = m.header.outputs.size();
  if (columns.size() < n_out + 3)
    throw InputError({ref.name, 0, 0}, "the column line does not hold the outputs of the header");
  const std::size_t n_in = columns.size() - n_out - 3;
  m.input_names.assign(columns.begin() + 1, columns.begin() + 1 + static_cast<long>(n_in));
  for (std::size_t k = 1; k <= ref.shard.n; ++k)
    for (const auto& row : by_k[k]->rows) {
      m.csv += row + "\n";
      const auto fields = split_csv_line(row);
      if (fields.size() != columns.size())
        throw InputError({by_k[k]->name, 0, 0},
                         fmt::format("a row holds {} fields, the column line {}: \"{}\"",
                                     fields.size(), columns.size(), row.substr(0, 40)));
      RunRow r;
      r.run = static_cast<std::size_t>(number_of(fields[0], by_k[k]->name));
      for (std::size_t i = 0; i < n_in; ++i)
        r.inputs.push_back(number_of(fields[1 + i], by_k[k]->name));
      for (std::size_t i = 0; i < n_out; ++i) {
        const std::string& f = fields[1 + n_in + i];
        r.result.outputs.push_back(f.empty() ? std::nullopt
                                             : std::optional<double>(number_of(f, by_k[k]->name)));
      }
      r.result.status = status_of(fields[fields.size() - 2], by_k[k]->name);
      r.result.message = fields.back();
      ++m.statuses[fields[fields.size() - 2]];
      ++m.runs;
      m.rows.push_back(std::move(r));
    }
  return m;
}

}  // namespace rxtrain::sweep
