#include "rxtrain/base/input_limits.hpp"

#include <fmt/format.h>
#include <yaml-cpp/eventhandler.h>
#include <yaml-cpp/yaml.h>

#include <algorithm>
#include <cstdint>
#include <map>
#include <optional>
#include <sstream>
#include <utility>
#include <vector>

#include "rxtrain/base/utf8.hpp"

namespace rxtrain {

namespace {

// ---- UTF-8 ---------------------------------------------------------------

void check_utf8(std::string_view text, const std::string& name) {
  int line = 1, column = 1;  // column counts characters, as editors do
  for (std::size_t i = 0; i < text.size();) {
    const std::size_t len = utf8_length(text, i);
    if (len == 0)
      throw InputError({name, line, column},
                       fmt::format("case file is not valid UTF-8: byte 0x{:02X} cannot start or "
                                   "continue a character here; save the file as UTF-8",
                                   static_cast<unsigned char>(text[i])));
    // YAML's character set (YAML 1.2.2, section 5.1, c-printable) has no
    // control characters but tab, line feed and carriage return (and U+0085).
    // yaml-cpp 0.7 does not refuse them, and a NUL before a ',' hides the
    // token start from the pre-parse check below and hangs its parser.
    const unsigned b0 = static_cast<unsigned char>(text[i]);
    const unsigned b1 = len == 2 ? static_cast<unsigned char>(text[i + 1]) : 0u;
    const bool c0 = len == 1 && (b0 < 0x20 || b0 == 0x7F) && b0 != '\t' && b0 != '\n' && b0 != '\r';
    const bool c1 = len == 2 && b0 == 0xC2 && b1 >= 0x80 && b1 <= 0x9F && b1 != 0x85;
    if (c0 || c1)
      throw InputError({name, line, column},
                       fmt::format("case file has a control character (U+{:04X}) here; YAML "
                                   "allows only tab, line feed and carriage return; remove it "
                                   "(was the file saved as UTF-16, or is it binary?)",
                                   c0 ? b0 : b1));
    if (text[i] == '\n') {
      ++line;
      column = 1;
    } else {
      ++column;
    }
    i += len;
  }
}

// ---- nesting depth by a scan of the text -----------------------------------

// One open block collection: the column it is indented to and whether it
// is a list ("- " items) or a mapping.
struct Level {
  std::size_t column;
  bool list;
};

bool is_space(char c) { return c == ' ' || c == '\t'; }

// Block and flow nesting are tracked together. Block levels: a stack of
// indentation columns (a "- " item opens a list level, the content after it
// a further level; a list at the same column as its parent key still counts
// one deeper). Flow levels: unclosed [ and { outside quotes and comments.
// Block scalars (| and >) and quoted text are skipped.
class DepthScan {
 public:
  DepthScan(const std::string& name, int max_depth) : name_(name), max_(max_depth) {}

  void run(std::string_view text) {
    std::size_t start = 0;
    int line = 1;
    while (start <= text.size()) {
      std::size_t end = text.find('\n', start);
      if (end == std::string_view::npos) end = text.size();
      std::string_view l = text.substr(start, end - start);
      if (!l.empty() && l.back() == '\r') l.remove_suffix(1);
      scan_line(l, line);
      if (end == text.size()) break;
      start = end + 1;
      ++line;
    }
  }

 private:
  void check(int line, std::size_t column) const {
    const int depth = static_cast<int>(levels_.size()) + flow_;
    if (depth > max_)
      throw InputError({name_, line, static_cast<int>(column) + 1},
                       fmt::format("nesting depth limit exceeded: mappings and lists are nested "
                                   "more than {} deep here",
                                   max_));
  }

  void open_block(std::size_t column, bool list) {
    // Close deeper levels; a list item at its parent key's column nests.
    while (!levels_.empty()) {
      const Level& top = levels_.back();
      if (top.column > column || (top.column == column && top.list && !list)) {
        levels_.pop_back();
        continue;
      }
      break;
    }
    if (!levels_.empty() && levels_.back().column == column && levels_.back().list == list) return;
    levels_.push_back({column, list});
  }

