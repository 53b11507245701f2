// Pairwise-complete Pearson correlations from products of the zero-filled data and its answer mask
// (core/src/correlation_pairwise.cpp): against the former algorithm, against pandas' pairwise
// DataFrame.corr run live, and the data report's counts against direct counting.
#include "lode/bootstrap.hpp"
#include "lode/correlation.hpp"
#include "lode/random.hpp"
#include "../../core/src/correlation_detail.hpp"
#include "support/bounds.hpp"
#include "support/errors.hpp"
#include "support/external.hpp"

#include <gtest/gtest.h>

#include <cmath>

using namespace lode;
using lode::testing::run_python;

namespace {

// Five-point survey items on two factors, a share of the cells blank; one column far from zero
// (responses coded around 1e6) to exercise the centring, and one row with every item blank.
Matrix survey_with_blanks(Index n, Index p, std::uint64_t seed, double blank_share) {
  auto rng = random_stream(seed, 0);
  const Matrix f = standard_normal_matrix(n, 2, rng), e = standard_normal_matrix(n, p, rng);
  Matrix x(n, p);
  for (Index j = 0; j < p; ++j) x.col(j) = 0.7 * f.col(j % 2) + 0.6 * e.col(j);
  x = (x.array() * 1.2 + 3.0).round().max(1.0).min(5.0).matrix();
  x.col(p - 1) = x.col(p - 1).array() * 0.25 + 1e6;
  std::uniform_real_distribution<double> u(0.0, 1.0);
  for (Index i = 0; i < n; ++i)
    for (Index j = 0; j < p; ++j)
      if (u(rng) < blank_share) x(i, j) = std::nan("");
  x.row(n / 2).setConstant(std::nan(""));
  return x;
}

// The former pairwise algorithm, kept here as the reference for "results unchanged": centre each
// column by its answered mean, then per pair take the sums by Eigen's general products of the mask M
// and the zero-filled centred data Z over the whole data at once.
Matrix former_pairwise(const Matrix& data) {
  const Index n = data.rows(), p = data.cols();
  Matrix m(n, p), z(n, p);
  for (Index j = 0; j < p; ++j) {
    double sum = 0.0;
    Index count = 0;
    for (Index i = 0; i < n; ++i)
      if (!std::isnan(data(i, j))) {
        sum += data(i, j);
        ++count;
      }
    const double mean = sum / static_cast<double>(count);
    for (Index i = 0; i < n; ++i) {
      m(i, j) = std::isnan(data(i, j)) ? 0.0 : 1.0;
      z(i, j) = std::isnan(data(i, j)) ? 0.0 : data(i, j) - mean;
    }
  }
  const Matrix nn = m.transpose() * m, sx = z.transpose() * m, sxx = z.array().square().matrix().transpose() * m,
               sxy = z.transpose() * z;
  Matrix r = Matrix::Identity(p, p);
  for (Index j = 0; j < p; ++j)
    for (Index i = j + 1; i < p; ++i) {
      const double nij = nn(i, j);
      const double cov = sxy(i, j) - sx(i, j) * sx(j, i) / nij;
      const double vi = sxx(i, j) - sx(i, j) * sx(i, j) / nij, vj = sxx(j, i) - sx(j, i) * sx(j, i) / nij;
      r(i, j) = r(j, i) = cov / std::sqrt(vi * vj);
    }
  return r;
}

// How much shifting by the column means instead of the pair means magnifies the rounding of a pair's
// sums: Sum z_i^2 over the pair's rows = S_ii + n_ij d_i^2 (d_i = pair mean - column mean), so the
// bound of tests/support/bounds.hpp grows by sqrt((1 + n d_i^2 / S_ii)(1 + n d_j^2 / S_jj)).
double shift_factor(const Matrix& x) {
  const Index p = x.cols();
  double worst = 1.0;
  for (Index a = 0; a < p; ++a)
    for (Index b = a + 1; b < p; ++b) {
      const auto ca = x.col(a).array(), cb = x.col(b).array();
      const auto both = (ca == ca) && (cb == cb);
      const double n = static_cast<double>(both.count());
      auto grow = [&](const auto& c) {
        const double column = c.isNaN().select(0.0, c).sum() / static_cast<double>((c == c).count());
        const double pair = both.select(c, 0.0).sum() / n;
        const double s = both.select((c - pair).square(), 0.0).sum();
        return 1.0 + n * (pair - column) * (pair - column) / s;
      };
      worst = std::max(worst, std::sqrt(grow(ca) * grow(cb)));
    }
  return worst;
}

}  // namespace

