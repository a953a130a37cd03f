// Hostile input and the limits of the case loader (each refused with exit 2
// and a message naming the limit), the result guard (no NaN or Inf reaches
// an output) and all-or-nothing output. Large inputs are generated here at
// run time, not committed. The committed small ones are
// tests/bad_cases/60-* and up.
#include "rxtrain/base/input_limits.hpp"

#include <fmt/format.h>
#include <unistd.h>

#include <catch2/catch.hpp>
#include <chrono>
#include <cmath>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <limits>
#include <string>

#include "run_command.hpp"
#include "rxtrain/analysis/result_guard.hpp"
#include "rxtrain/base/units.hpp"
#include "rxtrain/case/case.hpp"
#include "rxtrain/flowsheet/train.hpp"
#include "rxtrain/report/atomic_file.hpp"

using namespace rxtrain;

namespace {

// A valid small case; `species`, `reactions` replace those sections.
std::string small_case(const std::string& species = "[{id: A}, {id: B}]",
                       const std::string& reactions =
                           "[{id: r1, equation: A => B, rate: {A: 0.1 1/s, Ea: 0 J/mol}, "
                           "dH: 0 J/mol}]",
                       const std::string& volume = "1 m3") {
  return fmt::format(
      "title: limits (invented data)\n"
      "species: {}\n"
      "reactions: {}\n"
      "feed: {{T: 500 K, P: 1 bar, flows: {{A: 1 mol/s}}}}\n"
      "key: A\n"
      "train:\n"
      "  - {{type: pfr, id: R1, volume: {}, heat: isothermal}}\n",
      species, reactions, volume);
}

// The InputError message of loading `text`, or "" when it loads.
std::string refusal(const std::string& text) {
  const UnitParser units;
  try {
    load_case_from_string(text, "x.yaml", units);
  } catch (const InputError& e) {
    return e.what();
  }
  return "";
}

std::filesystem::path scratch(const std::string& name) {
  auto dir = std::filesystem::temp_directory_path() /
             fmt::format("rxtrain-limits-{}-{}", name, ::getpid());
  std::filesystem::remove_all(dir);
  std::filesystem::create_directories(dir);
  return dir;
}

void write(const std::filesystem::path& p, const std::string& text) {
  std::ofstream(p, std::ios::binary) << text;
}

}  // namespace

TEST_CASE("the small valid case loads (the base of every limit test)", "[limits]") {
  CHECK(refusal(small_case()).empty());
}

TEST_CASE("file size limit: above 10 MiB is refused, from text and through the CLI", "[limits]") {
  // A valid case padded with a comment past 10 MiB.
  std::string text = small_case() + "# " + std::string(10u * 1024u * 1024u, 'x') + "\n";
  CHECK_THAT(refusal(text), Catch::Contains("limit is 10485760 bytes"));
  const auto dir = scratch("size");
  write(dir / "big.yaml", text);
  const auto r = test::run_rxtrain("check '" + (dir / "big.yaml").string() + "'");
  CHECK(r.exit_code == 2);
  CHECK_THAT(r.err, Catch::Contains("10485760"));
  std::filesystem::remove_all(dir);
}

TEST_CASE("species limit 1000 and reaction limit 5000", "[limits]") {
  std::string species = "[";
  for (int i = 0; i < 1001; ++i) species += fmt::format("{}{{id: S{}}}", i ? ", " : "", i);
  species += "]";
  CHECK_THAT(refusal(small_case(species)),
             Catch::Contains("too many species: 1001 (the limit is 1000)"));
  std::string reactions = "[";
  for (int i = 0; i < 5001; ++i)
    reactions += fmt::format("{}{{id: r{}, equation: A => B, rate: {{A: 1 1/s, Ea: 0}}, dH: 0}}",
                             i ? ", " : "", i);
  reactions += "]";
  CHECK_THAT(refusal(small_case("[{id: A}, {id: B}]", reactions)),
             Catch::Contains("too many reactions: 5001 (the limit is 5000)"));
}

