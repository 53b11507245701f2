// Distribution functions. The incomplete gamma follows the classical split into a power series
// (x < a + 1) and a continued fraction evaluated by the modified Lentz method (Press et al. 2007,
// Numerical Recipes 3rd ed., section 6.2); the factor x^a e^-x / Gamma(a) is computed in the
// "deviance" form of Loader (2000, "Fast and accurate computation of binomial probabilities") so
// that it stays accurate for large a. The noncentral chi-square is the Poisson mixture of central
// chi-squares summed outward from the Poisson mode (Ding 1992; Benton & Krishnamoorthy 2003).
#include "lode/distributions.hpp"

#include "lode/common.hpp"

#include <fmt/format.h>

#include <algorithm>

#include <cmath>
#include <limits>
#include <numbers>

namespace lode {

namespace {

constexpr double kEps = std::numeric_limits<double>::epsilon();
constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();
const double kHalfLog2Pi = 0.5 * std::log(2.0 * std::numbers::pi);

// Stirling's series remainder: log Gamma(x) - [(x - 1/2) ln x - x + ln(2 pi) / 2], for x >= 10.
double stirling_remainder_large(double x) {
  const double x2 = x * x;
  // Coefficients B_{2k} / (2k (2k - 1)): 1/12, -1/360, 1/1260, -1/1680, 1/1188, -691/360360.
  return (1.0 / 12.0 - (1.0 / 360.0 - (1.0 / 1260.0 - (1.0 / 1680.0 - (1.0 / 1188.0 - 691.0 / 360360.0 / x2) / x2) / x2) / x2) / x2) / x;
}

// x - 1 - ln x, accurate near x = 1.
double deviance(double x) {
  const double u = x - 1.0;
  if (std::abs(u) < 0.1) {
    // u - ln(1 + u) = sum_{k >= 2} (-1)^k u^k / k
    double term = u * u, sum = 0.0;
    for (int k = 2; k < 60; ++k) {
      const double t = term / k;
      sum += (k % 2 == 0) ? t : -t;
      if (std::abs(t) < kEps * std::abs(sum)) break;
      term *= u;
    }
    return sum;
  }
  return u - std::log1p(u);
}

// log of x^a e^-x / Gamma(a).
double log_gamma_density_factor(double a, double x) {
  if (a >= 10.0) {
    return -a * deviance(x / a) + 0.5 * std::log(a) - kHalfLog2Pi - stirling_remainder_large(a);
  }
  return a * std::log(x) - x - log_gamma(a);
}

double gamma_p_series(double a, double x) {
  // P(a, x) = x^a e^-x / Gamma(a + 1) * sum_n x^n / ((a + 1) ... (a + n))
  double term = 1.0, sum = 1.0, ap = a;
  for (int n = 0; n < 1000000; ++n) {
    ap += 1.0;
    term *= x / ap;
    sum += term;
    if (term < sum * kEps * 0.5) break;
  }
  return std::exp(log_gamma_density_factor(a, x) - std::log(a)) * sum;
}

double gamma_q_fraction(double a, double x) {
  // Q(a, x) = x^a e^-x / Gamma(a) * 1 / (x + 1 - a - 1 (1 - a) / (x + 3 - a - 2 (2 - a) / (x + 5 - a - ...)))
  constexpr double tiny = 1e-300;
  double b = x + 1.0 - a, c = 1.0 / tiny, d = 1.0 / b, h = d;
  for (int i = 1; i < 1000000; ++i) {
    const double an = -i * (i - a);
    b += 2.0;
    d = an * d + b;
    if (std::abs(d) < tiny) d = tiny;
    c = b + an / c;
    if (std::abs(c) < tiny) c = tiny;
    d = 1.0 / d;
    const double delta = d * c;
    h *= delta;
    if (std::abs(delta - 1.0) < kEps) break;
  }
  return std::exp(log_gamma_density_factor(a, x)) * h;
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

// Poisson(mu) probability of j, on the log scale.
double log_poisson(double j, double mu) { return -mu + j * std::log(mu) - log_gamma(j + 1.0); }

// sum_j Poisson(j; mu) * term(j), summed outward from the mode. `term_increases_with_j` tells which
// side the central terms shrink on, so the truncation bound can use the term itself there and 1 on
// the other side.
template <class Term>
double poisson_mixture(double mu, bool term_increases_with_j, Term term) {
  const double mode = std::floor(mu);
  double sum = 0.0;
  // Forward: j = mode, mode + 1, ...
  for (double j = mode;; j += 1.0) {
    const double w = std::exp(log_poisson(j, mu));
    const double t = term(j);
    sum += w * t;
    if (j + 2.0 > mu) {
      const double w_next = w * mu / (j + 1.0);
      const double tail = w_next / (1.0 - mu / (j + 2.0));  // bounds sum_{i > j} Poisson(i)
      const double bound = term_increases_with_j ? tail : tail * t;
      if (bound <= 1e-17 * sum || tail < 1e-300) break;
    }
    if (j > mode + 1e7) break;
  }
  // Backward: j = mode - 1, ..., 0
  for (double j = mode - 1.0; j >= 0.0; j -= 1.0) {
    const double w = std::exp(log_poisson(j, mu));
    const double t = term(j);
    sum += w * t;
    if (j >= 1.0) {
      const double w_prev = w * j / mu;
      const double tail = w_prev / (1.0 - (j - 1.0) / mu);  // bounds sum_{i < j} Poisson(i)
      const double bound = term_increases_with_j ? tail * t : tail;
      if (bound <= 1e-17 * sum || tail < 1e-300) break;
    }
  }
  return sum;
}

}  // namespace

double log_gamma(double x) {
  if (!(x > 0.0) || !std::isfinite(x))
    throw Error(ErrorCode::invalid_argument, fmt::format("log_gamma needs a positive finite argument; got {}", x));
  if (x >= 10.0) return (x - 0.5) * std::log(x) - x + kHalfLog2Pi + stirling_remainder_large(x);
  // Shift up: Gamma(x) = Gamma(x + n) / (x (x + 1) ... (x + n - 1)).
  double product = 1.0, y = x;
  while (y < 10.0) {
    product *= y;
    y += 1.0;
  }
  return (y - 0.5) * std::log(y) - y + kHalfLog2Pi + stirling_remainder_large(y) - std::log(product);
}

double gamma_p(double a, double x) {
  check_gamma_args(a, x);
  if (x == 0.0) return 0.0;
  if (std::isinf(x)) return 1.0;
  if (x < a + 1.0) return std::min(1.0, gamma_p_series(a, x));
  return 1.0 - std::min(1.0, gamma_q_fraction(a, x));
}

double gamma_q(double a, double x) {
  check_gamma_args(a, x);
  if (x == 0.0) return 1.0;
  if (std::isinf(x)) return 0.0;
  if (x < a + 1.0) return 1.0 - std::min(1.0, gamma_p_series(a, x));
  return std::min(1.0, gamma_q_fraction(a, x));
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
  // Start: Wilson & Hilferty (1931); then Newton steps safeguarded by a bracket.
  const double z = normal_quantile(p);
  const double c = 2.0 / (9.0 * df);
  double x = df * std::pow(std::max(1.0 - c + z * std::sqrt(c), 0.05), 3.0);
  double lo = 0.0, hi = std::max(1.0, 2.0 * x);
  while (chi_square_cdf(hi, df) < p) hi *= 2.0;
  const double a = 0.5 * df;
  for (int i = 0; i < 200; ++i) {
    const double f = chi_square_cdf(x, df) - p;
    if (f == 0.0) return x;
    if (f < 0.0) lo = x; else hi = x;
    const double density = std::exp(log_gamma_density_factor(a, 0.5 * x)) / x;  // d/dx P(a, x/2)
    double next = x - f / density;
    if (!(next > lo && next < hi) || !std::isfinite(next)) next = 0.5 * (lo + hi);
    if (std::abs(next - x) <= 4.0 * kEps * x || hi - lo <= 4.0 * kEps * hi) return next;
    x = next;
  }
  return x;
}

double noncentral_chi_square_cdf(double x, double df, double lambda) {
  check_df(df);
  check_lambda(lambda);
  if (std::isnan(x)) return kNaN;
  if (x <= 0.0) return 0.0;
  if (lambda == 0.0) return chi_square_cdf(x, df);
  const double a = 0.5 * df, y = 0.5 * x;
  const double value = poisson_mixture(0.5 * lambda, false, [&](double j) { return gamma_p(a + j, y); });
  return std::min(1.0, value);
}

double noncentral_chi_square_sf(double x, double df, double lambda) {
  check_df(df);
  check_lambda(lambda);
  if (std::isnan(x)) return kNaN;
  if (x <= 0.0) return 1.0;
  if (lambda == 0.0) return chi_square_sf(x, df);
  const double a = 0.5 * df, y = 0.5 * x;
  const double value = poisson_mixture(0.5 * lambda, true, [&](double j) { return gamma_q(a + j, y); });
  return std::min(1.0, value);
}

double noncentrality_for_cdf(double x, double df, double p) {
  check_df(df);
  if (!(p > 0.0 && p < 1.0))
    throw Error(ErrorCode::invalid_argument, fmt::format("the target probability must lie in (0, 1); got {}", p));
  if (!(x >= 0.0) || !std::isfinite(x))
    throw Error(ErrorCode::invalid_argument, fmt::format("the chi-square value must be finite and non-negative; got {}", x));
  if (noncentral_chi_square_cdf(x, df, 0.0) <= p) return 0.0;
  // The cdf falls monotonically in lambda: bracket, then bisect with false-position steps (Illinois).
  double lo = 0.0, hi = std::max(1.0, x);
  double f_lo = noncentral_chi_square_cdf(x, df, lo) - p;
  double f_hi = noncentral_chi_square_cdf(x, df, hi) - p;
  while (f_hi > 0.0) {
    lo = hi;
    f_lo = f_hi;
    hi *= 2.0;
    f_hi = noncentral_chi_square_cdf(x, df, hi) - p;
    if (hi > 1e12)
      throw Error(ErrorCode::internal, "could not bracket the noncentrality parameter");
  }
  int side = 0;
  for (int i = 0; i < 300; ++i) {
    double mid = (lo * f_hi - hi * f_lo) / (f_hi - f_lo);
    if (!(mid > lo && mid < hi)) mid = 0.5 * (lo + hi);
    const double f = noncentral_chi_square_cdf(x, df, mid) - p;
    if (f == 0.0) return mid;
    if (f > 0.0) {
      lo = mid;
      f_lo = f;
      if (side == 1) f_hi *= 0.5;
      side = 1;
    } else {
      hi = mid;
      f_hi = f;
      if (side == -1) f_lo *= 0.5;
      side = -1;
    }
    if (hi - lo <= 1e-13 * std::max(1.0, hi)) break;
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
