// SHA-256 (FIPS 180-4) of a byte string, as 64 lowercase hex digits. The
// report's header names the case file by its digest so a reader can tell
// exactly which input produced it.
#pragma once

#include <string>
#include <string_view>

namespace rxtrain {

std::string sha256_hex(std::string_view data);

}  // namespace rxtrain
