// Distribution functions for tests and intervals: log-gamma, regularised incomplete gamma,
// chi-square and noncentral chi-square. Pure functions, thread-safe (no lgamma/signgam).
#pragma once

#include "lode/bivariate_normal.hpp"  // normal_cdf and normal_quantile live there

#include <vector>

namespace lode {

// log Gamma(x) for x > 0.
double log_gamma(double x);

// Regularised lower / upper incomplete gamma P(a, x), Q(a, x) = 1 - P(a, x), a > 0, x >= 0.
double gamma_p(double a, double x);
double gamma_q(double a, double x);

double chi_square_cdf(double x, double df);
double chi_square_sf(double x, double df);  // upper tail, accurate when small
double chi_square_quantile(double p, double df);

// Noncentral chi-square with noncentrality lambda >= 0, as a Poisson mixture of central ones.
double noncentral_chi_square_cdf(double x, double df, double lambda);
double noncentral_chi_square_sf(double x, double df, double lambda);

// The noncentrality lambda >= 0 at which noncentral_chi_square_cdf(x, df, lambda) == p, or 0 when
// even lambda = 0 gives a value below p (the cdf falls as lambda grows).
double noncentrality_for_cdf(double x, double df, double p);

// Quantile q in [0, 1] of `values` (reordered in place) by linear interpolation between order statistics
// (type 7 of Hyndman & Fan 1996, the default of R's quantile and numpy's percentile). Throws
// insufficient_data for no values.
double quantile_type7(std::vector<double>& values, double q);

}  // namespace lode
