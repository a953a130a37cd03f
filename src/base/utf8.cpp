#include "rxtrain/base/utf8.hpp"

#include <fmt/format.h>

namespace rxtrain {

std::size_t utf8_length(std::string_view text, std::size_t i) {
  const auto byte = [&](std::size_t k) -> unsigned {
    return i + k < text.size() ? static_cast<unsigned char>(text[i + k]) : 0x100u;
  };
  const auto tail = [&](std::size_t k, unsigned lo = 0x80, unsigned hi = 0xBF) {
    const unsigned b = byte(k);
    return b >= lo && b <= hi;
  };
  const unsigned b0 = byte(0);
  if (b0 < 0x80) return 1;
  if (b0 >= 0xC2 && b0 <= 0xDF) return tail(1) ? 2 : 0;
  if (b0 == 0xE0) return tail(1, 0xA0, 0xBF) && tail(2) ? 3 : 0;
  if ((b0 >= 0xE1 && b0 <= 0xEC) || b0 == 0xEE || b0 == 0xEF) return tail(1) && tail(2) ? 3 : 0;
  if (b0 == 0xED) return tail(1, 0x80, 0x9F) && tail(2) ? 3 : 0;
  if (b0 == 0xF0) return tail(1, 0x90, 0xBF) && tail(2) && tail(3) ? 4 : 0;
  if (b0 >= 0xF1 && b0 <= 0xF3) return tail(1) && tail(2) && tail(3) ? 4 : 0;
  if (b0 == 0xF4) return tail(1, 0x80, 0x8F) && tail(2) && tail(3) ? 4 : 0;
  return 0;  // also 0x100: past the end
}

std::string quoted_character(std::string_view text, std::size_t i) {
  const std::size_t n = utf8_length(text, i);
  if (n == 0)
    return i < text.size() ? fmt::format("byte 0x{:02X}", static_cast<unsigned char>(text[i]))
                           : std::string("the end of the text");
  const auto b0 = static_cast<unsigned char>(text[i]);
  if (n == 1 && (b0 < 0x20 || b0 == 0x7F)) return fmt::format("U+{:04X}", b0);
  if (n == 2 && b0 == 0xC2 && static_cast<unsigned char>(text[i + 1]) < 0xA0)
    return fmt::format("U+{:04X}", static_cast<unsigned char>(text[i + 1]));  // C1 controls
  return fmt::format("'{}'", text.substr(i, n));
}

}  // namespace rxtrain