  void scan_line(std::string_view l, int line) {
    std::size_t i = 0;
    while (i < l.size() && is_space(l[i])) ++i;
    const std::size_t indent = i;
    const bool blank = i == l.size() || l[i] == '#';
    bool continuation = false;  // of a multi-line plain scalar
    if (block_scalar_indent_) {
      // Inside a block scalar every line is text (a '#' too) until one is
      // indented less than its content (YAML 1.2.2, 8.1.1.1).
      const bool empty = i == l.size();
      if (empty) {
        if (!block_scalar_content_) leading_spaces_ = std::max(leading_spaces_, indent);
        return;
      }
      // At a document's root (no enclosing collection) the text may start
      // at any column from 1, even the header's (" >", " \"", "," hung
      // yaml-cpp); column 0 ends it (">", "," hung it too).
      if (!block_scalar_content_ &&
          (indent > *block_scalar_indent_ || (block_scalar_root_ && indent >= 1))) {
        // The first line of text fixes the content indentation (without an
        // indentation indicator); a leading empty line may not have more
        // spaces than it. yaml-cpp 0.7 takes such a line's spaces as the
        // indentation instead and, on a ',' line after it, never returns
        // (found by fuzz_case_loader: ">", "  ", " ,").
        if (block_scalar_auto_ && leading_spaces_ > indent)
          throw InputError({name_, line, static_cast<int>(indent) + 1},
                           fmt::format("YAML syntax error: a block scalar's leading empty line has "
                                       "{} spaces, more than its first line of text ({}); remove "
                                       "the spaces from the empty line",
                                       leading_spaces_, indent));
        block_scalar_content_ = indent;
        return;
      }
      if (block_scalar_content_ && indent >= *block_scalar_content_) return;
      block_scalar_indent_.reset();
      block_scalar_content_.reset();
    }
    if (!in_quote_ && flow_ == 0 && !blank) {
      if (l.substr(i).starts_with("...") && (i + 3 == l.size() || is_space(l[i + 3]))) {
        // Only a comment may follow a document end marker ("... ," hung
        // yaml-cpp 0.7, found by fuzzing).
        std::size_t k = i + 3;
        while (k < l.size() && is_space(l[k])) ++k;
        if (k < l.size() && l[k] != '#')
          throw InputError({name_, line, static_cast<int>(k) + 1},
                           "YAML syntax error: only a comment may follow '...' on its line");
        levels_.clear();
        plain_open_ = false;
        return;
      }
      // "--- " may have the document's root node on the same line: scan it
      // ("--- ," hung yaml-cpp 0.7, found by fuzzing).
      if (l.substr(i).starts_with("---") && (i + 3 == l.size() || is_space(l[i + 3]))) {
        levels_.clear();
        plain_open_ = false;
        i += 3;
        while (i < l.size() && is_space(l[i])) ++i;
        if (i == l.size() || l[i] == '#') return;
      }
      // A line after an unfinished plain scalar that is neither a list item
      // nor a key continues it (YAML 1.2.2, 7.3.3): a quote or a bracket
      // there is text, as yaml-cpp reads it (it hung on '&> e', ' "', ',':
      // the ',' starts a token, found by fuzz_case_loader).
      // Only a line indented past the collection holding the scalar continues
      // it (' : p' then '"",' hung yaml-cpp: that line is a new token).
      continuation = plain_open_ && (levels_.empty() || indent > levels_.back().column);
      // Block indicators at the start of the line: "- ", one after the other
      // ("? " is refused, see refuse_unsupported).
      bool first = true;
      while (i < l.size() && (l[i] == '-' || l[i] == '?') &&
             (i + 1 == l.size() || is_space(l[i + 1]))) {
        refuse_unsupported(l, i, line);
        continuation = false;
        if (first)
          open_block(i, true);
        else
          levels_.push_back({i, true});
        first = false;
        check(line, i);
        ++i;
        while (i < l.size() && is_space(l[i])) ++i;
      }
      // YAML forbids a plain value starting with ',' outside [..] and {..}
      // (YAML 1.2.2, 7.3.3: ns-plain-first excludes the indicators), and
      // yaml-cpp 0.7 loops forever on one at a smaller indent than the block
      // before it (found by fuzz_case_loader): refuse it here.
      if (i < l.size() && l[i] == ',')
        throw InputError({name_, line, static_cast<int>(i) + 1},
                         "YAML syntax error: a value cannot start with ',' outside a flow list "
                         "[...] or mapping {...}");
      if (i < l.size() && l[i] != '#' && has_key(l.substr(i))) {
        continuation = false;
        if (first)
          open_block(i, false);
        else
          levels_.push_back({i, false});
        check(line, i);
      } else if (first && i < l.size() && l[i] != '#') {
        // A scalar line: closes deeper levels, opens none.
        while (!levels_.empty() && levels_.back().column > i) levels_.pop_back();
      }
    }
    scan_flow(l, i, line, indent, continuation);
  }

