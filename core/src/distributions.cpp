// Distribution functions. Log-gamma, the regularised incomplete gamma, the central chi-square and
// the noncentral chi-square up to moderate size come from Boost.Math (its gamma_p / gamma_q use
// Temme's uniform asymptotic expansion for large arguments, so their cost does not grow with them;
// its noncentral chi-square sums the Poisson mixture from the mode, after Ding 1992 and Benton &
// Krishnamoorthy 2003). That mixture needs about sqrt(lambda) terms, and Boost's series gives up
// near lambda = 1e9, so past kEdgeworthFrom (on the chi-square value, which is close to df + lambda)
// the noncentral chi-square is evaluated by its Edgeworth expansion to third order in the
// standardised cumulants (e.g. Hall 1992, "The Bootstrap and Edgeworth Expansion", section 2.2):
// its error is of the order of (df + 2 lambda)^-2 in probability, below 1e-10 there and smaller
// beyond, in a time that does not depend on the arguments. The RMSEA interval (fit.cpp) inverts it, so
// its cost no longer grows with the sample size.
#include "lode/distributions.hpp"

#include "lode/common.hpp"

#include <boost/math/distributions/chi_squared.hpp>
#include <boost/math/distributions/non_central_chi_squared.hpp>
#include <boost/math/special_functions/gamma.hpp>
#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <numbers>

namespace lode {

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
// Chi-square values from which the noncentral chi-square uses its Edgeworth expansion (see above).
// Below it Boost's mixture takes under a millisecond for an interval (measured on one core).
constexpr double kEdgeworthFrom = 2e5;

// Boost evaluates in double (no promotion to long double: the same results on every platform that
// has IEEE doubles) and reports trouble by exception, which the wrappers below turn into lode::Error.
using Policy = boost::math::policies::policy<boost::math::policies::promote_double<false>,
                                              boost::math::policies::promote_float<false>>;
using ChiSquared = boost::math::chi_squared_distribution<double, Policy>;
using NoncentralChiSquared = boost::math::non_central_chi_squared_distribution<double, Policy>;

template <class F>
double boost_call(const char* what, F&& f) {
  try {
    return f();
  } catch (const std::exception& e) {
    throw Error(ErrorCode::internal, fmt::format("{} could not be evaluated: {}", what, e.what()));
  }
}

void check_gamma_args(double a, double x) {
  if (!(a > 0.0) || !std::isfinite(a))
    throw Error(ErrorCode::invalid_argument, fmt::format("the incomplete gamma function needs a > 0; got {}", a));
  if (!(x >= 0.0))
    throw Error(ErrorCode::invalid_argument, fmt::format("the incomplete gamma function needs x >= 0; got {}", x));
}

void check_df(double df) {
  if (!(df > 0.0) || !std::isfinite(df))
    throw Error(ErrorCode::invalid_argument, fmt::format("chi-square degrees of freedom must be positive; got {}", df));
}

void check_lambda(double lambda) {
  if (!(lambda >= 0.0) || !std::isfinite(lambda))
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the noncentrality parameter must be finite and non-negative; got {}", lambda));
}

// Edgeworth expansion of the noncentral chi-square cdf: cumulants kappa_r = 2^(r-1) (r-1)! (df + r
// lambda); F(x) = Phi(w) - phi(w) [g1/6 He2 + g2/24 He3 + g1^2/72 He5 + g3/120 He4 + g1 g2/144 He6 +
// g1^3/1296 He8](w), w the standardised x, g1..g3 the standardised third to fifth cumulants, He the
// probabilists' Hermite polynomials. Returns the lower tail, or the upper tail when `upper`.
double noncentral_edgeworth(double x, double df, double lambda, bool upper) {
  const double k2 = 2.0 * (df + 2.0 * lambda), sd = std::sqrt(k2);
  const double g1 = 8.0 * (df + 3.0 * lambda) / (k2 * sd);
  const double g2 = 48.0 * (df + 4.0 * lambda) / (k2 * k2);
  const double g3 = 384.0 * (df + 5.0 * lambda) / (k2 * k2 * sd);
  const double w = (x - df - lambda) / sd, w2 = w * w;
  const double he2 = w2 - 1.0, he3 = w * (w2 - 3.0), he4 = (w2 - 6.0) * w2 + 3.0;
  const double he5 = w * ((w2 - 10.0) * w2 + 15.0), he6 = ((w2 - 15.0) * w2 + 45.0) * w2 - 15.0;
  const double he8 = (((w2 - 28.0) * w2 + 210.0) * w2 - 420.0) * w2 + 105.0;
  const double correction = std::exp(-0.5 * w2) / std::sqrt(2.0 * std::numbers::pi) *
                            (g1 / 6.0 * he2 + g2 / 24.0 * he3 + g1 * g1 / 72.0 * he5 + g3 / 120.0 * he4 +
                             g1 * g2 / 144.0 * he6 + g1 * g1 * g1 / 1296.0 * he8);
  const double value = upper ? normal_cdf(-w) + correction : normal_cdf(w) - correction;
  return std::clamp(value, 0.0, 1.0);
}

}  // namespace

double log_gamma(double x) {
  if (!(x > 0.0) || !std::isfinite(x))
    throw Error(ErrorCode::invalid_argument, fmt::format("log_gamma needs a positive finite argument; got {}", x));
  return boost_call("log-gamma", [&] { return boost::math::lgamma(x, Policy()); });
}

