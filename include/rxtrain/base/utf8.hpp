// UTF-8 as the case files, messages and reports hold it.
#pragma once

#include <cstddef>
#include <string>
#include <string_view>

namespace rxtrain {

// Length of the well-formed UTF-8 sequence at text[i] (RFC 3629, Table 3-7
// of the Unicode Standard: no overlongs, no surrogates, nothing above
// U+10FFFF), or 0 when it is not one (or i is past the end).
std::size_t utf8_length(std::string_view text, std::size_t i);

// The character at text[i] as a message quotes it: the whole UTF-8
// sequence (never one byte cut out of it), "U+XXXX" for a control
// character, "byte 0xNN" for a byte that starts no character.
std::string quoted_character(std::string_view text, std::size_t i);

}  // namespace rxtrain
