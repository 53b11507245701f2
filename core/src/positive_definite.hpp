// What the methods that need a positive-definite matrix share (factorability, extraction, fit): its
// smallest eigenvalue as text for their messages, and its Cholesky factor or an error naming the
// problem. Internal to the core.
#pragma once

#include "lode/common.hpp"

#include <Eigen/Cholesky>
#include <fmt/format.h>

#include <string>

namespace lode::detail {

// The smallest eigenvalue of a symmetric matrix, to three significant digits.
std::string smallest_eigenvalue_text(const Matrix& m);

// The Cholesky factorisation of `m`; a matrix that is not positive definite fails with
// ErrorCode::not_positive_definite and `message`, whose {} is its smallest eigenvalue.
Eigen::LLT<Matrix> cholesky_or_fail(const Matrix& m, fmt::format_string<std::string> message);

}  // namespace lode::detail
