// Distribution functions, checked live against scipy.special and scipy.stats.
#include "lode/distributions.hpp"
#include "support/errors.hpp"
#include "support/external.hpp"

#include <gtest/gtest.h>

#include <cmath>

using namespace lode;
using lode::testing::error_message;
using lode::testing::run_python;

namespace {

// Relative error, except where the reference is zero (log Gamma(1), the median of the normal).
double rel_err(double a, double b) {
  if (b == 0.0) return std::abs(a) < 1e-14 ? 0.0 : 1.0;
  return std::abs(a - b) / std::abs(b);
}

// Reference: scipy.stats.ncx2.cdf and ncx2.sf at the rows (x, df, lambda) of `grid`, as "cdf" and "sf".
auto ncx2_reference(const Matrix& grid) {
  return run_python(R"(
from scipy import stats
x, df, lam = X[:, 0], X[:, 1], X[:, 2]
emit('cdf', stats.ncx2.cdf(x, df, lam)); emit('sf', stats.ncx2.sf(x, df, lam))
)", {{"X", grid}});
}

}  // namespace

TEST(Distributions, GammaFunctionsMatchScipySpecial) {
  Matrix grid(14, 2);  // (a, x)
  grid << 0.5, 0.1, 0.5, 3.0, 1.0, 1.0, 2.5, 0.7, 3.0, 9.0, 7.5, 7.0, 12.0, 3.0, 12.0, 30.0, 40.0, 41.0, 150.0, 120.0,
      150.0, 190.0, 1000.0, 1010.0, 5000.0, 4800.0, 0.01, 2.0;
  // Reference: scipy.special.gammaln, gammainc (regularised P), gammaincc (regularised Q).
  const auto ref = run_python(R"(
from scipy import special
a, x = X[:, 0], X[:, 1]
emit('lg', special.gammaln(a)); emit('p', special.gammainc(a, x)); emit('q', special.gammaincc(a, x))
)", {{"X", grid}});
  for (Index i = 0; i < grid.rows(); ++i) {
    const double a = grid(i, 0), x = grid(i, 1);
    SCOPED_TRACE(::testing::Message() << "a=" << a << " x=" << x);
    EXPECT_LT(rel_err(log_gamma(a), ref.at("lg")(i, 0)), 1e-13);
    EXPECT_LT(rel_err(gamma_p(a, x), ref.at("p")(i, 0)), 1e-11);
    EXPECT_LT(rel_err(gamma_q(a, x), ref.at("q")(i, 0)), 1e-11);
  }
}

TEST(Distributions, NormalAndChiSquareMatchScipyStats) {
  Matrix grid(9, 3);  // (x, df, probability)
  grid << 0.5, 1, 0.001, 3.84, 1, 0.05, 10.0, 5, 0.5, 0.2, 3, 0.95, 45.0, 20, 0.999, 1500.0, 1400, 0.3, 300.0, 12, 1e-10,
      7.0, 0.7, 0.9999, 25.0, 6, 0.025;
  // Reference: scipy.stats.norm.cdf/ppf and scipy.stats.chi2.cdf/sf/ppf.
  const auto ref = run_python(R"(
from scipy import stats
x, df, pr = X[:, 0], X[:, 1], X[:, 2]
emit('ncdf', stats.norm.cdf(x - 5.0)); emit('nppf', stats.norm.ppf(pr))
emit('cdf', stats.chi2.cdf(x, df)); emit('sf', stats.chi2.sf(x, df)); emit('ppf', stats.chi2.ppf(pr, df))
)", {{"X", grid}});
  for (Index i = 0; i < grid.rows(); ++i) {
    const double x = grid(i, 0), df = grid(i, 1), pr = grid(i, 2);
    SCOPED_TRACE(::testing::Message() << "x=" << x << " df=" << df << " p=" << pr);
    EXPECT_LT(rel_err(normal_cdf(x - 5.0), ref.at("ncdf")(i, 0)), 1e-13);
    EXPECT_LT(rel_err(normal_quantile(pr), ref.at("nppf")(i, 0)), 1e-12);
    EXPECT_LT(rel_err(chi_square_cdf(x, df), ref.at("cdf")(i, 0)), 1e-11);
    EXPECT_LT(rel_err(chi_square_sf(x, df), ref.at("sf")(i, 0)), 1e-11);
    EXPECT_LT(rel_err(chi_square_quantile(pr, df), ref.at("ppf")(i, 0)), 1e-10);
  }
}

