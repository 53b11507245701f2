// Tolerances for reference checks, derived from rounding-error bounds rather than from what one
// machine gave. A reference library (numpy, R) may sum in any order and through any BLAS (Debian's
// reference BLAS on a fresh machine, OpenBLAS after ./lode bench): a check must hold for all of them.
//
// Higham, Accuracy and Stability of Numerical Algorithms (2nd ed., 2002), Lemma 3.1 and eq. (3.5):
// a sum of n products computed in floating point in any order satisfies
//   |fl(sum x_i y_i) - sum x_i y_i| <= gamma_n * sum |x_i y_i|,   gamma_n = n u / (1 - n u),
// with u = 2^-53 the unit roundoff of IEEE double. Two independent computations of the same sum
// therefore agree to within 2 gamma_n times sum |x_i y_i|.
#pragma once

#include <cmath>

namespace lode::testing {

inline constexpr double unit_roundoff = 0x1p-53;

// gamma_n of Higham (2002), eq. (3.4).
inline double gamma_n(double n) {
  const double nu = n * unit_roundoff;
  return nu / (1.0 - nu);
}

// The largest gap between two computations of a sum of n products, relative to sum |x_i y_i|.
inline double two_sided_sum_bound(double n) { return 2.0 * gamma_n(n); }

// Two computations of a correlation r = S_ab / sqrt(S_aa S_bb) from n rows: S_ab is off by at most
// 2 gamma_n sqrt(S_aa S_bb) (Cauchy-Schwarz bounds sum |x_a x_b|), S_aa and S_bb by 2 gamma_n of themselves,
// each moving r by at most half that; the divisions and the square root add a few u.
inline double correlation_gap_bound(double n) { return 2.0 * two_sided_sum_bound(n) + 8.0 * unit_roundoff; }

// Two backward-stable symmetric eigensolvers (Householder tridiagonalisation + QL/QR, or LAPACK's
// dsyevd/dsyevr through any BLAS) each return the exact eigenvalues of A + E with ||E||_2 <= c(p) u ||A||_2,
// c(p) a modest function of the order p (Golub & Van Loan, Matrix Computations, 4th ed. 2013, sections
// 8.3-8.4); by Weyl's inequality each eigenvalue moves by at most ||E||_2. We take c(p) = p^2, a
// deliberately loose choice that covers the tridiagonalisation's p reflections of p terms each.
inline double eigenvalue_gap_bound(double p, double norm) { return 2.0 * p * p * unit_roundoff * norm; }

}  // namespace lode::testing
