// Exact rescaling by powers of two, for the scale-free methods (correlations, alpha, rotation,
// congruence): values near the ends of double precision (1e300, 1e-300) are brought to a largest
// magnitude in [1, 2) first, so sums of squares and products neither overflow nor underflow. A power
// of two changes only the exponent, so no digit of the input is lost (unless a value falls into the
// subnormal range, far below the largest of its column, where it carried no weight anyway).
// Internal to core/src.
#pragma once

#include "lode/common.hpp"

#include <cmath>

namespace lode::detail {

// The power of two that brings `largest` (> 0, finite) into [1, 2); 1 for 0, NaN or infinity.
inline double power_of_two_scale(double largest) {
  if (!(largest > 0.0) || !std::isfinite(largest)) return 1.0;
  return std::ldexp(1.0, -std::ilogb(largest));
}

// Largest magnitude of the finite entries (NaN = missing skipped); 0 when there are none.
inline double largest_magnitude(const Eigen::Ref<const Matrix>& m) {
  double most = 0.0;
  for (Index j = 0; j < m.cols(); ++j)
    for (Index i = 0; i < m.rows(); ++i)
      if (std::isfinite(m(i, j))) most = std::max(most, std::abs(m(i, j)));
  return most;
}

// True when some column's largest magnitude lies outside [1e-100, 1e100] (but is not 0): only then
// is a copy worth making.
inline bool needs_column_scaling(const Matrix& m) {
  for (Index j = 0; j < m.cols(); ++j) {
    const double most = largest_magnitude(m.col(j));
    if (most > 1e100 || (most > 0.0 && most < 1e-100)) return true;
  }
  return false;
}

// Each column multiplied by its own power_of_two_scale (NaN stays NaN).
inline Matrix columns_scaled(const Matrix& m) {
  Matrix out = m;
  for (Index j = 0; j < m.cols(); ++j) out.col(j) *= power_of_two_scale(largest_magnitude(m.col(j)));
  return out;
}

}  // namespace lode::detail