  // A case file is plain data: mappings, lists, scalars, comments, anchors
  // and aliases. Tags ("!x"), explicit keys ("? ") and directives ("%...")
  // have no use in one, and yaml-cpp 0.7 never returns on some files that
  // use them ("! 5" then "?", found by fuzz_case_loader), so they are
  // refused where a token begins, as are the reserved indicators '@' and
  // '`', which cannot start a plain scalar (YAML 1.2.2, 5.3).
  void refuse_unsupported(std::string_view l, std::size_t i, int line) const {
    const char c = l[i];
    const bool ends =
        i + 1 == l.size() || is_space(l[i + 1]) || (flow_ > 0 && is_flow_indicator(l[i + 1]));
    const char* what = nullptr;
    if (c == '!')
      what = "a YAML tag ('!') is not allowed in a case file; remove it";
    else if (c == '?' && ends)
      what = "an explicit key ('? ') is not allowed in a case file; write 'key: value'";
    else if (c == '%')
      what =
          "a YAML directive or a value starting with '%' is not allowed in a case file; "
          "quote the value";
    else if (c == '@' || c == '`')
      what = "a value cannot start with '@' or '`' (reserved in YAML); quote the value";
    if (what)
      throw InputError({name_, line, static_cast<int>(i) + 1},
                       fmt::format("YAML syntax error: {}", what));
  }

  // "key: ..." or "key:" at the start of the content (plain or quoted key).
  static bool has_key(std::string_view s) {
    std::size_t i = 0;
    if (!s.empty() && (s[0] == '"' || s[0] == '\'')) {
      const char q = s[0];
      i = 1;
      while (i < s.size() && s[i] != q) i += s[i] == '\\' && q == '"' ? 2 : 1;
      ++i;
      while (i < s.size() && is_space(s[i])) ++i;
      return i < s.size() && s[i] == ':' && (i + 1 == s.size() || is_space(s[i + 1]));
    }
    if (!s.empty() && (s[0] == '[' || s[0] == '{')) return false;
    for (; i < s.size(); ++i) {
      if (s[i] == '#' && i > 0 && is_space(s[i - 1])) return false;
      if (s[i] == ':' && (i + 1 == s.size() || is_space(s[i + 1]))) return true;
    }
    return false;
  }

  static bool is_flow_indicator(char c) {
    return c == ',' || c == '[' || c == ']' || c == '{' || c == '}';
  }

