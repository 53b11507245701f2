// Univariate and bivariate standard normal distribution functions in double precision, for the
// ordinal (polychoric) path and anything else that needs them.
#pragma once

namespace lode {

// Phi(x), the standard normal distribution function (through erfc, full relative precision in
// both tails).
double normal_cdf(double x) noexcept;

// Phi^-1(p) for p in [0, 1] (-inf at 0, +inf at 1, NaN outside): Acklam's rational approximation
// refined by two Halley steps on erfc, accurate to a few units in the last place.
double normal_quantile(double p) noexcept;

// P(X <= h, Y <= k) for standard bivariate normal (X, Y) with correlation rho in [-1, 1];
// h and k may be infinite. Drezner & Wesolowsky (1990) with Genz's (2004, Statistics and Computing
// 14, 251-260) refinements: Gauss-Legendre quadrature with 6, 12 or 20 points by |rho|, and for
// |rho| >= 0.925 an asymptotic expansion plus quadrature of the remainder. Absolute error ~1e-15.
double bivariate_normal_cdf(double h, double k, double rho) noexcept;

// The standard bivariate normal density at (h, k) with correlation rho, |rho| < 1; 0 when h or k is
// infinite. It is also d/drho of bivariate_normal_cdf (Plackett 1954).
double bivariate_normal_density(double h, double k, double rho) noexcept;

}  // namespace lode
