// Golden outputs of the command line (tests/cli/README.md). Runs every command
// of tests/cli/commands.txt from the source folder and compares its stdout and
// the files it writes with tests/cli/golden/: text exactly, numbers in JSON and
// CSV within kRelTol relative. A difference prints a unified diff and fails.
//   cli_golden            check (the ctest test)
//   cli_golden --update   rewrite tests/cli/golden/ from the current binary
//                         (tools/update-golden)
#include <sys/wait.h>
#include <unistd.h>

#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <nlohmann/json.hpp>
#include <set>
#include <sstream>
#include <stdexcept>
#include <string>
#include <vector>

namespace fs = std::filesystem;

namespace {

constexpr double kRelTol = 1e-9;  // numbers in JSON and CSV
// Below this a number is round-off (a mass balance's closure, about 1e-16,
// or a flow of a used-up species): its digits are noise, not a result.
constexpr double kRoundOff = 1e-14;
constexpr int kMaxReportedValues = 8;  // per file, before the diff
constexpr int kMaxDiffLines = 120;     // per file

struct Command {
  std::string name;  // golden/NAME.stdout; {out} = golden/NAME
  std::string args;  // shell words
  int line = 0;
};

std::string slurp(const fs::path& p) {
  std::ifstream f(p, std::ios::binary);
  std::stringstream s;
  s << f.rdbuf();
  return s.str();
}

void spit(const fs::path& p, const std::string& text) {
  std::ofstream f(p, std::ios::binary);
  f << text;
  if (!f) throw std::runtime_error("cannot write " + p.string());
}

std::string shell_quote(const std::string& s) {
  std::string q = "'";
  for (const char c : s) q += c == '\'' ? std::string("'\\''") : std::string(1, c);
  return q + "'";
}

bool valid_name(const std::string& n) {
  if (n.empty() || n.front() == '/' || n.find("..") != std::string::npos) return false;
  return std::all_of(n.begin(), n.end(), [](char c) {
    return std::isalnum(static_cast<unsigned char>(c)) || c == '-' || c == '_' || c == '.' ||
           c == '/';
  });
}

std::vector<Command> read_commands(const fs::path& file) {
  std::ifstream in(file);
  if (!in) throw std::runtime_error("cannot read " + file.string());
  std::vector<Command> commands;
  std::set<std::string> names;
  std::string line, joined;
  int number = 0, first = 0;
  while (std::getline(in, line)) {
    ++number;
    if (joined.empty()) first = number;
    const auto start = line.find_first_not_of(" \t");
    if (joined.empty() && (start == std::string::npos || line[start] == '#')) continue;
    if (!line.empty() && line.back() == '\\') {
      joined += line.substr(0, line.size() - 1) + " ";
      continue;
    }
    joined += line;
    std::istringstream words(joined);
    Command c;
    words >> c.name;
    std::getline(words >> std::ws, c.args);
    c.line = first;
    joined.clear();
    const std::string where = file.string() + ":" + std::to_string(c.line) + ": ";
    if (!valid_name(c.name)) throw std::runtime_error(where + "bad name '" + c.name + "'");
    if (!names.insert(c.name).second)
      throw std::runtime_error(where + "name '" + c.name + "' given twice");
    if (c.args.empty()) throw std::runtime_error(where + "no arguments after the name");
    commands.push_back(c);
  }
  if (!joined.empty()) throw std::runtime_error(file.string() + ": last line ends in '\\'");
  return commands;
}

std::string replace_all(std::string s, const std::string& from, const std::string& to) {
  for (auto at = s.find(from); at != std::string::npos; at = s.find(from, at + to.size()))
    s.replace(at, from.size(), to);
  return s;
}

// The one place where output that varies between runs is normalized: the
// temporary folder the files are written to reads as "OUT". Nothing else
// varies today (no timings, dates or progress lines reach stdout or the
// files; a sweep's progress goes to stderr, which is not kept).
std::string normalize(const std::string& text, const fs::path& out_root) {
  return replace_all(text, out_root.string(), "OUT");
}

// Runs every command into out_root: NAME.stdout and the files named by {out}.
bool run_all(const std::vector<Command>& commands, const fs::path& source, const fs::path& binary,
             const fs::path& out_root) {
  bool ok = true;
  for (const auto& c : commands) {
    const fs::path out = out_root / c.name;
    fs::create_directories(out.parent_path());
    const fs::path err = out_root / ".stderr";
    const std::string cmd =
        "cd " + shell_quote(source.string()) + " && " + shell_quote(binary.string()) + " " +
        replace_all(c.args, "{out}", shell_quote(out.string())) + " >" +
        shell_quote(out.string() + ".stdout") + " 2>" + shell_quote(err.string());
    const int status = std::system(cmd.c_str());
    if (status != 0) {
      const int code = WIFEXITED(status) ? WEXITSTATUS(status) : -1;
      std::cout << "FAIL " << c.name << " (commands.txt:" << c.line << "): exit code " << code
                << "\n  rxtrain " << c.args << "\n"
                << slurp(err) << "\n";
      ok = false;
    }
    fs::remove(err);
  }
  for (const auto& e : fs::recursive_directory_iterator(out_root))
    if (e.is_regular_file()) spit(e.path(), normalize(slurp(e.path()), out_root));
  return ok;
}

std::set<std::string> files_under(const fs::path& root) {
  std::set<std::string> files;
  if (!fs::exists(root)) return files;
  for (const auto& e : fs::recursive_directory_iterator(root))
    if (e.is_regular_file()) files.insert(fs::relative(e.path(), root).generic_string());
  return files;
}

bool close(double a, double b) {
  return a == b || std::abs(a - b) <= kRelTol * std::max(std::abs(a), std::abs(b)) ||
         (std::abs(a) < kRoundOff && std::abs(b) < kRoundOff);
}

std::string show(double v) {
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.17g", v);
  return buf;
}

// Differences beyond the tolerance, as "where: golden X, now Y" lines.
using Findings = std::vector<std::string>;

void compare_json(const nlohmann::json& g, const nlohmann::json& n, const std::string& path,
                  Findings& f) {
  if (g.is_number() && n.is_number()) {
    const double a = g.get<double>(), b = n.get<double>();
    if (!close(a, b)) f.push_back(path + ": golden " + show(a) + ", now " + show(b));
  } else if (g.is_object() && n.is_object()) {
    for (const auto& [k, v] : g.items())
      if (n.contains(k))
        compare_json(v, n[k], path + "/" + k, f);
      else
        f.push_back(path + "/" + k + ": missing now");
    for (const auto& [k, v] : n.items())
      if (!g.contains(k)) f.push_back(path + "/" + k + ": new (not in the golden file)");
  } else if (g.is_array() && n.is_array()) {
    if (g.size() != n.size())
      f.push_back(path + ": golden has " + std::to_string(g.size()) + " items, now " +
                  std::to_string(n.size()));
    for (std::size_t i = 0; i < std::min(g.size(), n.size()); ++i)
      compare_json(g[i], n[i], path + "/" + std::to_string(i), f);
  } else if (g != n) {
    f.push_back(path + ": golden " + g.dump() + ", now " + n.dump());
  }
}

// RFC 4180: cells split at commas outside quotes; "" inside quotes is a quote.
std::vector<std::vector<std::string>> parse_csv(const std::string& text) {
  std::vector<std::vector<std::string>> rows(1, std::vector<std::string>(1));
  bool quoted = false;
  for (std::size_t i = 0; i < text.size(); ++i) {
    const char c = text[i];
    if (quoted) {
      if (c == '"' && i + 1 < text.size() && text[i + 1] == '"')
        rows.back().back() += text[++i];
      else if (c == '"')
        quoted = false;
      else
        rows.back().back() += c;
    } else if (c == '"') {
      quoted = true;
    } else if (c == ',') {
      rows.back().emplace_back();
    } else if (c == '\n') {
      rows.emplace_back(1);
    } else {
      rows.back().back() += c;
    }
  }
  if (rows.back().size() == 1 && rows.back().back().empty()) rows.pop_back();
  return rows;
}

bool parse_number(const std::string& s, double& v) {
  if (s.empty() || std::isspace(static_cast<unsigned char>(s.front()))) return false;
  char* end = nullptr;
  v = std::strtod(s.c_str(), &end);
  return end == s.c_str() + s.size();
}

void compare_csv(const std::string& golden, const std::string& now, Findings& f) {
  const auto g = parse_csv(golden), n = parse_csv(now);
  if (g.size() != n.size())
    f.push_back("golden has " + std::to_string(g.size()) + " lines, now " +
                std::to_string(n.size()));
  for (std::size_t r = 0; r < std::min(g.size(), n.size()); ++r) {
    const std::string where = "line " + std::to_string(r + 1);
    if (g[r].size() != n[r].size()) {
      f.push_back(where + ": golden has " + std::to_string(g[r].size()) + " cells, now " +
                  std::to_string(n[r].size()));
      continue;
    }
    for (std::size_t c = 0; c < g[r].size(); ++c) {
      double a = 0, b = 0;
      const bool numbers = parse_number(g[r][c], a) && parse_number(n[r][c], b);
      if (numbers ? !close(a, b) : g[r][c] != n[r][c])
        f.push_back(where + " cell " + std::to_string(c + 1) + ": golden '" + g[r][c] + "', now '" +
                    n[r][c] + "'");
    }
  }
}

Findings compare_file(const fs::path& golden, const fs::path& now) {
  Findings f;
  const std::string g = slurp(golden), n = slurp(now);
  const auto ext = golden.extension();
  if (ext == ".json") {
    try {
      compare_json(nlohmann::json::parse(g), nlohmann::json::parse(n), "", f);
    } catch (const nlohmann::json::parse_error& e) {
      f.push_back(std::string("not JSON: ") + e.what());
    }
  } else if (ext == ".csv") {
    compare_csv(g, n, f);
  } else if (g != n) {
    f.push_back("text differs");
  }
  return f;
}

void print_diff(const fs::path& golden, const fs::path& now, const std::string& rel) {
  const std::string cmd = "diff -u --label " + shell_quote("golden/" + rel) + " --label " +
                          shell_quote("now/" + rel) + " " + shell_quote(golden.string()) + " " +
                          shell_quote(now.string()) + " | head -n " + std::to_string(kMaxDiffLines);
  std::cout.flush();
  if (std::system(cmd.c_str()) == -1) std::cout << "(diff could not be run)\n";
}

bool compare_trees(const fs::path& golden, const fs::path& now) {
  const auto g = files_under(golden), n = files_under(now);
  bool ok = true;
  for (const auto& rel : g)
    if (!n.count(rel)) {
      std::cout << "FAIL " << rel << ": in the golden files, not written now\n";
      ok = false;
    }
  for (const auto& rel : n)
    if (!g.count(rel)) {
      std::cout << "FAIL " << rel << ": written now, not in the golden files\n";
      ok = false;
    }
  for (const auto& rel : g) {
    if (!n.count(rel)) continue;
    const auto f = compare_file(golden / rel, now / rel);
    if (f.empty()) continue;
    ok = false;
    std::cout << "FAIL " << rel << " (" << f.size() << " difference" << (f.size() > 1 ? "s" : "")
              << ")\n";
    for (std::size_t i = 0; i < f.size() && i < kMaxReportedValues; ++i)
      std::cout << "  " << f[i] << "\n";
    print_diff(golden / rel, now / rel, rel);
  }
  return ok;
}

fs::path make_temp_root() {
  std::string pattern = (fs::temp_directory_path() / "rxtrain_golden_XXXXXX").string();
  if (!::mkdtemp(pattern.data())) throw std::runtime_error("cannot make a temporary folder");
  return pattern;
}

}  // namespace