  // Flow brackets and quotes from position i on; notes a block scalar
  // header. Outside [..] and {..} it also follows where a token may begin
  // (`token_start`): at the start of the content, after ": ", and right
  // after a quoted scalar, a closed flow collection, an anchor, an alias or
  // a tag. There YAML allows no ',' (YAML 1.2.2, 7.3 and 8.2: it is a flow
  // indicator, and a plain scalar cannot start with one), and yaml-cpp 0.7
  // loops forever on one at a document's root ("'',", "[a],", "&x 'a',",
  // found by fuzz_case_loader), so each is refused before it parses. A ','
  // inside a plain scalar ("Reactor 'R1', second pass") is text.
  void scan_flow(std::string_view l, std::size_t i, int line, std::size_t indent,
                 bool continuation) {
    char last = ' ';
    char last_nonspace = 0;  // in flow context, on this line
    bool token_start = !continuation;
    bool plain = continuation;  // a block plain scalar is open
    after_quote_ = false;
    if (i == l.size()) return;  // an empty line neither ends nor starts a scalar
    for (; i < l.size(); ++i) {
      const char c = l[i];
      if (in_quote_) {
        if (c == '\\' && in_quote_ == '"') {
          ++i;
        } else if (c == in_quote_) {
          if (c == '\'' && i + 1 < l.size() && l[i + 1] == '\'') {
            ++i;  // '' inside '...'
          } else {
            in_quote_ = 0;
            token_start = flow_ == 0 && quote_opens_token_;
            after_quote_ = token_start;
          }
        }
        last = c;
        last_nonspace = c;
        continue;
      }
      if (c == '#' && is_space(last)) {
        plain = false;  // a comment ends a plain scalar
        break;
      }
      const bool block = flow_ == 0;
      if (after_quote_ && !is_space(c)) {
        // A quoted scalar that began a token in block context is a whole
        // node: only ':' (it was a key) or a comment may follow on its line
        // (YAML 1.2.2, 7.3). yaml-cpp 0.7 looped forever on '"a"5' then
        // '?' (found by fuzzing).
        after_quote_ = false;
        if (c != ':' && c != ',')
          throw InputError({name_, line, static_cast<int>(i) + 1},
                           "YAML syntax error: text after a quoted value on its line; only ':' "
                           "(after a quoted key) or a comment may follow the closing quote");
      }
      if (block && token_start) {
        if (is_space(c)) {
          last = c;
          continue;
        }
        if (c == ',')
          throw InputError({name_, line, static_cast<int>(i) + 1},
                           "YAML syntax error: ',' where a value or a key must begin, outside a "
                           "flow list [...] or mapping {...}");
        refuse_unsupported(l, i, line);
        if (c == '&' || c == '*') {
          // Anchor or alias: a name up to a space or a flow indicator.
          while (i + 1 < l.size() && !is_space(l[i + 1]) && !is_flow_indicator(l[i + 1])) ++i;
          last = l[i];
          continue;
        }
      }
      if (!block && !is_space(c)) {
        // Where a flow entry, key or value begins.
        if (last_nonspace == 0 || last_nonspace == '[' || last_nonspace == '{' ||
            last_nonspace == ',' || last_nonspace == ':') {
          refuse_unsupported(l, i, line);
          if (c == '&') {
            // An anchor's name; the node it names begins after it.
            while (i + 1 < l.size() && !is_space(l[i + 1]) && !is_flow_indicator(l[i + 1])) ++i;
            last = l[i];
            continue;
          }
        }
        last_nonspace = c;
      }
      if ((c == '"' || c == '\'') &&
          (block ? token_start
                 : is_space(last) || last == '[' || last == '{' || last == ',' || last == ':')) {
        in_quote_ = c;
        quote_opens_token_ = block;
      } else if ((c == '[' || c == '{') && (!block || token_start)) {
        ++flow_;
        check(line, i);
      } else if ((c == ']' || c == '}') && flow_ > 0) {
        --flow_;
        if (flow_ == 0) {
          token_start = true;
          last = c;
          continue;
        }
      } else if ((c == '|' || c == '>') && block && token_start) {
        // A block scalar header: "|", "|-", ">+2"... then only a comment.
        std::size_t k = i + 1;
        std::size_t indicator = 0;  // the indentation indicator, 0 when absent
        while (k < l.size() && (l[k] == '-' || l[k] == '+' || (l[k] >= '0' && l[k] <= '9'))) {
          if (l[k] >= '0' && l[k] <= '9') indicator = static_cast<std::size_t>(l[k] - '0');
          ++k;
        }
        while (k < l.size() && is_space(l[k])) ++k;
        if (k == l.size() || l[k] == '#') {
          block_scalar_indent_ = indent;
          block_scalar_auto_ = indicator == 0;
          block_scalar_root_ = levels_.empty();
          // With an indicator the text is indented that much past the parent
          // (the header line's indentation here, the larger of YAML's
          // readings at a document's root, so no shorter line is taken
          // for text: ">9" then " ," hung yaml-cpp 0.7, found by fuzzing).
          block_scalar_content_.reset();
          if (indicator > 0) block_scalar_content_ = indent + indicator;
          leading_spaces_ = 0;
          plain_open_ = false;
          return;
        }
      }
      // ": " (or ':' at the end) after a key starts the value's token; any
      // other character in block context is part of a plain scalar.
      if (block) {
        if (token_start && !is_space(c) && c != '"' && c != '\'' && c != '[' && c != '{')
          plain = true;
        token_start = c == ':' && (i + 1 == l.size() || is_space(l[i + 1]));
        if (token_start) plain = false;  // the plain text was a key
      }
      last = c;
    }
    plain_open_ = plain && flow_ == 0 && !in_quote_;
  }

