#include "boundary.hpp"

#include <cstdio>
#include <limits>

namespace lode::capi {

namespace {
// The message of the most recent call on this thread. A fixed buffer as the fallback keeps
// set_last_error from failing when memory has run out.
thread_local std::string last_error_message;
thread_local char last_error_fallback[128];
thread_local bool using_fallback = false;
}  // namespace

void set_last_error(int, const char* message) noexcept {
  try {
    last_error_message.assign(message ? message : "");
    using_fallback = false;
  } catch (...) {
    std::snprintf(last_error_fallback, sizeof last_error_fallback, "%s", "out of memory (message lost)");
    using_fallback = true;
  }
}

void clear_last_error() noexcept {
  last_error_message.clear();
  using_fallback = false;
}

const char* last_error() noexcept { return using_fallback ? last_error_fallback : last_error_message.c_str(); }

int status_of(ErrorCode code) noexcept {
  switch (code) {
    case ErrorCode::invalid_argument: return LODE_E_INVALID_ARGUMENT;
    case ErrorCode::insufficient_data: return LODE_E_INSUFFICIENT_DATA;
    case ErrorCode::not_positive_definite: return LODE_E_NOT_POSITIVE_DEFINITE;
    case ErrorCode::too_many_factors: return LODE_E_TOO_MANY_FACTORS;
    case ErrorCode::not_converged: return LODE_E_NOT_CONVERGED;
    case ErrorCode::cancelled: return LODE_E_CANCELLED;
    case ErrorCode::internal: return LODE_E_INTERNAL;
  }
  return LODE_E_INTERNAL;
}

Matrix read_matrix(const double* values, int64_t rows, int64_t cols, int64_t row_stride, int64_t col_stride,
                   const char* what) {
  if (rows < 0 || cols < 0)
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("the {} has a negative size ({} x {})", what, rows, cols));
  if (rows == 0 || cols == 0)
    fail(LODE_E_INSUFFICIENT_DATA, fmt::format("the {} is empty ({} x {})", what, rows, cols));
  require_pointer(values, "values");
  if (row_stride < 1 || col_stride < 1)
    fail(LODE_E_INVALID_ARGUMENT,
         fmt::format("the strides of the {} must be positive (row_stride {}, col_stride {})", what, row_stride,
                     col_stride));
  int64_t count = 0, last_row = 0, last_col = 0, last = 0;
  if (__builtin_mul_overflow(rows, cols, &count) || __builtin_mul_overflow(rows - 1, row_stride, &last_row) ||
      __builtin_mul_overflow(cols - 1, col_stride, &last_col) || __builtin_add_overflow(last_row, last_col, &last) ||
      count > std::numeric_limits<int64_t>::max() / static_cast<int64_t>(sizeof(double)))
    fail(LODE_E_INVALID_ARGUMENT,
         fmt::format("the {} is too large to address ({} x {} with strides {} and {})", what, rows, cols, row_stride,
                     col_stride));
  Matrix m(static_cast<Index>(rows), static_cast<Index>(cols));
  for (int64_t j = 0; j < cols; ++j) {
    const double* column = values + j * col_stride;
    for (int64_t i = 0; i < rows; ++i) m(static_cast<Index>(i), static_cast<Index>(j)) = column[i * row_stride];
  }
  return m;
}

void write_matrix(const Matrix& m, double* out, std::size_t capacity, int64_t* rows, int64_t* cols) {
  if (rows) *rows = static_cast<int64_t>(m.rows());
  if (cols) *cols = static_cast<int64_t>(m.cols());
  const std::size_t needed = static_cast<std::size_t>(m.rows()) * static_cast<std::size_t>(m.cols());
  if (out == nullptr) {
    if (capacity == 0) return;  // size query
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("argument 'out' is NULL but capacity is {}", capacity));
  }
  if (capacity < needed)
    fail(LODE_E_BUFFER_TOO_SMALL,
         fmt::format("the result is {} x {} ({} numbers) but the buffer holds {}", m.rows(), m.cols(), needed, capacity));
  for (Index i = 0; i < m.rows(); ++i)
    for (Index j = 0; j < m.cols(); ++j) out[static_cast<std::size_t>(i * m.cols() + j)] = m(i, j);
}

void write_text(const std::string& text, char* out, std::size_t capacity, std::size_t* length) {
  if (length) *length = text.size();
  if (out == nullptr) {
    if (capacity == 0) return;
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("argument 'out' is NULL but capacity is {}", capacity));
  }
  if (capacity < text.size() + 1)
    fail(LODE_E_BUFFER_TOO_SMALL,
         fmt::format("the text is {} bytes plus its terminating NUL but the buffer holds {}", text.size(), capacity));
  std::memcpy(out, text.data(), text.size());
  out[text.size()] = '\0';
}

std::string key_text(int key, const char* handle_kind) {
  return fmt::format("key {} is not a key of a {}", key, handle_kind);
}

}  // namespace lode::capi