TEST_CASE("nesting depth limit 64: refused before yaml-cpp recurses", "[limits]") {
  // 64 levels pass the scan; 65 do not. A million levels must be refused
  // quickly, without a stack overflow inside the parser.
  auto flow = [](int n) {
    return "x: " + std::string(n - 1, '[') + "1" + std::string(n - 1, ']') + "\n";
  };
  CHECK_NOTHROW(check_text_limits(flow(64), "d.yaml"));
  CHECK_THROWS_WITH(check_text_limits(flow(65), "d.yaml"),
                    Catch::Contains("d.yaml:1:") && Catch::Contains("nesting depth limit"));
  auto block = [](int n) {
    std::string t;
    for (int i = 0; i < n; ++i) t += std::string(2 * i, ' ') + "k:\n";
    return t;
  };
  CHECK_NOTHROW(check_text_limits(block(64), "d.yaml"));
  CHECK_THROWS_WITH(check_text_limits(block(65), "d.yaml"), Catch::Contains("d.yaml:65:"));
  std::string dashes;
  for (int i = 0; i < 65; ++i) dashes += "- ";
  CHECK_THROWS_WITH(check_text_limits(dashes + "x\n", "d.yaml"), Catch::Contains("nesting depth"));
  const auto t0 = std::chrono::steady_clock::now();
  CHECK_THAT(refusal(std::string(1000000, '[')), Catch::Contains("nesting depth limit"));
  CHECK_THAT(refusal("a: " + std::string(1000000, '{')), Catch::Contains("nesting depth limit"));
  CHECK(std::chrono::steady_clock::now() - t0 < std::chrono::seconds(20));
  // Brackets inside quotes, comments and block scalars are text, not nesting.
  const std::string deep_text = std::string(100, '[');
  CHECK_NOTHROW(check_text_limits("a: '" + deep_text + "'\nb: \"" + deep_text + "\"\n# " +
                                      deep_text + "\nc: |\n  " + deep_text + "\n",
                                  "d.yaml"));
}

TEST_CASE("alias node limit: billion laughs is refused in linear time", "[limits]") {
  // 40 levels of ten aliases each stand for 10^40 nodes.
  std::string text = "a0: &a0 [x, x, x, x, x, x, x, x, x, x]\n";
  for (int i = 1; i < 40; ++i)
    text += fmt::format(
        "a{0}: &a{0} [*a{1}, *a{1}, *a{1}, *a{1}, *a{1}, *a{1}, *a{1}, *a{1}, "
        "*a{1}, *a{1}]\n",
        i, i - 1);
  const auto t0 = std::chrono::steady_clock::now();
  CHECK_THAT(refusal(text), Catch::Contains("alias node limit exceeded"));
  CHECK(std::chrono::steady_clock::now() - t0 < std::chrono::seconds(20));
  // A few aliases of a small anchor are fine (and used by real files).
  const std::string ok = small_case("[{id: A, thermo: &t {cp: 100 J/mol/K}}, {id: B, thermo: *t}]");
  CHECK(refusal(ok).empty());
}

TEST_CASE("control characters are refused (YAML 1.2.2 section 5.1)", "[limits]") {
  // A NUL before a ',' hid the token start from the comma check and hung
  // yaml-cpp 0.7 (found by fuzzing; the input is a corpus seed).
  using namespace std::string_literals;
  const std::string bad[] = {"title: a\0b\n"s,    "title: a\x01\n"s, "\0,\n"s,
                             "title: \x1B[0m\n"s, "title: a\x7F\n"s, "title: \xC2\x9B\n"s};
  for (const auto& t : bad) {
    INFO(t);
    CHECK_THROWS_WITH(check_text_limits("a: 1\n" + t, "c.yaml"),
                      Catch::Contains("c.yaml:2:") && Catch::Contains("control character"));
  }
  CHECK_THROWS_WITH(check_text_limits("title: ab\x01\n", "c.yaml"),
                    Catch::StartsWith("c.yaml:1:10:") && Catch::Contains("U+0001"));
  // Tab, CR LF line ends and U+0085 (NEL) are YAML characters.
  CHECK_NOTHROW(check_text_limits("title:\tx\r\nb: \xC2\x85\n", "c.yaml"));
}