TEST(Distributions, NoncentralChiSquareMatchesScipyNcx2) {
  Matrix grid(10, 3);  // (x, df, lambda)
  grid << 5.0, 3, 1.0, 20.0, 8, 10.0, 2.0, 2, 30.0, 200.0, 150, 40.0, 60.0, 12, 0.5, 1000.0, 900, 300.0, 80.0, 4, 20.0,
      0.3, 1, 0.2, 400.0, 50, 500.0, 15.0, 24, 2.0;
  const auto ref = ncx2_reference(grid);
  for (Index i = 0; i < grid.rows(); ++i) {
    const double x = grid(i, 0), df = grid(i, 1), lam = grid(i, 2);
    SCOPED_TRACE(::testing::Message() << "x=" << x << " df=" << df << " lambda=" << lam);
    EXPECT_LT(rel_err(noncentral_chi_square_cdf(x, df, lam), ref.at("cdf")(i, 0)), 1e-8);
    EXPECT_LT(rel_err(noncentral_chi_square_sf(x, df, lam), ref.at("sf")(i, 0)), 1e-8);
  }
}

TEST(Distributions, NoncentralityInversionMatchesScipyRootFinding) {
  Matrix cases(5, 3);  // (x, df, target probability)
  cases << 85.3, 40, 0.95, 85.3, 40, 0.05, 250.0, 101, 0.05, 30.0, 4, 0.95, 12.0, 24, 0.05;
  // Reference: scipy.optimize.brentq on scipy.stats.ncx2.cdf (0 when the central cdf is already below p).
  const auto ref = run_python(R"(
from scipy import stats, optimize
out = []
for x, df, p in X:
    f = lambda lam: stats.ncx2.cdf(x, df, lam) - p if lam > 0 else stats.chi2.cdf(x, df) - p
    out.append(0.0 if f(0.0) <= 0 else optimize.brentq(f, 0.0, 10 * x + 100, xtol=1e-13, rtol=1e-14))
emit('lam', np.array(out))
)", {{"X", cases}});
  for (Index i = 0; i < cases.rows(); ++i) {
    SCOPED_TRACE(::testing::Message() << "case " << i);
    const double lam = noncentrality_for_cdf(cases(i, 0), cases(i, 1), cases(i, 2));
    EXPECT_NEAR(lam, ref.at("lam")(i, 0), 1e-6 * std::max(1.0, lam));
  }
  EXPECT_EQ(ref.at("lam")(4, 0), 0.0);  // the central chi-square(24) cdf at 12 is below 0.05: lambda = 0
}

