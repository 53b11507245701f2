// Correlation matrices and data intake, checked against R's base stats::cor and numpy.
#include "lode/correlation.hpp"
#include "lode/random.hpp"
#include "../../core/src/correlation_detail.hpp"
#include "support/bounds.hpp"
#include "support/errors.hpp"
#include "support/external.hpp"

#include <gtest/gtest.h>

#include <cmath>

using namespace lode;
using lode::testing::error_message;
using lode::testing::run_python;
using lode::testing::run_r;

namespace {

Matrix survey_like(Index n, Index p, std::uint64_t seed, double missing_share) {
  auto rng = random_stream(seed, 0);
  Matrix f = standard_normal_matrix(n, 2, rng);
  Matrix e = standard_normal_matrix(n, p, rng);
  Matrix x(n, p);
  for (Index j = 0; j < p; ++j) x.col(j) = 0.7 * f.col(j % 2) + 0.6 * e.col(j);
  // Five-point items: rounding makes ties, which Spearman must average.
  x = (x.array() * 1.2 + 3.0).round().max(1.0).min(5.0).matrix();
  std::uniform_real_distribution<double> u(0.0, 1.0);
  for (Index i = 0; i < n; ++i)
    for (Index j = 0; j < p; ++j)
      if (u(rng) < missing_share) x(i, j) = std::nan("");
  return x;
}

}  // namespace

TEST(Correlation, PearsonAndSpearmanMatchRCor) {
  const Matrix x = survey_like(300, 6, 11, 0.08);
  // Reference: R's base stats::cor with use="pairwise.complete.obs" and "complete.obs".
  const auto ref = run_r(R"(
    emit("pp", cor(X, use = "pairwise.complete.obs"))
    emit("pl", cor(X, use = "complete.obs"))
    emit("sp", cor(X, use = "pairwise.complete.obs", method = "spearman"))
    emit("sl", cor(X, use = "complete.obs", method = "spearman"))
    emit("nc", sum(complete.cases(X)))
  )", {{"X", x}});
  CorrelationOptions o;
  o.missing = MissingPolicy::pairwise;
  EXPECT_LT((correlation(x, o).matrix - ref.at("pp")).cwiseAbs().maxCoeff(), 1e-12);
  o.kind = CorrelationKind::spearman;
  EXPECT_LT((correlation(x, o).matrix - ref.at("sp")).cwiseAbs().maxCoeff(), 1e-12);
  o.missing = MissingPolicy::listwise;
  const auto sl = correlation(x, o);
  EXPECT_LT((sl.matrix - ref.at("sl")).cwiseAbs().maxCoeff(), 1e-12);
  EXPECT_EQ(sl.n_obs, static_cast<Index>(ref.at("nc")(0, 0)));
  o.kind = CorrelationKind::pearson;
  EXPECT_LT((correlation(x, o).matrix - ref.at("pl")).cwiseAbs().maxCoeff(), 1e-12);
}

TEST(Correlation, CompleteDataMatchesNumpyCorrcoef) {
  const Matrix x = survey_like(500, 8, 5, 0.0);
  // Reference: numpy.corrcoef (columns as variables).
  const auto ref = run_python("emit('r', np.corrcoef(X, rowvar=False))", {{"X", x}});
  const auto r = correlation(x);
  EXPECT_LT((r.matrix - ref.at("r")).cwiseAbs().maxCoeff(), 1e-12);
  EXPECT_EQ(r.n_obs, 500);
  EXPECT_TRUE(r.positive_definite);
}

TEST(Correlation, NearestCorrelationMatchesHighamExample) {
  // Higham (2002), section 4 example: A = [[1,1,0],[1,1,1],[0,1,1]] has nearest correlation matrix
  // with off-diagonal entries 0.7607 (1,2 and 2,3) and 0.1573 (1,3), to four decimals.
  Matrix a(3, 3);
  a << 1, 1, 0, 1, 1, 1, 0, 1, 1;
  SmoothingReport rep;
  const Matrix x = nearest_correlation(a, 0.0, &rep, 10000, 1e-12);
  EXPECT_NEAR(x(0, 1), 0.7607, 5e-5);
  EXPECT_NEAR(x(1, 2), 0.7607, 5e-5);
  EXPECT_NEAR(x(0, 2), 0.1573, 5e-5);
  EXPECT_TRUE(rep.convergence.converged);
}

