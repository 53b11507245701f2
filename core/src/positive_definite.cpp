// The shared checks of positive-definite matrices (positive_definite.hpp).
#include "positive_definite.hpp"

#include "lode/correlation.hpp"

namespace lode::detail {

std::string smallest_eigenvalue_text(const Matrix& m) {
  const Vector ev = eigenvalues_descending(m);
  return fmt::format("{:.3g}", ev(ev.size() - 1));
}

Eigen::LLT<Matrix> cholesky_or_fail(const Matrix& m, fmt::format_string<std::string> message) {
  Eigen::LLT<Matrix> llt(m);
  if (llt.info() != Eigen::Success)
    throw Error(ErrorCode::not_positive_definite, fmt::format(message, smallest_eigenvalue_text(m)));
  return llt;
}

}  // namespace lode::detail