  const std::string& name_;
  int max_;
  std::vector<Level> levels_;
  int flow_ = 0;
  char in_quote_ = 0;
  bool quote_opens_token_ = false;  // the open quote began a token in block context
  bool after_quote_ = false;        // such a quote has just closed on this line
  bool plain_open_ = false;         // the last text line ended inside a block plain scalar
  std::optional<std::size_t> block_scalar_indent_;   // the header line's indentation
  std::optional<std::size_t> block_scalar_content_;  // set by its first line of text
  bool block_scalar_auto_ = true;                    // no indentation indicator
  bool block_scalar_root_ = false;                   // the document's root node
  std::size_t leading_spaces_ = 0;                   // most spaces on a leading empty line
};

// ---- node count after alias expansion --------------------------------------

// Expanded size of every node of the parsed tree, each computed once: an
// alias shares its anchor's node, so a "billion laughs" file is counted in
// time linear in its text. Sizes saturate far above any limit.
class NodeCounter {
 public:
  explicit NodeCounter(const std::string& name) : name_(name) {}

  std::uint64_t count(const YAML::Node& n) {
    const YAML::Mark m = n.Mark();
    auto& bucket = memo_[{m.line, m.column}];
    for (const auto& e : bucket)
      if (e.node.is(n)) {
        if (!e.done)
          throw InputError({name_, m.line + 1, m.column + 1},
                           "an alias refers to a mapping or list that contains it (a cycle); "
                           "refer to an anchor only after its node is complete");
        return e.total;
      }
    ++unique_;
    const std::size_t slot = bucket.size();
    bucket.push_back({n, false, 1});
    std::uint64_t total = 1;
    if (n.IsMap()) {
      for (auto it = n.begin(); it != n.end(); ++it)
        total = add(add(total, count(it->first)), count(it->second));
    } else if (n.IsSequence()) {
      for (auto it = n.begin(); it != n.end(); ++it) total = add(total, count(*it));
    }
    // The bucket may have grown (and moved) while the children were counted.
    auto& done = memo_[{m.line, m.column}][slot];
    done.done = true;
    done.total = total;
    return total;
  }
  std::uint64_t unique() const { return unique_; }

 private:
  struct Entry {
    YAML::Node node;
    bool done;
    std::uint64_t total;
  };
  static std::uint64_t add(std::uint64_t a, std::uint64_t b) {
    constexpr std::uint64_t kCap = std::uint64_t{1} << 62;
    return std::min(kCap, a + b);
  }

