// The C boundary's machinery: the thread-local last error, the guard that turns every exception
// into a status code, checks of caller arguments, reading versioned option structs, and writing
// results into caller-owned buffers. Internal to liblode (hidden symbols).
#pragma once

#include "lode.h"
#include "lode/common.hpp"

#include <fmt/format.h>

#include <cstddef>
#include <cstring>
#include <new>
#include <string>
#include <type_traits>

namespace lode::capi {

// A failure detected at the boundary itself (bad pointer, size, key), carrying its status code.
struct BoundaryError {
  int status;
  std::string message;
};

void set_last_error(int status, const char* message) noexcept;
void clear_last_error() noexcept;
const char* last_error() noexcept;
int status_of(ErrorCode code) noexcept;

[[noreturn]] inline void fail(int status, std::string message) { throw BoundaryError{status, std::move(message)}; }

// Runs `body` (returning void) and maps every exception to a status with the message kept for
// lode_error_message(). Nothing escapes.
template <class Body>
int guarded(Body&& body) noexcept {
  clear_last_error();
  try {
    body();
    return LODE_OK;
  } catch (const BoundaryError& e) {
    set_last_error(e.status, e.message.c_str());
    return e.status;
  } catch (const Error& e) {
    const int status = status_of(e.code());
    set_last_error(status, e.what());
    return status;
  } catch (const std::bad_alloc&) {
    set_last_error(LODE_E_NOMEM, "out of memory");
    return LODE_E_NOMEM;
  } catch (const std::exception& e) {
    set_last_error(LODE_E_INTERNAL, e.what());
    return LODE_E_INTERNAL;
  } catch (...) {
    set_last_error(LODE_E_INTERNAL, "an unknown internal error");
    return LODE_E_INTERNAL;
  }
}

template <class T>
void require_pointer(const T* p, const char* name) {
  if (p == nullptr) fail(LODE_E_INVALID_ARGUMENT, fmt::format("argument '{}' is NULL", name));
}

// Reads a caller's matrix given with strides into an Eigen matrix (a copy). Checks the sizes and
// that rows * cols and the largest offset fit in memory arithmetic.
Matrix read_matrix(const double* values, int64_t rows, int64_t cols, int64_t row_stride, int64_t col_stride,
                   const char* what);

// Writes a matrix row-major into a caller's buffer under the size-query convention of lode.h.
void write_matrix(const Matrix& m, double* out, std::size_t capacity, int64_t* rows, int64_t* cols);
// Writes text under the same convention.
void write_text(const std::string& text, char* out, std::size_t capacity, std::size_t* length);

// Options: copy the caller's struct field by field into a full struct holding the defaults.
// `OPTION_FIELD(full, caller, name)` takes the field when it lies wholly within caller->struct_size.
template <class T>
void check_options_size(const T* caller, const char* type_name) {
  if (caller->struct_size < sizeof(std::size_t))
    fail(LODE_E_INVALID_ARGUMENT,
         fmt::format("{}.struct_size is {}: fill the struct with {}_init(&opts, sizeof opts) first", type_name,
                     caller->struct_size, type_name));
  if (caller->struct_size > sizeof(T)) {
    // Built against a newer header: accept only if every field this library does not know is zero.
    const unsigned char* bytes = reinterpret_cast<const unsigned char*>(caller);
    for (std::size_t k = sizeof(T); k < caller->struct_size; ++k)
      if (bytes[k] != 0)
        fail(LODE_E_UNSUPPORTED,
             fmt::format("{} is {} bytes, this library knows {}: it sets fields of a newer Lode than this one "
                         "(library {})",
                         type_name, caller->struct_size, sizeof(T), lode::version()));
  }
}

#define LODE_OPTION_FIELD(full, caller, name)                                                   \
  do {                                                                                          \
    using OptionsType = std::remove_cv_t<std::remove_reference_t<decltype(full)>>;              \
    if ((caller)->struct_size >= offsetof(OptionsType, name) + sizeof((caller)->name)) (full).name = (caller)->name; \
  } while (0)

// Fills the defaults of an option struct under the init convention: zero the caller's bytes, write
// the fields that fit, record the caller's size.
template <class T>
void init_options(T* opts, std::size_t struct_size, const T& defaults, const char* type_name) {
  require_pointer(opts, "opts");
  if (struct_size < sizeof(std::size_t))
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("{}_init: struct_size {} is too small; pass sizeof(*opts)", type_name,
                                              struct_size));
  std::memset(static_cast<void*>(opts), 0, struct_size);
  std::memcpy(static_cast<void*>(opts), &defaults, struct_size < sizeof(T) ? struct_size : sizeof(T));
  opts->struct_size = struct_size;
}

// Casts a key to its name for messages.
std::string key_text(int key, const char* handle_kind);

}  // namespace lode::capi
