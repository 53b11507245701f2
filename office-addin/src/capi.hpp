// Thin C++ conveniences over the C ABI (lode.h): owning handles, status checks that turn a
// failure into the cell error documented for it, and readers of matrix results.
#pragma once

#include "cells.hpp"

#include <lode.h>

#include <chrono>
#include <cstdint>
#include <functional>
#include <limits>
#include <future>
#include <memory>
#include <string>
#include <thread>
#include <vector>

namespace lode::addin {

// Each C ABI status becomes the failure shown in the cell (README, "Cell functions", "Errors").
Failure failure_of_status(int status) noexcept;

// The C ABI's progress callback for a formula's Deadline (its user pointer): cancels the call once
// the time limit has passed, which `check` shows as Err:502 with the reason.
int deadline_progress(void* user, std::int64_t done, std::int64_t total);

// Throws the time-limit error of `what` when the formula's deadline has passed (before a stage).
void check_time(const Deadline& deadline, const char* what);
[[noreturn]] void time_limit_passed(const char* what);

// Runs `work` on a thread of its own and waits for its result until `deadline`, so a stage the C ABI
// cannot interrupt (an extraction, one rotation start, the fit statistics, lode_rotation_compute) never blocks
// the office past the time limit: past it the cell shows the time-limit error at once, and the work
// ends on its own thread (at its next progress report when it has one) with its result dropped.
// `work` must own everything it reads (capture by value, shared handles): the caller's frame is gone
// by then. Its exceptions (CellError from `check`, which reads the C ABI's thread-local last error on
// that thread) reach the caller.
template <class T>
std::shared_ptr<const T> within_time(const Deadline& deadline, const char* what,
                                     std::function<std::shared_ptr<const T>()> work) {
  auto task = std::make_shared<std::packaged_task<std::shared_ptr<const T>()>>(std::move(work));
  std::future<std::shared_ptr<const T>> result = task->get_future();
  std::thread([task] { (*task)(); }).detach();
  if (result.wait_until(deadline.until) != std::future_status::ready) time_limit_passed(what);
  return result.get();
}

// Throws CellError with lode_error_message()'s text when `status` is not LODE_OK.
void check(int status, const char* what);

// How a caller turns a C ABI status into its own failure: throws unless `status` is LODE_OK. The
// cells use `check` (CellError); the report passes its own (report_analysis.cpp).
using StatusCheck = void (*)(int status, const char* what);

template <class T, void (*Free)(T*)>
struct HandleFree {
  void operator()(T* p) const noexcept { Free(p); }
};
// An owning handle of any C ABI result type, freed by its lode_*_free.
template <class T, void (*Free)(T*)>
using Handle = std::unique_ptr<T, HandleFree<T, Free>>;
using DataHandle = Handle<lode_data, lode_data_free>;
using CorrelationHandle = Handle<lode_correlation, lode_correlation_free>;

// A matrix read from the C ABI, row-major.
struct Matrix {
  std::int64_t rows = 0, cols = 0;
  std::vector<double> values;
  double at(std::int64_t r, std::int64_t c) const { return values[static_cast<std::size_t>(r * cols + c)]; }
};

// Reads a matrix result through a getter of the C ABI's shape (handle, key, out, capacity, rows, cols):
// a size query first, then the values.
template <class H, class Getter>
Matrix read_matrix(const H* handle, int key, Getter getter, const char* what, StatusCheck on_status = check) {
  Matrix m;
  on_status(getter(handle, key, nullptr, 0, &m.rows, &m.cols), what);
  m.values.resize(static_cast<std::size_t>(m.rows * m.cols));
  on_status(getter(handle, key, m.values.data(), m.values.size(), &m.rows, &m.cols), what);
  return m;
}

// A number result through a getter of the shape (handle, key, out).
template <class H, class Getter>
double read_value(const H* handle, int key, Getter getter, const char* what, StatusCheck on_status = check) {
  double v = std::numeric_limits<double>::quiet_NaN();
  on_status(getter(handle, key, &v), what);
  return v;
}

// A text result through a getter of the shape (handle, key, out, capacity, length): its length first.
template <class H, class Getter>
std::string read_text(const H* handle, int key, Getter getter, const char* what, StatusCheck on_status = check) {
  std::size_t length = 0;
  on_status(getter(handle, key, nullptr, 0, &length), what);
  std::string text(length + 1, '\0');
  on_status(getter(handle, key, text.data(), text.size(), &length), what);
  text.resize(length);
  return text;
}

// A matrix result as a table of numbers (NaN entries become #NUM! cells).
Output to_output(const Matrix& m);

}  // namespace lode::addin
