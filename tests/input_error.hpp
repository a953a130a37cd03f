// The message of the InputError `f` throws; fails the test when it throws
// none. Shared by the tests of bad input.
#pragma once

#include <catch2/catch.hpp>
#include <functional>
#include <string>

#include "rxtrain/base/error.hpp"

namespace rxtrain::test {

inline std::string input_error(const std::function<void()>& f) {
  try {
    f();
  } catch (const InputError& e) {
    return e.what();
  }
  FAIL("no InputError");
  return "";
}

}  // namespace rxtrain::test