TEST(PairwiseCorrelation, EqualsTheFormerAlgorithmToOneInATrillion) {
  // Several chunks of 8192 rows and a short last block; 13 items (not a multiple of the kernel's 4).
  for (const double share : {0.05, 0.4}) {
    const Matrix x = survey_with_blanks(20011, 13, 31, share);
    CorrelationOptions one, two;
    one.threads = 1;
    two.threads = 2;
    const CorrelationResult r = correlation(x, one);
    // Both sides' sums of 20,011 terms are within gamma_n of exact, ~5e-12 relative to the sums at
    // worst, in practice ~1e-15: the requirement is 1e-12 on the correlations (scale 1).
    EXPECT_LT((r.matrix - former_pairwise(x)).cwiseAbs().maxCoeff(), 1e-12) << "blank share " << share;
    EXPECT_EQ(r.matrix, correlation(x, two).matrix);  // bitwise: chunk sums are added in a fixed order
    // The data report, against direct counting.
    const auto present = (x.array() == x.array());
    for (Index a = 0; a < x.cols(); ++a)
      for (Index b = 0; b < x.cols(); ++b)
        ASSERT_EQ(r.report.pair_counts(a, b), (present.col(a) && present.col(b)).count());
    Index complete = 0, used = 0;
    for (Index i = 0; i < x.rows(); ++i) {
      complete += present.row(i).all();
      used += present.row(i).any();
    }
    EXPECT_EQ(r.report.rows_complete, complete);
    EXPECT_EQ(r.report.rows_used, used);
    EXPECT_EQ(r.report.rows_used, x.rows() - 1);
    EXPECT_DOUBLE_EQ(r.report.missing_fraction, 1.0 - static_cast<double>(present.count()) / static_cast<double>(x.size()));
    EXPECT_EQ(r.n_obs, r.report.pair_counts.minCoeff());
  }
}

TEST(PairwiseCorrelation, MatchesPandasPairwiseCorr) {
  const Matrix x = survey_with_blanks(30000, 9, 32, 0.05);
  const Index p = x.cols();
  // Reference: pandas DataFrame.corr() (method='pearson', pairwise-complete by default), run live.
  const auto ref = run_python("import pandas as pd\nemit('r', pd.DataFrame(X).corr().to_numpy())", {{"X", x}});
  const Matrix diff = (correlation(x).matrix - ref.at("r")).cwiseAbs();
  // Bound: both sides' rounding of sums of 30,000 products (tests/support/bounds.hpp), magnified by
  // this path's shift from the pair means (shift_factor).
  const double tolerance = lode::testing::correlation_gap_bound(30000.0) * shift_factor(x);
  EXPECT_LT(diff.topLeftCorner(p - 1, p - 1).maxCoeff(), tolerance);
  // pandas updates its means and co-moments row by row (Welford's method), whose rounding grows with
  // the condition kappa = sqrt(1 + mean^2 / variance) of an item: n kappa u relative (Chan, Golub &
  // LeVeque 1983, "Algorithms for computing the sample variance", updating algorithm). The last item
  // is coded around 1e6 with a spread of about 0.3 (kappa ~ 3e6): its correlations get that bound.
  const auto last = x.col(p - 1).array();
  const auto answered = last == last;
  const double mean = answered.select(last, 0.0).sum() / static_cast<double>(answered.count());
  const double variance = answered.select((last - mean).square(), 0.0).sum() / static_cast<double>(answered.count());
  const double kappa = std::sqrt(1.0 + mean * mean / variance);
  EXPECT_LT(diff.col(p - 1).maxCoeff(), tolerance + 2.0 * lode::testing::gamma_n(30000.0) * kappa);
}