TEST_CASE("block scalars: text lines are skipped, a less indented line ends them", "[limits]") {
  // yaml-cpp 0.7 never returned from these (found by fuzzing): the ',' line
  // ends the block scalar and begins a token (YAML 1.2.2, 8.1.1.1).
  for (const char* t : {">\n  a\n , b\n", "|\n   a\n  ,\n", "a: |\n    x\n   ,\n", ">9\n  \n ,\n",
                        " >\n \"\n,\n"}) {
    INFO(t);
    CHECK_THROWS_WITH(check_text_limits(t, "b.yaml"),
                      Catch::Contains("b.yaml:3:") && Catch::Contains("','"));
  }
  // Only ':' or a comment may follow a quoted value on its line.
  for (const char* t : {"\"a\"5\n?\n", "'a' b\n", "x:\n  - \"a\"b\n"}) {
    INFO(t);
    CHECK_THROWS_WITH(check_text_limits(t, "b.yaml"), Catch::Contains("after a quoted value"));
  }
  CHECK_NOTHROW(check_text_limits(
      "\"a\": 1\n'b' : 2\nc: \"x\"  # note\nd: 'it''s'\ne: [\"a\"b]\nf: \"multi\n  line\"\n",
      "b.yaml"));
  // After a document marker the root node may follow on the same line.
  CHECK_THROWS_WITH(check_text_limits("a: 1\n--- ,\n", "b.yaml"), Catch::Contains("b.yaml:2:5:"));
  CHECK_THROWS_WITH(check_text_limits(">9\n \n >9\n \n--- ,\n", "b.yaml"),
                    Catch::Contains("b.yaml:5:5:"));
  CHECK_NOTHROW(check_text_limits("--- # a comment\ntitle: x\n---\ntitle: y\n", "b.yaml"));
  CHECK_THROWS_WITH(check_text_limits(">\n... ,\n", "b.yaml"), Catch::Contains("b.yaml:2:5:"));
  CHECK_NOTHROW(check_text_limits("title: x\n... # end\n", "b.yaml"));
  // At the root, column 0 ends a block scalar.
  CHECK_THROWS_WITH(check_text_limits(">\n,\n", "b.yaml"), Catch::Contains("b.yaml:2:1:"));
  // A leading empty line with more spaces than the first line of text.
  CHECK_THROWS_WITH(check_text_limits(">\n  \n ,\n", "b.yaml"),
                    Catch::StartsWith("b.yaml:3:2:") && Catch::Contains("leading empty line"));
  // Text that looks like YAML stays text inside the scalar; an indentation
  // indicator allows leading spaces; the scalar ends where the indent drops.
  CHECK_NOTHROW(check_text_limits(
      "notes: |\n  , a comma first\n\n    [more indented] # not a comment\n  back\nkey: 1\n",
      "b.yaml"));
  CHECK_NOTHROW(check_text_limits("notes: >2\n     \n   x\n  , y\nkey: 1\n", "b.yaml"));
  CHECK_THROWS_WITH(check_text_limits("notes: |\n  text\n, x\n", "b.yaml"),
                    Catch::Contains("b.yaml:3:1:"));
}

TEST_CASE("an alias that refers to its own node (a cycle) is refused", "[limits]") {
  CHECK_THAT(refusal("title: &t [a, *t]\n"), Catch::Contains("cycle"));
  CHECK_THAT(refusal("a: &m {b: *m}\n"), Catch::Contains("cycle"));
}

TEST_CASE("invalid UTF-8 is refused at the line and column of the first bad byte", "[limits]") {
  const std::string bad[] = {
      "title: caf\xE9\n",           // Latin-1 byte
      "title: \xC0\xAF\n",          // overlong "/"
      "title: \xED\xA0\x80\n",      // UTF-16 surrogate
      "title: \xF4\x90\x80\x80\n",  // above U+10FFFF
      "title: \xE2\x82\n",          // truncated sequence
      "title: \x80\n",              // stray continuation byte
  };
  for (const auto& t : bad) {
    INFO(t);
    CHECK_THROWS_WITH(check_text_limits("a: 1\n" + t, "u.yaml"),
                      Catch::Contains("u.yaml:2:") && Catch::Contains("not valid UTF-8"));
  }
  // Column counts characters: "é" (2 bytes) then the bad byte at column 10.
  CHECK_THROWS_WITH(check_text_limits("title: \xC3\xA9\xFF\n", "u.yaml"),
                    Catch::StartsWith("u.yaml:1:9:"));
  CHECK_NOTHROW(
      check_text_limits("title: r\xC3\xA9"
                        "acteur \xE2\x82\xAC \xF0\x9F\x98\x80\n",
                        "u.yaml"));
  CHECK_NOTHROW(check_text_limits("\xEF\xBB\xBFtitle: with BOM\n", "u.yaml"));
}