TEST(Correlation, PairwiseIndefiniteMatrixIsFlaggedAndSmoothedOnRequest) {
  Matrix r(3, 3);
  r << 1, 0.9, -0.9, 0.9, 1, 0.9, -0.9, 0.9, 1;  // not positive semidefinite
  auto flagged = correlation_from_matrix(r, 100);
  EXPECT_FALSE(flagged.positive_definite);
  EXPECT_FALSE(flagged.notes.empty());
  CorrelationOptions o;
  o.smooth_if_not_positive_definite = true;
  auto smoothed = correlation_from_matrix(r, 100, o);
  EXPECT_TRUE(smoothed.positive_definite);
  EXPECT_TRUE(smoothed.smoothing.applied);
  EXPECT_GT(smoothed.smoothing.max_abs_change, 0.1);
  EXPECT_GE(eigenvalues_descending(smoothed.matrix).minCoeff(), 0.9e-6);
}

TEST(Correlation, SmcAndReducedEigenvaluesMatchNumpy) {
  const Matrix x = survey_like(400, 7, 3, 0.0);
  const Matrix r = correlation(x).matrix;
  // Reference: numpy.linalg.inv and numpy.linalg.eigvalsh.
  const auto ref = run_python(R"(
smc = 1 - 1 / np.diag(np.linalg.inv(R))
emit('smc', smc)
emit('ev', np.sort(np.linalg.eigvalsh(R))[::-1])
Rr = R.copy(); np.fill_diagonal(Rr, smc)
emit('rev', np.sort(np.linalg.eigvalsh(Rr))[::-1])
)", {{"R", r}});
  EXPECT_LT((squared_multiple_correlations(r) - ref.at("smc")).cwiseAbs().maxCoeff(), 1e-12);
  EXPECT_LT((eigenvalues_descending(r) - ref.at("ev")).cwiseAbs().maxCoeff(), 1e-12);
  EXPECT_LT((reduced_eigenvalues(r) - ref.at("rev")).cwiseAbs().maxCoeff(), 1e-12);
}

TEST(CorrelationErrors, MessagesNameTheProblem) {
  Matrix x = survey_like(50, 4, 1, 0.0);
  Matrix two = x.leftCols(2);
  EXPECT_NE(error_message([&] { correlation(two); }).find("at least 3 items"), std::string::npos);
  Matrix constant = x;
  constant.col(2).setConstant(4.0);
  CorrelationOptions named;
  named.item_names = {"q1", "q2", "q3", "q4"};
  EXPECT_NE(error_message([&] { correlation(constant, named); }).find("'q3' is constant"), std::string::npos);
  Matrix inf = x;
  inf(7, 1) = INFINITY;
  EXPECT_NE(error_message([&] { correlation(inf); }).find("column 2 holds an infinite value in row 8"), std::string::npos);
  Matrix sparse = x;
  for (Index i = 0; i < 48; ++i) sparse(i, 3) = std::nan("");
  EXPECT_NE(error_message([&] { correlation(sparse); }).find("answered in only 2 of 50 rows"), std::string::npos);
  Matrix holes = x;
  for (Index i = 0; i < 49; ++i) holes(i, i % 4) = std::nan("");
  CorrelationOptions listwise;
  listwise.missing = MissingPolicy::listwise;
  EXPECT_NE(error_message([&] { correlation(holes, listwise); }).find("only 1 of 50 rows survive listwise deletion"),
            std::string::npos);
  Matrix asym = Matrix::Identity(3, 3);
  asym(0, 1) = 0.5;
  EXPECT_NE(error_message([&] { correlation_from_matrix(asym, 10); }).find("not symmetric"), std::string::npos);
}

