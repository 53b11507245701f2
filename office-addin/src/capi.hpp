// Thin C++ conveniences over the C ABI (lode.h): owning handles, status checks that turn a
// failure into the cell error documented for it, and readers of matrix results.
#pragma once

#include "cells.hpp"

#include <lode.h>

#include <chrono>
#include <cstdint>
#include <memory>
#include <string>
#include <vector>

namespace lode::addin {

// Each C ABI status becomes the failure shown in the cell (README, "Cell functions", "Errors").
Failure failure_of_status(int status) noexcept;

// The time a single formula may compute: long calls are cancelled through the C ABI's progress
// callback (deadline_progress with a Deadline as its user pointer) and show Err:502.
inline constexpr std::chrono::seconds kTimeLimit{30};
struct Deadline {
  std::chrono::steady_clock::time_point until = std::chrono::steady_clock::now() + kTimeLimit;
};
int deadline_progress(void* user, std::int64_t done, std::int64_t total);

// Throws CellError with lode_last_error()'s text when `status` is not LODE_OK.
void check(int status, const char* what);

template <class T, void (*Free)(T*)>
struct HandleFree {
  void operator()(T* p) const noexcept { Free(p); }
};
using DataHandle = std::unique_ptr<lode_data, HandleFree<lode_data, lode_data_free>>;
using CorrelationHandle = std::unique_ptr<lode_correlation, HandleFree<lode_correlation, lode_correlation_free>>;

// A matrix read from the C ABI, row-major.
struct Matrix {
  std::int64_t rows = 0, cols = 0;
  std::vector<double> values;
  double at(std::int64_t r, std::int64_t c) const { return values[static_cast<std::size_t>(r * cols + c)]; }
};

// Reads a matrix result through a getter of the C ABI's shape (handle, key, out, capacity, rows, cols):
// a size query first, then the values.
template <class H, class Getter>
Matrix read_matrix(const H* handle, int key, Getter getter, const char* what) {
  Matrix m;
  check(getter(handle, key, nullptr, 0, &m.rows, &m.cols), what);
  m.values.resize(static_cast<std::size_t>(m.rows * m.cols));
  check(getter(handle, key, m.values.data(), m.values.size(), &m.rows, &m.cols), what);
  return m;
}

// A matrix result as a table of numbers (NaN entries become #NUM! cells).
Output to_output(const Matrix& m);

}  // namespace lode::addin