TEST(PairwiseCorrelation, IntakeChecksWordAsBefore) {
  Matrix x = survey_with_blanks(500, 4, 33, 0.1);
  Matrix constant = x;
  for (Index i = 0; i < constant.rows(); ++i)
    if (!std::isnan(constant(i, 2))) constant(i, 2) = 4.0;
  // The same words as validate_data's (tests/core/correlation_test.cpp checks those).
  EXPECT_NE(lode::testing::error_message([&] { correlation(constant); }).find("column 3 is constant"), std::string::npos);
  Matrix infinite = x;
  infinite(7, 1) = INFINITY;
  EXPECT_NE(lode::testing::error_message([&] { correlation(infinite); }).find("column 2 holds an infinite value in row 8"),
            std::string::npos);
  // Huge codes take the rescaled path and give the same correlations.
  Matrix huge = x;
  huge.col(0) *= 0x1p400;
  EXPECT_LT((correlation(huge).matrix - correlation(x).matrix).cwiseAbs().maxCoeff(), 1e-15);
}

TEST(PairwiseCorrelation, ResamplesFromRowCountsEqualTheCopiedRows) {
  // The bootstrap's resamples (row counts as weights, nothing copied) against the former algorithm on
  // the rows drawn, copied, and against correlation() of the copy with its data report; 5% and 40%
  // blanks, several chunks of distinct rows.
  for (const double share : {0.05, 0.4}) {
    const Matrix x = survey_with_blanks(24000, 11, 34, share);
    const detail::ResampleCorrelation resampled(x, {});
    for (std::uint64_t draw = 0; draw < 3; ++draw) {
      auto rng = random_stream(35, draw);
      std::uniform_int_distribution<Index> pick(0, x.rows() - 1);
      std::vector<Index> rows(static_cast<std::size_t>(x.rows()));
      for (auto& r : rows) r = pick(rng);
      const Matrix copied = x(rows, Eigen::all);
      const CorrelationResult got = resampled.resample(rows), copy = correlation(copied);
      EXPECT_LT((got.matrix - former_pairwise(copied)).cwiseAbs().maxCoeff(), 1e-12) << share << " " << draw;
      EXPECT_LT((got.matrix - copy.matrix).cwiseAbs().maxCoeff(), 1e-12);
      EXPECT_EQ(got.report.pair_counts, copy.report.pair_counts);
      EXPECT_EQ(got.report.rows_complete, copy.report.rows_complete);
      EXPECT_EQ(got.report.rows_used, copy.report.rows_used);
      EXPECT_EQ(got.n_obs, copy.n_obs);
      EXPECT_DOUBLE_EQ(got.report.missing_fraction, copy.report.missing_fraction);
    }
  }
}

TEST(PairwiseCorrelation, BootstrapDrawsTheSameRowsAndCorrelatesThemAsBefore) {
  // The bootstrap's random streams are untouched: replicate i still draws its rows from stream i of the
  // seed, and the correlations it fits (now from row counts) equal the former algorithm's on those rows,
  // copied, to 1e-12; so its intervals are those of before to the same order. A recording fitter
  // (one thread: replicates run in order) captures what each replicate fits.
  const Matrix x = survey_with_blanks(3000, 8, 36, 0.05);
  std::vector<Matrix> seen;
  const SolutionFitter record = [&](const Matrix& r) {
    seen.push_back(r);
    FactorSolution s;
    s.loadings = r.leftCols(2);
    s.uniquenesses = Vector::Ones(r.rows());
    return s;
  };
  FactorSolution full;
  full.loadings = correlation(x).matrix.leftCols(2);
  full.uniquenesses = Vector::Ones(x.cols());
  BootstrapOptions options;
  options.replicates = 12;
  options.seed = 20261203;
  options.threads = 1;
  bootstrap_solution(x, full, record, options);
  ASSERT_EQ(seen.size(), 12u);
  for (std::size_t i = 0; i < seen.size(); ++i) {
    auto rng = random_stream(options.seed, i);
    std::uniform_int_distribution<Index> pick(0, x.rows() - 1);
    std::vector<Index> rows(static_cast<std::size_t>(x.rows()));
    for (auto& r : rows) r = pick(rng);
    EXPECT_LT((seen[i] - former_pairwise(x(rows, Eigen::all))).cwiseAbs().maxCoeff(), 1e-12) << "replicate " << i;
  }
}