TEST(Correlation, LargeDataAcrossChunksMatchesRAndIgnoresThreadCount) {
  // More rows than one processing chunk (8192), with and without missing values.
  const Matrix full = survey_like(20000, 5, 21, 0.0);
  const Matrix holes = survey_like(20000, 5, 22, 0.05);
  // Reference: R's base stats::cor.
  const auto ref = run_r(R"(
    emit("full", cor(A))
    emit("holes", cor(B, use = "pairwise.complete.obs"))
  )", {{"A", full}, {"B", holes}});
  CorrelationOptions one, two;
  one.threads = 1;
  two.threads = 2;
  const Matrix f1 = correlation(full, one).matrix, f2 = correlation(full, two).matrix;
  const Matrix h1 = correlation(holes, one).matrix, h2 = correlation(holes, two).matrix;
  // Sums of up to 20,000 products on each side: the bound, not a fixed 1e-12 (tests/support/bounds.hpp).
  const double tolerance = lode::testing::correlation_gap_bound(20000.0);
  EXPECT_LT((f1 - ref.at("full")).cwiseAbs().maxCoeff(), tolerance);
  EXPECT_LT((h1 - ref.at("holes")).cwiseAbs().maxCoeff(), tolerance);
  EXPECT_EQ(f1, f2);  // bitwise: chunks are summed in a fixed order
  EXPECT_EQ(h1, h2);
}

TEST(Correlation, ResampledCorrelationsMatchNumpyAndCorrelationOfTheCopiedRows) {
  // The bootstrap's resample correlations (from row counts, without copying rows) against
  // numpy.corrcoef of the rows drawn (run live), and against correlation() of the copied rows, with and
  // without blanks; a resample in which an item has one value only is refused with correlation()'s message.
  const Matrix x = survey_like(200, 7, 12, 0.0);
  const detail::ResampleCorrelation resampled(x, {});
  auto rng = random_stream(3, 0);
  std::uniform_int_distribution<Index> pick(0, x.rows() - 1);
  std::vector<Index> rows(static_cast<std::size_t>(x.rows()));
  for (auto& r : rows) r = pick(rng);
  const Matrix got = resampled.resample(rows).matrix;
  const Matrix copied = x(rows, Eigen::all);
  const auto ref = run_python("emit('r', np.corrcoef(X, rowvar=False))", {{"X", copied}});
  const double tolerance = lode::testing::correlation_gap_bound(200.0);  // tests/support/bounds.hpp
  EXPECT_LT((got - ref.at("r")).cwiseAbs().maxCoeff(), tolerance);
  EXPECT_LT((got - correlation(copied).matrix).cwiseAbs().maxCoeff(), tolerance);

  // With blanks the sums are taken about the whole data's means rather than the resample's: the same
  // numbers to rounding (sums of 200 terms, tests/support/bounds.hpp; the shift is a fraction of a
  // standard deviation here).
  const Matrix gaps = survey_like(200, 7, 13, 0.05);
  const detail::ResampleCorrelation with_gaps(gaps, {});
  EXPECT_LT((with_gaps.resample(rows).matrix - correlation(gaps(rows, Eigen::all)).matrix).cwiseAbs().maxCoeff(),
            4.0 * tolerance);

  Matrix rare = x;
  rare.col(4).setConstant(3.0);
  rare(17, 4) = 5.0;  // only row 18 differs
  CorrelationOptions named;
  named.item_names = {"a", "b", "c", "d", "trust", "f", "g"};
  const detail::ResampleCorrelation rare_resampled(rare, named);
  std::vector<Index> without(rows.size(), 0);
  for (std::size_t t = 0; t < rows.size(); ++t) without[t] = rows[t] == 17 ? 16 : rows[t];
  try {
    rare_resampled.resample(without);
    ADD_FAILURE() << "no error";
  } catch (const Error& e) {
    EXPECT_EQ(e.code(), ErrorCode::insufficient_data);
    EXPECT_STREQ(e.what(), "item 'trust' is constant (every answer is 3); remove it, it carries no information");
  }
  without[0] = 17;
  EXPECT_LT((rare_resampled.resample(without).matrix - correlation(rare(without, Eigen::all)).matrix).cwiseAbs().maxCoeff(),
            1e-13);
}

