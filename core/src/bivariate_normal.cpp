#include "lode/bivariate_normal.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <limits>
#include <numbers>

namespace lode {

namespace {

constexpr double kPi = std::numbers::pi;
constexpr double kTwoPi = 2.0 * std::numbers::pi;

// Gauss-Legendre nodes (positive half) and weights of an n-point rule on [-1, 1], n even, by
// Newton's method on the Legendre polynomial (converged to machine precision).
template <int N>
struct GaussLegendreHalf {
  std::array<double, N / 2> x{};
  std::array<double, N / 2> w{};
  // P_N(z) into p0 and P_{N-1}(z) into p1, by Bonnet's three-term recurrence.
  static void legendre(double z, double& p0, double& p1) {
    p0 = 1.0;
    p1 = 0.0;
    for (int j = 1; j <= N; ++j) {
      const double p2 = p1;
      p1 = p0;
      p0 = ((2.0 * j - 1.0) * z * p1 - (j - 1.0) * p2) / j;
    }
  }
  GaussLegendreHalf() {
    for (int i = 0; i < N / 2; ++i) {
      double z = std::cos(kPi * (i + 0.75) / (N + 0.5));
      double dp = 0.0;
      for (int it = 0; it < 100; ++it) {
        double p0, p1;
        legendre(z, p0, p1);
        dp = N * (z * p0 - p1) / (z * z - 1.0);
        const double step = p0 / dp;
        z -= step;
        if (std::abs(step) < 1e-16) break;
      }
      // Recompute the derivative at the converged node for the weight.
      double p0, p1;
      legendre(z, p0, p1);
      dp = N * (z * p0 - p1) / (z * z - 1.0);
      x[static_cast<std::size_t>(i)] = z;
      w[static_cast<std::size_t>(i)] = 2.0 / ((1.0 - z * z) * dp * dp);
    }
  }
};

// Computed once, immutable afterwards (thread-safe static initialisation).
const GaussLegendreHalf<6>& rule6() {
  static const GaussLegendreHalf<6> r;
  return r;
}
const GaussLegendreHalf<12>& rule12() {
  static const GaussLegendreHalf<12> r;
  return r;
}
const GaussLegendreHalf<20>& rule20() {
  static const GaussLegendreHalf<20> r;
  return r;
}

// P(X > h, Y > k), finite h and k (Genz 2004, function BVNU / BVND).
template <class Rule>
double upper_probability(double h, double k, double r, const Rule& rule) {
  constexpr std::size_t lg = std::tuple_size_v<decltype(rule.x)>;
  double hk = h * k;
  double bvn = 0.0;
  if (std::abs(r) < 0.925) {
    // Integral of the density over asin(rho) (Drezner & Wesolowsky 1990, eq. 3), nodes at
    // asr * (1 -+ x) covering [0, asin(rho)].
    const double hs = 0.5 * (h * h + k * k);
    const double asr = 0.5 * std::asin(r);
    for (std::size_t i = 0; i < lg; ++i) {
      for (int sign = -1; sign <= 1; sign += 2) {
        const double sn = std::sin(asr * (1.0 + sign * rule.x[i]));
        bvn += rule.w[i] * std::exp((sn * hk - hs) / (1.0 - sn * sn));
      }
    }
    return bvn * asr / kTwoPi + normal_cdf(-h) * normal_cdf(-k);
  }
  if (r < 0.0) {
    k = -k;
    hk = -hk;
  }
  if (std::abs(r) < 1.0) {
    const double as = (1.0 - r) * (1.0 + r);
    double a = std::sqrt(as);
    const double bs = (h - k) * (h - k);
    const double c = (4.0 - hk) / 8.0;
    const double d = (12.0 - hk) / 80.0;
    double asr = -0.5 * (bs / as + hk);
    if (asr > -100.0) bvn = a * std::exp(asr) * (1.0 - c * (bs - as) * (1.0 - d * bs) / 3.0 + c * d * as * as);
    if (hk > -100.0) {
      const double b = std::sqrt(bs);
      const double sp = std::sqrt(kTwoPi) * normal_cdf(-b / a);
      bvn -= std::exp(-0.5 * hk) * sp * b * (1.0 - c * bs * (1.0 - d * bs) / 3.0);
    }
    a *= 0.5;
    double sum = 0.0;
    for (std::size_t i = 0; i < lg; ++i) {
      for (int sign = -1; sign <= 1; sign += 2) {
        const double xs_root = a * (1.0 + sign * rule.x[i]);
        const double xs = xs_root * xs_root;
        asr = -0.5 * (bs / xs + hk);
        if (asr > -100.0) {
          const double sp = 1.0 + c * xs * (1.0 + 5.0 * d * xs);
          const double rs = std::sqrt(1.0 - xs);
          const double ep = std::exp(-0.5 * hk * xs / ((1.0 + rs) * (1.0 + rs))) / rs;
          sum += rule.w[i] * std::exp(asr) * (sp - ep);
        }
      }
    }
    bvn = (a * sum - bvn) / kTwoPi;
  }
  if (r > 0.0) return bvn + normal_cdf(-std::max(h, k));
  if (h >= k) return -bvn;
  const double l = h < 0.0 ? normal_cdf(k) - normal_cdf(h) : normal_cdf(-h) - normal_cdf(-k);
  return l - bvn;
}

}  // namespace

double normal_cdf(double x) noexcept { return 0.5 * std::erfc(-x / std::numbers::sqrt2); }

double normal_quantile(double p) noexcept {
  if (std::isnan(p) || p < 0.0 || p > 1.0) return std::numeric_limits<double>::quiet_NaN();
  if (p == 0.0) return -std::numeric_limits<double>::infinity();
  if (p == 1.0) return std::numeric_limits<double>::infinity();
  // Work in the lower half (1 - p is exact for p >= 0.5) and reflect.
  if (p > 0.5) return -normal_quantile(1.0 - p);
  // Acklam's approximation (relative error below 1.2e-9), coefficients from memory; the Halley
  // steps below make the result exact to rounding whatever the starting error.
  static constexpr double a[] = {-3.969683028665376e+01, 2.209460984245205e+02, -2.759285104469687e+02,
                                 1.383577518672690e+02,  -3.066479806614716e+01, 2.506628277459239e+00};
  static constexpr double b[] = {-5.447609879822406e+01, 1.615858368580409e+02, -1.556989798598866e+02,
                                 6.680131188771972e+01,  -1.328068155288572e+01};
  static constexpr double c[] = {-7.784894002430293e-03, -3.223964580411365e-01, -2.400758277161838e+00,
                                 -2.549732539343734e+00, 4.374664141464968e+00,  2.938163982698783e+00};
  static constexpr double d[] = {7.784695709041462e-03, 3.224671290700398e-01, 2.445134137142996e+00,
                                 3.754408661907416e+00};
  double x;
  if (p < 0.02425) {
    const double q = std::sqrt(-2.0 * std::log(p));
    x = (((((c[0] * q + c[1]) * q + c[2]) * q + c[3]) * q + c[4]) * q + c[5]) /
        ((((d[0] * q + d[1]) * q + d[2]) * q + d[3]) * q + 1.0);
  } else {
    const double q = p - 0.5;
    const double r = q * q;
    x = (((((a[0] * r + a[1]) * r + a[2]) * r + a[3]) * r + a[4]) * r + a[5]) * q /
        (((((b[0] * r + b[1]) * r + b[2]) * r + b[3]) * r + b[4]) * r + 1.0);
  }
  for (int it = 0; it < 2; ++it) {
    const double e = normal_cdf(x) - p;
    const double u = e * std::sqrt(kTwoPi) * std::exp(0.5 * x * x);
    x -= u / (1.0 + 0.5 * x * u);
  }
  return x;
}

double bivariate_normal_cdf(double h, double k, double rho) noexcept {
  if (std::isnan(h) || std::isnan(k) || std::isnan(rho)) return std::numeric_limits<double>::quiet_NaN();
  rho = std::clamp(rho, -1.0, 1.0);
  if (h == -std::numeric_limits<double>::infinity() || k == -std::numeric_limits<double>::infinity()) return 0.0;
  if (h == std::numeric_limits<double>::infinity()) return normal_cdf(k);
  if (k == std::numeric_limits<double>::infinity()) return normal_cdf(h);
  // Phi2(h, k; rho) = P(X > -h, Y > -k).
  const double ar = std::abs(rho);
  double p;
  if (ar < 0.3) p = upper_probability(-h, -k, rho, rule6());
  else if (ar < 0.75) p = upper_probability(-h, -k, rho, rule12());
  else p = upper_probability(-h, -k, rho, rule20());
  return std::clamp(p, 0.0, 1.0);
}

double bivariate_normal_density(double h, double k, double rho) noexcept {
  if (std::isinf(h) || std::isinf(k)) return 0.0;
  const double s = (1.0 - rho) * (1.0 + rho);
  return std::exp(-0.5 * (h * h - 2.0 * rho * h * k + k * k) / s) / (kTwoPi * std::sqrt(s));
}

}  // namespace lode