// Past a chi-square of 200,000 the noncentral chi-square uses its Edgeworth expansion (a time that
// does not grow with the arguments; the RMSEA interval of a sample of 1e9 depends on it).
TEST(Distributions, LargeNoncentralChiSquareMatchesScipyNcx2) {
  Matrix grid(8, 3);  // (x, df, lambda)
  grid << 2e5, 13, 2e5, 2.1e5, 13, 2e5, 1e6, 1000, 0.99e6, 1e7, 44000, 9.95e6, 1e9, 20, 1e9 - 3e4, 1e9, 20, 1e9 + 5e4,
      3e5, 44000, 2.5e5, 5e8, 1, 5e8;
  const auto ref = ncx2_reference(grid);
  for (Index i = 0; i < grid.rows(); ++i) {
    const double x = grid(i, 0), df = grid(i, 1), lam = grid(i, 2);
    SCOPED_TRACE(::testing::Message() << "x=" << x << " df=" << df << " lambda=" << lam);
    // The expansion's error is of order (df + 2 lambda)^-2 (below 1e-10 here); scipy's own is ~1e-12.
    EXPECT_NEAR(noncentral_chi_square_cdf(x, df, lam), ref.at("cdf")(i, 0), 1e-10);
    EXPECT_NEAR(noncentral_chi_square_sf(x, df, lam), ref.at("sf")(i, 0), 1e-10);
  }
  Matrix cases(6, 3);  // (x, df, target probability)
  cases << 2e5, 20, 0.95, 2e5, 20, 0.05, 1.5e7, 44000, 0.95, 1e9, 20, 0.05, 1e9, 20, 0.95, 3e6, 1, 0.5;
  // Reference: scipy.optimize.brentq on scipy.stats.ncx2.cdf, bracketed 20 standard deviations out.
  const auto inv = run_python(R"(
from scipy import stats, optimize
out = []
for x, df, p in X:
    s = np.sqrt(2 * (df + 2 * x))
    out.append(optimize.brentq(lambda lam: stats.ncx2.cdf(x, df, lam) - p, x - df - 20 * s, x - df + 20 * s,
                               xtol=1e-9, rtol=1e-15))
emit('lam', np.array(out))
)", {{"X", cases}});
  for (Index i = 0; i < cases.rows(); ++i) {
    SCOPED_TRACE(::testing::Message() << "case " << i);
    const double lam = noncentrality_for_cdf(cases(i, 0), cases(i, 1), cases(i, 2));
    EXPECT_NEAR(lam, inv.at("lam")(i, 0), 1e-11 * lam);
  }
  // Far beyond scipy: a chi-square of 9e18 (a sample size of 2^63 - 1) still inverts, to within a
  // few standard deviations of x - df (the distribution is nearly normal there).
  const double x = 9e18, df = 20, sd = std::sqrt(2.0 * (df + 2.0 * x));
  const double lower = noncentrality_for_cdf(x, df, 0.95), upper = noncentrality_for_cdf(x, df, 0.05);
  EXPECT_NEAR(lower, x - df - 1.6448536269514722 * sd, 1e-5 * sd);  // normal quantile (scipy.stats.norm.ppf)
  EXPECT_NEAR(upper, x - df + 1.6448536269514722 * sd, 1e-5 * sd);
}

TEST(Distributions, RejectsArgumentsOutsideTheirDomain) {
  EXPECT_THROW(
      {
        try {
          chi_square_cdf(3.0, 0.0);
        } catch (const Error& e) {
          EXPECT_STREQ(e.what(), "chi-square degrees of freedom must be positive; got 0");
          throw;
        }
      },
      Error);
  EXPECT_EQ(error_message([] { return gamma_p(-1.0, 1.0); }), "the incomplete gamma function needs a > 0; got -1");
  EXPECT_EQ(error_message([] { return noncentral_chi_square_cdf(1.0, 2.0, -0.5); }),
            "the noncentrality parameter must be finite and non-negative; got -0.5");
  EXPECT_EQ(error_message([] { return log_gamma(0.0); }), "log_gamma needs a positive finite argument; got 0");
}

TEST(Distributions, QuantileType7MatchesNumpyPercentile) {
  // numpy.percentile's default (linear, Hyndman & Fan type 7), run live, on samples with ties, of one
  // value, and at the ends q = 0 and 1.
  const std::vector<Index> sizes = {1, 2, 7, 1000};
  const std::vector<double> qs = {0.0, 0.025, 0.5, 0.95, 0.975, 1.0};
  for (Index n : sizes) {
    Matrix x(n, 1);
    for (Index i = 0; i < n; ++i) x(i, 0) = std::round(10.0 * std::sin(1.7 * static_cast<double>(i * i) + 0.3));
    Matrix q = Eigen::Map<const Vector>(qs.data(), static_cast<Index>(qs.size()));
    const auto ref = run_python("emit('v', np.percentile(X.ravel(), 100 * Q.ravel()))", {{"X", x}, {"Q", q}});
    for (Index k = 0; k < q.rows(); ++k) {
      std::vector<double> values(x.data(), x.data() + n);
      EXPECT_NEAR(quantile_type7(values, q(k, 0)), ref.at("v")(k, 0), 1e-12) << "n " << n << " q " << q(k, 0);
    }
  }
}
