// Shared vocabulary of the core: matrix types, the error type, convergence reports, progress callbacks.
#pragma once

#include <Eigen/Dense>

#include <cstdint>
#include <functional>
#include <stdexcept>
#include <string>

namespace lode {

using Matrix = Eigen::MatrixXd;
using Vector = Eigen::VectorXd;
using Index = Eigen::Index;

// Why a computation refused to give a result. The C ABI maps each to a status code.
enum class ErrorCode : int {
  invalid_argument = 1,       // malformed options, wrong shapes, non-finite numbers where none may be
  insufficient_data = 2,      // too few rows or items, constant columns, empty pairs
  not_positive_definite = 3,  // a matrix that must be positive definite is not
  too_many_factors = 4,       // more factors than the data can identify
  not_converged = 5,          // only where a caller asked for strictness; otherwise reported in Convergence
  cancelled = 6,              // a progress callback asked to stop
  internal = 7,               // a bug in Lode
};

const char* error_code_name(ErrorCode code) noexcept;

// The one exception type the core throws. The message names the problem in the analyst's terms
// (which column, how many rows), written with fmt.
class Error : public std::runtime_error {
 public:
  Error(ErrorCode code, const std::string& message) : std::runtime_error(message), code_(code) {}
  ErrorCode code() const noexcept { return code_; }

 private:
  ErrorCode code_;
};

// How an iterative method ended. Every iterative method returns one; none hides non-convergence.
struct Convergence {
  bool converged = false;
  int iterations = 0;
  int max_iterations = 0;
  double tolerance = 0.0;     // the criterion the method tests against
  double final_change = 0.0;  // the value of that criterion at the last iteration
};

// Progress of a long computation: called with units done and the total, always from the thread that
// started the computation. Returning false cancels: the computation then throws Error(cancelled).
using ProgressFn = std::function<bool(std::int64_t done, std::int64_t total)>;

// Version of the core library (the C ABI reports it as well).
const char* version() noexcept;

}  // namespace lode
