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

// Numbers as the value getters give them: a yes/no as 1 or 0, a count as a double.
inline double flag(bool b) { return b ? 1.0 : 0.0; }
inline double number(Index n) { return static_cast<double>(n); }

// A list (indices, numbers, yes/no) as a column vector for the matrix getters.
template <class T>
Vector vector_of(const std::vector<T>& v) {
  Vector out(static_cast<Index>(v.size()));
  for (std::size_t k = 0; k < v.size(); ++k) out(static_cast<Index>(k)) = static_cast<double>(v[k]);
  return out;
}

// A part of a result that may be missing, with the status and reason to report when asked for.
struct Unavailable {
  int status = LODE_OK;
  std::string reason;
  void require() const {
    if (status != LODE_OK) fail(status, reason);
  }
};

// The shape of every lode_<handle>_compute: the guard, the input handle and the output pointer checked,
// *out cleared, and the handle that `make` returns (a std::unique_ptr) handed over only once everything
// has succeeded.
template <class In, class Out, class Make>
int compute_handle(const In* in, const char* in_name, Out** out, Make&& make) {
  return guarded([&] {
    require_pointer(in, in_name);
    require_pointer(out, "out");
    *out = nullptr;
    *out = make().release();
  });
}

// The C progress callback as the core's ProgressFn (nonzero from the callback cancels).
inline ProgressFn progress_of(lode_progress_fn fn, void* user) {
  if (fn == nullptr) return {};
  return [fn, user](std::int64_t done, std::int64_t total) { return fn(user, done, total) == 0; };
}

}  // namespace lode::capi
