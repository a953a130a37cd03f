// Limits on a case file, checked before and just after YAML parsing so that
// a hostile or broken file is refused with a message instead of exhausting
// the stack or memory: size, UTF-8 validity and nesting depth on the raw
// text (yaml-cpp recurses per nesting level, so depth must be known before
// the text reaches it), and the nodes that alias expansion adds, on the
// parsed tree (counted with memoization, never by expanding the aliases).
// Every refusal is an InputError naming the limit.
#pragma once

#include <cstddef>
#include <string>
#include <string_view>

#include "rxtrain/base/error.hpp"

namespace YAML {
class Node;
}

namespace rxtrain {

struct InputLimits {
  std::size_t max_bytes = 10u * 1024u * 1024u;  // 10 MiB
  int max_depth = 64;                           // nested mappings and lists
  std::size_t max_nodes = 10000;                // added by expanding aliases
};

// Size, UTF-8 validity (the first bad byte is located by line and column)
// and nesting depth (a conservative scan: it may count a level more than
// yaml-cpp would build, never fewer). Throws InputError.
void check_text_limits(std::string_view text, const std::string& name,
                       const InputLimits& limits = {});

// Runs yaml-cpp's parser over the text once with a handler that only counts
// its events, and stops it (InputError) past 8 events per byte: no valid
// document comes near that (about 2 per byte at most: "{: }", "-\n"), while
// on some malformed files yaml-cpp 0.7 never returns and emits events
// without end (every such file found by fuzzing does). The parser is
// deterministic, so a file that passes here also finishes in YAML::Load.
// A YAML syntax error is an InputError at the parser's position.
void check_parser_finishes(const std::string& text, const std::string& name);

// Nodes the document gains when every alias is replaced by a copy of its
// anchor (expanded count minus parsed count), in time linear in the parsed
// (shared) tree. Also refuses an alias that refers to its own enclosing
// node (a cycle), which would make any walk of the tree endless. Throws
// InputError.
void check_node_count(const YAML::Node& root, const std::string& name,
                      const InputLimits& limits = {});

}  // namespace rxtrain