TEST(Correlation, CrossProductKernelsAgreeAndMatchNumpy) {
  // Row and column counts that are not multiples of the kernel's tiles (4 x 2 columns, 4 rows) nor of its
  // blocks (256 rows) or chunks (8192 rows); the mean of one column far from zero.
  Matrix x = survey_like(17003, 13, 31, 0.0);
  x.col(4).array() += 250.0;
  // Reference: numpy.cov (two-pass, about the mean) times n - 1 = sums of squares and cross-products.
  const auto ref = run_python("emit('s', np.cov(X, rowvar=False) * (X.shape[0] - 1))", {{"X", x}});
  const Matrix reference = ref.at("s");
  // Relative to scale(a) scale(b), which bounds sum |x_a x_b| (Cauchy-Schwarz): each side is a sum of n
  // products, so the two agree to within 2 gamma_n (tests/support/bounds.hpp; Higham 2002, Lemma 3.1),
  // plus the rounding of the centring (about u times |mean| / sd per term; the offset column's mean is
  // 250 and every sd here is above 0.5): whatever BLAS numpy runs on.
  const Vector scale = reference.diagonal().cwiseSqrt();
  const double n = static_cast<double>(x.rows());
  const double tolerance = lode::testing::two_sided_sum_bound(n) + 4.0 * 250.0 * lode::testing::unit_roundoff / 0.5;
  auto relative_gap = [&](const Matrix& a_side, const Matrix& b_side) {
    double worst = 0.0;
    for (Index a = 0; a < x.cols(); ++a)
      for (Index b = 0; b <= a; ++b)
        worst = std::max(worst, std::abs(a_side(a, b) - b_side(a, b)) / (scale(a) * scale(b)));
    return worst;
  };
  const Matrix portable = detail::centred_cross_products(x, 2, detail::CrossProductKernel::portable);
  EXPECT_LT(relative_gap(portable, reference), tolerance);
  if (!detail::avx2_cross_products_available()) GTEST_SKIP() << "this processor has no AVX2 + FMA";
  const Matrix avx2 = detail::centred_cross_products(x, 2, detail::CrossProductKernel::avx2);
  EXPECT_LT(relative_gap(avx2, reference), tolerance);
  EXPECT_LT(relative_gap(avx2, portable), tolerance);  // the two kernels: the same bound
  EXPECT_EQ(avx2, detail::centred_cross_products(x, 1, detail::CrossProductKernel::avx2).eval());
}

TEST(Correlation, LargeOffsetColumnMatchesNumpyCorrcoef) {
  // A column of values around 1e6 with small noise (sd 0.01) tied to the others: the sums are
  // taken about each chunk's mean and combined exactly, so the offset costs no accuracy.
  Matrix x = survey_like(30000, 6, 41, 0.0);
  auto rng = random_stream(41, 1);
  const Matrix noise = standard_normal_matrix(x.rows(), 1, rng);
  x.col(5) = (1e6 + 0.01 * (x.col(0) + noise.col(0)).array()).matrix();
  // Reference: numpy.corrcoef (columns as variables).
  const auto ref = run_python("emit('r', np.corrcoef(X, rowvar=False))", {{"X", x}});
  EXPECT_LT((correlation(x).matrix - ref.at("r")).cwiseAbs().maxCoeff(), 1e-10);
}

