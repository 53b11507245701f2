// The message of the lode::Error a call throws, for tests of error wording.
#pragma once

#include "lode/common.hpp"

#include <string>

namespace lode::testing {

// What `f()` throws as lode::Error (its code into *code when given), or "(no error)".
template <class F>
std::string error_message(F&& f, ErrorCode* code = nullptr) {
  try {
    f();
  } catch (const Error& e) {
    if (code) *code = e.code();
    return e.what();
  }
  return "(no error)";
}

}  // namespace lode::testing