TEST_CASE("very long strings and numbers: a clear answer, never a crash", "[limits]") {
  // A 1 MB title is text and loads; a number with 100,000 digits overflows
  // to infinity and is refused as not finite.
  CHECK(refusal("title: " + std::string(1000000, 't') + "\n" +
                small_case().substr(small_case().find('\n') + 1))
            .empty());
  const std::string huge = "1" + std::string(100000, '0') + " m3";
  CHECK_THAT(
      refusal(small_case(
          "[{id: A}, {id: B}]",
          "[{id: r1, equation: A => B, rate: {A: 0.1 1/s, Ea: 0 J/mol}, dH: 0 J/mol}]", huge)),
      Catch::Contains("volume of stage R1"));
  const std::string long_id(100000, 'S');
  CHECK(refusal(small_case("[{id: A}, {id: B}, {id: " + long_id + "}]")).empty());
  // Duplicate keys are refused at the second one (see also bad case 34).
  CHECK_THAT(refusal("title: a\ntitle: b\n"), Catch::Contains("x.yaml:2:1: error: duplicate key"));
}

TEST_CASE("a ',' where a token begins is refused before yaml-cpp loops on it", "[limits]") {
  // yaml-cpp 0.7 never returns from these (found by fuzz_case_loader). In
  // block context YAML 1.2.2 (7.3, 8.2) allows no ',' where a value or key
  // begins, so each is refused at the ','.
  CHECK_THAT(refusal("'',"), Catch::Contains("x.yaml:1:3: error: YAML syntax error: ','"));
  CHECK_THAT(refusal("\"a\" , b"), Catch::Contains("x.yaml:1:5:"));
  CHECK_THAT(refusal("title: a\n---\n'x',\n"), Catch::Contains("x.yaml:3:4:"));
  CHECK_THAT(refusal("'a\n  b',\n"), Catch::Contains("x.yaml:2:5:"));
  // A second quoted value on the line is refused at its opening quote,
  // before the ',' (only ':' or a comment may follow a quoted value).
  CHECK_THAT(refusal("\"\"\"\","),
             Catch::Contains("x.yaml:1:3:") && Catch::Contains("after a quoted value"));
  CHECK_THAT(refusal("\"\" \"\","),
             Catch::Contains("x.yaml:1:4:") && Catch::Contains("after a quoted value"));
  CHECK_THAT(refusal("[a],"), Catch::Contains("x.yaml:1:4:"));
  CHECK_THAT(refusal("{a: 1} ,"), Catch::Contains("x.yaml:1:8:"));
  CHECK_THAT(refusal("&x 'a',"), Catch::Contains("x.yaml:1:7:"));
  CHECK_THAT(refusal("&x \"a\","), Catch::Contains("x.yaml:1:7:"));
  CHECK_THAT(refusal("'a''b',"), Catch::Contains("x.yaml:1:7:"));
  // Quotes, commas and brackets inside plain scalars, and commas inside
  // flow collections, are not that.
  const std::string rest = small_case().substr(small_case().find('\n') + 1);
  CHECK(refusal("title: Reactor 'R1', second pass (invented data)\n" + rest).empty());
  CHECK(refusal("title: Pentane [C5 isomerization, {invented data\n" + rest).empty());
  CHECK(refusal(small_case("[{id: 'A'}, {id: \"B\"}]")).empty());
  CHECK(refusal(small_case("[\n  {id: 'A'},\n  {id: B}\n]")).empty());
  CHECK(refusal(small_case("[{id: A}, &b {id: B}]")).empty());
}