double gamma_p(double a, double x) {
  check_gamma_args(a, x);
  if (std::isinf(x)) return 1.0;
  return boost_call("the incomplete gamma function", [&] { return boost::math::gamma_p(a, x, Policy()); });
}

double gamma_q(double a, double x) {
  check_gamma_args(a, x);
  if (std::isinf(x)) return 0.0;
  return boost_call("the incomplete gamma function", [&] { return boost::math::gamma_q(a, x, Policy()); });
}

double chi_square_cdf(double x, double df) {
  check_df(df);
  if (std::isnan(x)) return kNaN;
  if (x <= 0.0) return 0.0;
  return gamma_p(0.5 * df, 0.5 * x);
}

double chi_square_sf(double x, double df) {
  check_df(df);
  if (std::isnan(x)) return kNaN;
  if (x <= 0.0) return 1.0;
  return gamma_q(0.5 * df, 0.5 * x);
}

double chi_square_quantile(double p, double df) {
  check_df(df);
  if (!(p >= 0.0 && p <= 1.0))
    throw Error(ErrorCode::invalid_argument, fmt::format("a chi-square quantile needs a probability in [0, 1]; got {}", p));
  if (p == 0.0) return 0.0;
  if (p == 1.0) return std::numeric_limits<double>::infinity();
  return boost_call("the chi-square quantile", [&] { return boost::math::quantile(ChiSquared(df), p); });
}

double noncentral_chi_square_cdf(double x, double df, double lambda) {
  check_df(df);
  check_lambda(lambda);
  if (std::isnan(x)) return kNaN;
  if (x <= 0.0) return 0.0;
  if (lambda == 0.0) return chi_square_cdf(x, df);
  if (x >= kEdgeworthFrom) return noncentral_edgeworth(x, df, lambda, false);
  return boost_call("the noncentral chi-square",
                    [&] { return boost::math::cdf(NoncentralChiSquared(df, lambda), x); });
}

double noncentral_chi_square_sf(double x, double df, double lambda) {
  check_df(df);
  check_lambda(lambda);
  if (std::isnan(x)) return kNaN;
  if (x <= 0.0) return 1.0;
  if (lambda == 0.0) return chi_square_sf(x, df);
  if (x >= kEdgeworthFrom) return noncentral_edgeworth(x, df, lambda, true);
  return boost_call("the noncentral chi-square",
                    [&] { return boost::math::cdf(boost::math::complement(NoncentralChiSquared(df, lambda), x)); });
}

double noncentrality_for_cdf(double x, double df, double p) {
  check_df(df);
  if (!(p > 0.0 && p < 1.0))
    throw Error(ErrorCode::invalid_argument, fmt::format("the target probability must lie in (0, 1); got {}", p));
  if (!(x >= 0.0) || !std::isfinite(x))
    throw Error(ErrorCode::invalid_argument, fmt::format("the chi-square value must be finite and non-negative; got {}", x));
  if (chi_square_cdf(x, df) <= p) return 0.0;
  if (x < kEdgeworthFrom)
    return boost_call("the noncentrality parameter",
                      [&] { return NoncentralChiSquared::find_non_centrality(df, x, p); });
  // The cdf falls monotonically in lambda, which lies within a few standard deviations of x - df:
  // bracket there, then bisect with false-position steps (Illinois); each step costs the same.
  const auto f = [&](double lambda) { return noncentral_edgeworth(x, df, lambda, false) - p; };
  const double spread = std::sqrt(2.0 * (df + 2.0 * x));
  double lo = std::max(0.0, x - df - 20.0 * spread), hi = std::max(x - df, 0.0) + 20.0 * spread;
  double f_lo = lo == 0.0 ? chi_square_cdf(x, df) - p : f(lo), f_hi = f(hi);
  if (!(f_lo > 0.0 && f_hi < 0.0))
    throw Error(ErrorCode::internal, fmt::format("could not bracket the noncentrality parameter for chi-square {} on "
                                                 "{} degrees of freedom",
                                                 x, df));
  int side = 0;
  for (int i = 0; i < 300; ++i) {
    double mid = (lo * f_hi - hi * f_lo) / (f_hi - f_lo);
    if (!(mid > lo && mid < hi)) mid = 0.5 * (lo + hi);
    const double value = f(mid);
    if (value == 0.0) return mid;
    if (value > 0.0) {
      lo = mid;
      f_lo = value;
      if (side == 1) f_hi *= 0.5;
      side = 1;
    } else {
      hi = mid;
      f_hi = value;
      if (side == -1) f_lo *= 0.5;
      side = -1;
    }
    if (hi - lo <= 4.0 * std::numeric_limits<double>::epsilon() * hi) break;
  }
  return 0.5 * (lo + hi);
}

double quantile_type7(std::vector<double>& values, double q) {
  if (values.empty()) throw Error(ErrorCode::insufficient_data, "a quantile of no values was requested");
  const double h = (static_cast<double>(values.size()) - 1.0) * std::clamp(q, 0.0, 1.0);
  const auto lo = static_cast<std::size_t>(std::floor(h));
  // The two order statistics needed, without sorting everything: the lo-th by selection, the next one
  // as the smallest of those above it.
  const auto at = values.begin() + static_cast<std::ptrdiff_t>(lo);
  std::nth_element(values.begin(), at, values.end());
  const double below = *at;
  const double above = lo + 1 < values.size() ? *std::min_element(at + 1, values.end()) : below;
  return below + (h - static_cast<double>(lo)) * (above - below);
}

}  // namespace lode