TEST(CorrelationErrors, CompleteDataChecksAcrossChunksWordAsTheInputChecks) {
  // The checks folded into the summing pass must fail as validate_data does, on problems placed in
  // later chunks (rows beyond 8192).
  const Matrix x = survey_like(20000, 5, 51, 0.0);
  CorrelationOptions named;
  named.item_names = {"a", "b", "c", "d", "e"};
  Matrix inf = x;
  inf(17000, 3) = -INFINITY;
  inf(9000, 3) = INFINITY;
  inf(12000, 4) = INFINITY;
  const std::string inf_message = error_message([&] { correlation(inf, named); });
  EXPECT_NE(inf_message.find("'d' holds an infinite value in row 9001"), std::string::npos) << inf_message;
  EXPECT_EQ(inf_message, error_message([&] { validate_data(inf, named); }));
  Matrix constant = x;
  constant.col(1).setConstant(2.0);
  constant.col(2).setConstant(3.0);
  constant(19999, 2) = 4.0;  // not constant: differs in the last chunk only
  const std::string constant_message = error_message([&] { correlation(constant, named); });
  EXPECT_NE(constant_message.find("'b' is constant (every answer is 2)"), std::string::npos) << constant_message;
  EXPECT_EQ(constant_message, error_message([&] { validate_data(constant, named); }));
  constant.col(1) = x.col(1);
  EXPECT_EQ(error_message([&] { correlation(constant, named); }), "(no error)");
  CorrelationOptions demanding;
  demanding.min_pair_observations = 30000;
  const std::string few = error_message([&] { correlation(x, demanding); });
  EXPECT_NE(few.find("answered in only 20000 of 20000 rows"), std::string::npos) << few;
  EXPECT_EQ(few, error_message([&] { validate_data(x, demanding); }));
  Matrix huge = x;  // finite values whose sums overflow: rescaled, the same correlations as at ordinary scale
  huge.col(0).array() *= 1e306;
  EXPECT_LT((correlation(huge).matrix - correlation(x).matrix).cwiseAbs().maxCoeff(), 1e-13);
}

// Missing-value patterns that leave a pair with fewer rows in common than a coefficient needs: two
// items never answered together (this crashed pairwise Spearman), one shared row, a whole item
// missing. Every kind and policy refuses with a message naming the pair or the item, whatever the
// minimum pair count asked for (below 2 rows there is no coefficient at all).
TEST(Correlation, PairsWithTooFewCommonRowsAreRefusedForEveryKind) {
  const double m = std::nan("");
  Matrix disjoint(8, 3), one_shared(8, 3), whole_missing(6, 3);
  disjoint << 1, 2, m, 2, 3, m, 3, 1, m, 4, 4, m, m, m, 1, m, m, 2, m, m, 3, m, m, 5;
  one_shared = disjoint;
  one_shared(3, 2) = 2;
  whole_missing << 1, m, 2, 2, m, 3, 3, m, 1, 4, m, 4, 2, m, 2, 5, m, 3;
  for (auto kind : {CorrelationKind::pearson, CorrelationKind::spearman, CorrelationKind::polychoric})
    for (Index min_pairs : {0, 1, 3}) {
      CorrelationOptions o;
      o.kind = kind;
      o.min_pair_observations = min_pairs;
      SCOPED_TRACE(std::string(to_string(kind)) + ", min_pair_observations " + std::to_string(min_pairs));
      ErrorCode code{};
      const std::string disjoint_error = lode::testing::error_message([&] { correlation(disjoint, o); }, &code);
      EXPECT_NE(disjoint_error.find("column 1 and column 3 are both answered in only 0 rows"), std::string::npos)
          << disjoint_error;
      EXPECT_EQ(code, ErrorCode::insufficient_data);
      const std::string shared_error = lode::testing::error_message([&] { correlation(one_shared, o); });
      EXPECT_NE(shared_error.find("column 1 and column 3 are both answered in only 1 rows"), std::string::npos)
          << shared_error;
      const std::string whole_error = lode::testing::error_message([&] { correlation(whole_missing, o); });
      EXPECT_NE(whole_error.find("column 2 is answered in only 0"), std::string::npos) << whole_error;
      o.missing = MissingPolicy::listwise;
      EXPECT_NE(lode::testing::error_message([&] { correlation(disjoint, o); }).find("survive listwise deletion"), std::string::npos);
      EXPECT_NE(lode::testing::error_message([&] { correlation(one_shared, o); }).find("survive listwise deletion"), std::string::npos);
    }
}