TEST_CASE("tags, explicit keys, directives and reserved indicators are refused", "[limits]") {
  // A case file needs none of them; yaml-cpp 0.7 never returns on "! 5"
  // then "?" (found by fuzz_case_loader). '@' and '`' are reserved and
  // cannot start a plain scalar (YAML 1.2.2, 5.3).
  CHECK_THAT(refusal("! 5\n?\n"),
             Catch::Contains("x.yaml:1:1: error:") && Catch::Contains("tag ('!')"));
  CHECK_THAT(refusal("a: !!float 5\n"), Catch::Contains("x.yaml:1:4:") && Catch::Contains("tag"));
  CHECK_THAT(refusal("a: [1, !x 2]\n"), Catch::Contains("x.yaml:1:8:"));
  CHECK_THAT(refusal("a: [&q !t 1]\n"), Catch::Contains("x.yaml:1:8:"));
  CHECK_THAT(refusal("? a\n: b\n"),
             Catch::Contains("x.yaml:1:1:") && Catch::Contains("explicit key"));
  CHECK_THAT(refusal("- ? a\n"), Catch::Contains("x.yaml:1:3:"));
  CHECK_THAT(refusal("a: {? b}\n"), Catch::Contains("x.yaml:1:5:"));
  CHECK_THAT(refusal("a: ?\n"), Catch::Contains("x.yaml:1:4:"));
  CHECK_THAT(refusal("%YAML 1.2\n---\na: 1\n"),
             Catch::Contains("x.yaml:1:1:") && Catch::Contains("directive"));
  CHECK_THAT(refusal("a: @b\n"), Catch::Contains("x.yaml:1:4:") && Catch::Contains("reserved"));
  CHECK_THAT(refusal("a: [x, `b]\n"), Catch::Contains("x.yaml:1:8:"));
  // The same characters inside text are text.
  const std::string rest = small_case().substr(small_case().find('\n') + 1);
  CHECK(refusal("title: What % is hot? Yes! @2x `q` (invented data)\n" + rest).empty());
  CHECK(refusal("title: '!quoted ? %'\n" + rest).empty());
  CHECK(refusal("title: \"@a\"\n" + rest).empty());
  CHECK(refusal("title: >\n  ! not a tag\n  ? not a key\n" + rest).empty());
  CHECK(refusal(small_case("[{id: A}, {id: B, name: 50 % x}]")).empty());
}

TEST_CASE("a line that continues a plain scalar is text, quotes and all", "[limits]") {
  // yaml-cpp 0.7 reads ' "' after '&> e' as more of the plain scalar and
  // never returns on the ',' that starts the next line (found by
  // fuzz_case_loader); YAML 1.2.2, 7.3.3 reads it the same way.
  CHECK_THAT(refusal("&> e\n \"\n,"),
             Catch::Contains("x.yaml:3:1: error:") && Catch::Contains("','"));
  CHECK_THAT(refusal("title: a\n  'b\n,\n"), Catch::Contains("x.yaml:3:1:"));
  // A line indented no further than the scalar's mapping begins a token.
  CHECK_THAT(refusal(" : p\n\"\",\n"), Catch::Contains("x.yaml:2:3:"));
  CHECK_THAT(refusal("a:\n  b: c\n  'd',\n"), Catch::Contains("x.yaml:3:6:"));
  // A wrapped title with quotes and commas on its second line loads.
  const std::string rest = small_case().substr(small_case().find('\n') + 1);
  CHECK(refusal("title: Pentane isomerization\n  \"two beds\", invented data\n" + rest).empty());
  CHECK(refusal("title: a\n  [b, c] d\n" + rest).empty());
  // A comment ends the plain scalar: a quote after it begins a token.
  CHECK(refusal("title: a\n# note\n" + rest).empty());
  CHECK_THAT(refusal("a: b\n# c\n'x',\n"), Catch::Contains("x.yaml:3:4:"));
}

