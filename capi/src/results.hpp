// Helpers shared by the analysis entry points of the C ABI. Internal to liblode.
#pragma once

#include "boundary.hpp"

#include <string>
#include <vector>

namespace lode::capi {

inline std::string join_lines(const std::vector<std::string>& lines) {
  std::string text;
  for (const auto& line : lines) {
    if (!text.empty()) text += '\n';
    text += line;
  }
  return text;
}

// A part of a result that may be missing, with the status and reason to report when asked for.
struct Unavailable {
  int status = LODE_OK;
  std::string reason;
  void require() const {
    if (status != LODE_OK) fail(status, reason);
  }
};

// The C progress callback as the core's ProgressFn (nonzero from the callback cancels).
inline ProgressFn progress_of(lode_progress_fn fn, void* user) {
  if (fn == nullptr) return {};
  return [fn, user](std::int64_t done, std::int64_t total) { return fn(user, done, total) == 0; };
}

}  // namespace lode::capi