  const std::string& name_;
  std::map<std::pair<int, int>, std::vector<Entry>> memo_;
  std::uint64_t unique_ = 0;
};

// ---- a bound on the parser's work ----------------------------------------

class EventBudget : public YAML::EventHandler {
 public:
  EventBudget(const std::string& name, std::size_t bytes)
      : name_(name), limit_(8 * bytes + 64), bytes_(bytes) {}

  void OnDocumentStart(const YAML::Mark& m) override { tick(m); }
  void OnDocumentEnd() override { tick(); }
  void OnNull(const YAML::Mark& m, YAML::anchor_t) override { tick(m); }
  void OnAlias(const YAML::Mark& m, YAML::anchor_t) override { tick(m); }
  void OnScalar(const YAML::Mark& m, const std::string&, YAML::anchor_t,
                const std::string&) override {
    tick(m);
  }
  void OnSequenceStart(const YAML::Mark& m, const std::string&, YAML::anchor_t,
                       YAML::EmitterStyle::value) override {
    tick(m);
  }
  void OnSequenceEnd() override { tick(); }
  void OnMapStart(const YAML::Mark& m, const std::string&, YAML::anchor_t,
                  YAML::EmitterStyle::value) override {
    tick(m);
  }
  void OnMapEnd() override { tick(); }

 private:
  void tick(const YAML::Mark& m) {
    if (!m.is_null()) last_ = m;
    tick();
  }
  void tick() {
    if (++events_ <= limit_) return;
    throw InputError({name_, last_.line + 1, last_.column + 1},
                     fmt::format("YAML syntax error: the YAML parser did not finish this file "
                                 "(more than {} nodes from {} bytes, last here); the file is "
                                 "malformed at or before this point",
                                 limit_, bytes_));
  }

  const std::string& name_;
  std::size_t limit_;
  std::size_t bytes_;
  std::size_t events_ = 0;
  YAML::Mark last_;
};

}  // namespace

void check_parser_finishes(const std::string& text, const std::string& name) {
  std::istringstream in(text);
  EventBudget budget(name, text.size());
  try {
    YAML::Parser parser(in);
    while (parser.HandleNextDocument(budget)) {
    }
  } catch (const YAML::Exception& e) {
    throw InputError({name, e.mark.line + 1, e.mark.column + 1}, "YAML syntax error: " + e.msg);
  }
}

void check_text_limits(std::string_view text, const std::string& name, const InputLimits& limits) {
  if (text.size() > limits.max_bytes)
    throw InputError({name, 0, 0},
                     fmt::format("file size limit exceeded: the case file is {} bytes; the limit "
                                 "is {} bytes ({} MiB)",
                                 text.size(), limits.max_bytes, limits.max_bytes >> 20));
  check_utf8(text, name);
  DepthScan(name, limits.max_depth).run(text);
}

void check_node_count(const YAML::Node& root, const std::string& name, const InputLimits& limits) {
  NodeCounter counter(name);
  const std::uint64_t expanded = counter.count(root);
  // The limit bounds what aliases add: a file without aliases is already
  // bounded by the size limit (and 5,000 reactions take more than 10,000
  // nodes), while a few lines of nested aliases can stand for billions.
  const std::uint64_t added = expanded - counter.unique();
  if (added > limits.max_nodes) {
    const YAML::Mark m = root.Mark();
    throw InputError({name, m.is_null() ? 0 : m.line + 1, m.is_null() ? 0 : m.column + 1},
                     fmt::format("alias node limit exceeded: expanding the aliases (*name) of the "
                                 "case adds {} nodes; the limit is {}",
                                 added >= (std::uint64_t{1} << 62) ? std::string("more than 4e18")
                                                                   : std::to_string(added),
                                 limits.max_nodes));
  }
}

}  // namespace rxtrain