TEST_CASE("the parser's event budget stops every yaml-cpp hang found so far", "[limits]") {
  // Each regression input made yaml-cpp 0.7 loop forever (found by
  // fuzz_case_loader). The pre-parse scan refuses each with a specific
  // message; here the budget alone, without that scan, must stop each.
  namespace fs = std::filesystem;
  int n = 0;
  for (const auto& e :
       fs::directory_iterator(std::string(RXTRAIN_SOURCE_DIR) + "/tests/fuzz/corpus/case_loader")) {
    if (e.path().filename().string().rfind("regression-", 0) != 0) continue;
    std::ifstream in(e.path(), std::ios::binary);
    const std::string text((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
    INFO(e.path().filename().string());
    CHECK_THROWS_WITH(check_parser_finishes(text, "x.yaml"),
                      Catch::Contains("x.yaml:") && Catch::Contains("did not finish"));
    ++n;
  }
  CHECK(n >= 15);
  // Valid files finish well inside the budget, the demo cases among them.
  for (const auto& e : fs::directory_iterator(std::string(RXTRAIN_SOURCE_DIR) + "/cases")) {
    std::ifstream in(e.path(), std::ios::binary);
    const std::string text((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
    CHECK_NOTHROW(check_parser_finishes(text, e.path().string()));
  }
  // The densest valid YAML: about 2 events per byte.
  std::string dense;
  for (int i = 0; i < 1000; ++i) dense += "- {: }\n";
  CHECK_NOTHROW(check_parser_finishes(dense, "x.yaml"));
  std::string dashes;
  for (int i = 0; i < 1000; ++i) dashes += "-\n";
  CHECK_NOTHROW(check_parser_finishes(dashes, "x.yaml"));
  // A syntax error keeps its position.
  CHECK_THROWS_WITH(check_parser_finishes("a: [1, 2\n", "x.yaml"),
                    Catch::Contains("x.yaml:") && Catch::Contains("YAML syntax error"));
}

TEST_CASE("check_finite names the stage and the field of a NaN or Inf", "[limits]") {
  const UnitParser units;
  const Case c = load_case_from_string(small_case(), "x.yaml", units);
  TrainResult r = run_train(c);
  CHECK_NOTHROW(check_finite(r));
  TrainResult bad = r;
  bad.stages[0].profile[1].T = std::numeric_limits<double>::quiet_NaN();
  CHECK_THROWS_WITH(check_finite(bad), Catch::Contains("stage R1") &&
                                           Catch::Contains("profile point 2") &&
                                           Catch::Contains("T = NaN"));
  bad = r;
  bad.stages[0].profile[2].F[0] = std::numeric_limits<double>::quiet_NaN();
  CHECK_THROWS_WITH(check_finite(bad), Catch::Contains("profile point 3 (V = ") &&
                                           Catch::Contains("m3) flow of A = NaN"));
  bad = r;
  bad.stages[0].outlet.F[1] = std::numeric_limits<double>::infinity();
  CHECK_THROWS_WITH(check_finite(bad), Catch::Contains("outlet flow of B = +Inf"));
  bad = r;
  bad.conversion = -std::numeric_limits<double>::infinity();
  CHECK_THROWS_WITH(check_finite(bad), Catch::Contains("train outlet, conversion = -Inf"));
  bad = r;
  bad.stages[0].duty = std::nan("");
  CHECK_THROWS_AS(check_finite(bad), SolverError);
}

TEST_CASE("output: the case file is protected, and a failure leaves nothing behind", "[limits]") {
  const auto dir = scratch("out");
  const auto input = dir / "case.yaml";
  write(input, small_case());
  {
    OutputSet out;
    out.protect(input);
    CHECK_THROWS_AS(out.add(input, "{}"), InputError);
    CHECK_THROWS_AS(out.add(dir / "." / "case.yaml", "{}"), InputError);
    CHECK_NOTHROW(out.add(dir / "other.json", "{}"));
  }
  // Through the command line: exit 2, the case file unchanged.
  const auto before = small_case();
  auto r = test::run_rxtrain("run '" + input.string() + "' --json '" + input.string() + "'");
  CHECK(r.exit_code == 2);
  CHECK_THAT(r.err, Catch::Contains("case file itself"));
  {
    std::ifstream in(input);
    const std::string after((std::istreambuf_iterator<char>(in)), std::istreambuf_iterator<char>());
    CHECK(after == before);
  }
  // A run that fails after a partial write: the first file is written to
  // its temporary, the second cannot be (its folder is a file), so nothing
  // is committed; the old output stays untouched and no temporary is left.
  write(dir / "result.json", "old");
  write(dir / "blocker", "a file where a folder is needed");
  {
    OutputSet out;
    out.add(dir / "result.json", "new");
    CHECK_THROWS_AS(out.add(dir / "blocker" / "stages.csv", "x"), OutputError);
  }
  std::size_t files = 0;
  for (const auto& e : std::filesystem::directory_iterator(dir)) {
    INFO(e.path().string());
    CHECK(e.path().filename().string().find(".tmp") == std::string::npos);
    ++files;
  }
  CHECK(files == 3);  // case.yaml, result.json, blocker (other.json was never committed)
  std::ifstream old(dir / "result.json");
  std::string content;
  std::getline(old, content);
  CHECK(content == "old");
  std::filesystem::remove_all(dir);
}