int main(int argc, char** argv) {
  bool update = false;
  fs::path source = RXTRAIN_SOURCE_DIR, binary = RXTRAIN_BINARY;
  for (int i = 1; i < argc; ++i) {
    const std::string a = argv[i];
    if (a == "--update")
      update = true;
    else if (a == "--binary" && i + 1 < argc)
      binary = argv[++i];
    else {
      std::cerr << "usage: cli_golden [--update] [--binary PATH]\n";
      return 2;
    }
  }
  const fs::path cli = source / "tests" / "cli", golden = cli / "golden";
  try {
    const auto commands = read_commands(cli / "commands.txt");
    const fs::path now = make_temp_root();
    if (!run_all(commands, source, binary, now)) {
      std::cout << "outputs kept in " << now.string() << "\n";
      return 1;
    }
    if (update) {
      fs::remove_all(golden);
      fs::copy(now, golden, fs::copy_options::recursive);
      fs::remove_all(now);
      std::cout << "wrote " << files_under(golden).size() << " golden files of " << commands.size()
                << " commands to " << golden.string() << "\n";
      return 0;
    }
    if (!compare_trees(golden, now)) {
      std::cout << "outputs kept in " << now.string()
                << "\nIf the change is right, run tools/update-golden and say why in the commit "
                   "(tests/cli/README.md).\n";
      return 1;
    }
    fs::remove_all(now);
    std::cout << commands.size() << " commands, " << files_under(golden).size()
              << " golden files: all equal\n";
    return 0;
  } catch (const std::exception& e) {
    std::cerr << "cli_golden: " << e.what() << "\n";
    return 2;
  }
}
