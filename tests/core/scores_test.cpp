// Factor scores, checked against R's base stats::factanal (its regression and Bartlett scores, fed the same
// loadings and uniquenesses so that only the scoring is compared), and numpy for properties of the scores.
#include "lode/scores.hpp"

#include "core/factor_simulation.hpp"
#include "lode/correlation.hpp"
#include "support/external.hpp"

#include "support/errors.hpp"

#include <gtest/gtest.h>

#include <cmath>

using namespace lode;
using namespace lode::testing;  // the live references (external.hpp) and error_message

namespace {

double max_abs(const Matrix& a, const Matrix& b) {
  EXPECT_EQ(a.rows(), b.rows());
  EXPECT_EQ(a.cols(), b.cols());
  if (a.rows() != b.rows() || a.cols() != b.cols()) return INFINITY;
  return (a - b).cwiseAbs().maxCoeff();
}

Matrix simulated(Index n, std::uint64_t seed) {
  return lode::testing::simulate_factor_data(lode::testing::two_factor_loadings(), lode::testing::two_factor_phi(0.3), n,
                                             seed)
      .x;
}

}  // namespace

TEST(Scores, OrthogonalRegressionAndBartlettMatchFactanal) {
  const Matrix x = simulated(400, 901);
  // Reference: R's stats::factanal(scores = "regression" / "Bartlett"), varimax rotation. Lode is given
  // factanal's loadings, uniquenesses and cor(X), so the comparison isolates the scoring.
  const auto ref = run_r(R"(
    fr <- factanal(X, factors = 2, rotation = "varimax", scores = "regression")
    fb <- factanal(X, factors = 2, rotation = "varimax", scores = "Bartlett")
    emit("L", unclass(fr$loadings)); emit("u", fr$uniquenesses); emit("R", cor(X))
    emit("sr", fr$scores); emit("sb", fb$scores)
    emit("sd", apply(fr$scores, 2, sd))
  )", {{"X", x}});
  const Matrix& l = ref.at("L");
  const Vector u = ref.at("u").col(0);
  ScoreOptions o;
  const auto reg = factor_scores(x, ref.at("R"), l, Matrix(), u, o);
  EXPECT_LT(max_abs(reg.scores, ref.at("sr")), 1e-9);
  EXPECT_EQ(reg.rows_complete, 400);
  // The variance of regression scores in the sample is S' R^-1 S, so their SD (R's sd) is the determinacy.
  EXPECT_LT(max_abs(reg.determinacy, ref.at("sd")), 1e-9);
  EXPECT_LT(max_abs(reg.validity, reg.determinacy), 1e-12);
  o.method = ScoreMethod::bartlett;
  const auto bart = factor_scores(x, ref.at("R"), l, Matrix(), u, o);
  EXPECT_LT(max_abs(bart.scores, ref.at("sb")), 1e-9);
  // Bartlett scores are less valid than regression scores (the regression predictor is optimal).
  for (Index j = 0; j < 2; ++j) EXPECT_LE(bart.validity(j), bart.determinacy(j) + 1e-12);
  EXPECT_EQ(std::string(reg.notes.back()), std::string(score_cautions));
}

TEST(Scores, ObliqueRegressionAndBartlettMatchR) {
  const Matrix x = simulated(500, 902);
  // Reference: stats::promax on factanal's unrotated loadings; Phi = (T'T)^-1 for the promax rotation
  // matrix T. Bartlett scores from factanal(rotation = "promax", scores = "Bartlett") with its loadings
  // (Bartlett weights do not involve Phi). R 4.2's factanal does not attach Phi to promax loadings, so
  // the oblique regression reference is factanal's own expression zz %*% solve(cv, Lambda) %*% Phi,
  // evaluated in R.
  const auto ref = run_r(R"(
    f0 <- factanal(X, factors = 2, rotation = "none")
    pr <- promax(unclass(f0$loadings))
    Lp <- unclass(pr$loadings); Phi <- solve(crossprod(pr$rotmat))
    zz <- scale(X, TRUE, TRUE); cv <- cor(X)
    emit("Lp", Lp); emit("Phi", Phi); emit("u", f0$uniquenesses); emit("R", cv)
    emit("sr", zz %*% solve(cv, Lp) %*% Phi)
    fb <- factanal(X, factors = 2, rotation = "promax", scores = "Bartlett")
    emit("Lb", unclass(fb$loadings)); emit("ub", fb$uniquenesses); emit("sb", fb$scores)
  )", {{"X", x}});
  ASSERT_GT(std::abs(ref.at("Phi")(0, 1)), 0.1);  // the solution really is oblique
  ScoreOptions o;
  const auto reg = factor_scores(x, ref.at("R"), ref.at("Lp"), ref.at("Phi"), ref.at("u").col(0), o);
  EXPECT_LT(max_abs(reg.scores, ref.at("sr")), 1e-9);
  o.method = ScoreMethod::bartlett;
  const auto bart = factor_scores(x, ref.at("R"), ref.at("Lb"), Matrix(), ref.at("ub").col(0), o);
  EXPECT_LT(max_abs(bart.scores, ref.at("sb")), 1e-8);
}

TEST(Scores, CorrelationPreservingScoresReproducePhiInSample) {
  const Matrix x = simulated(300, 903);
  const Matrix r = correlation(x).matrix;
  const Matrix l = lode::testing::two_factor_loadings();
  const Vector u = Vector::Ones(8) - l.rowwise().squaredNorm();
  ScoreOptions o;
  o.method = ScoreMethod::correlation_preserving;
  // Oblique: the sample correlations of the scores equal Phi (ten Berge, Krijnen, Wansbeek & Shapiro 1999),
  // and each score has unit variance. Reference: numpy.corrcoef and numpy.std(ddof=1) of the scores.
  const Matrix phi = lode::testing::two_factor_phi(0.45);
  const auto ob = factor_scores(x, r, l, phi, u, o);
  const auto orth = factor_scores(x, r, l, Matrix(), u, o);
  const auto py = run_python(R"(
emit('c_ob', np.corrcoef(SO, rowvar=False)); emit('sd_ob', SO.std(axis=0, ddof=1))
emit('c_or', np.corrcoef(ST, rowvar=False)); emit('sd_or', ST.std(axis=0, ddof=1))
)", {{"SO", ob.scores}, {"ST", orth.scores}});
  EXPECT_LT(max_abs(py.at("c_ob"), phi), 1e-10);
  EXPECT_LT(max_abs(py.at("sd_ob"), Vector::Ones(2)), 1e-10);
  EXPECT_LT(max_abs(py.at("c_or"), Matrix::Identity(2, 2)), 1e-10);
  EXPECT_LT(max_abs(py.at("sd_or"), Vector::Ones(2)), 1e-10);
  EXPECT_LT(max_abs(ob.score_correlations, phi), 1e-10);
  // Their validity cannot exceed the determinacy (regression scores are the best linear predictor).
  for (Index j = 0; j < 2; ++j) EXPECT_LE(ob.validity(j), ob.determinacy(j) + 1e-12);
}

TEST(Scores, DeterminacyIsTheCorrelationWithTheTrueFactors) {
  // Simulated from the model with the true loadings: the sample correlation (numpy.corrcoef) between
  // regression scores and the true factor values approaches the determinacy; tolerance 0.02 at n = 20000.
  const Matrix l = lode::testing::two_factor_loadings();
  const Matrix phi = lode::testing::two_factor_phi(0.3);
  const auto sim = lode::testing::simulate_factor_data(l, phi, 20000, 904);
  const Matrix r = correlation(sim.x).matrix;
  const Vector u = Vector::Ones(8) - (l * phi * l.transpose()).diagonal();
  const auto reg = factor_scores(sim.x, r, l, phi, u);
  ScoreOptions ob;
  ob.method = ScoreMethod::bartlett;
  const auto bart = factor_scores(sim.x, r, l, phi, u, ob);
  const auto py = run_python(R"(
c = np.corrcoef(np.hstack([S, B, F]), rowvar=False)
emit('reg', [c[0, 4], c[1, 5]]); emit('bart', [c[2, 4], c[3, 5]])
)", {{"S", reg.scores}, {"B", bart.scores}, {"F", sim.factors}});
  EXPECT_LT(max_abs(py.at("reg"), reg.determinacy), 0.02);
  EXPECT_LT(max_abs(py.at("bart"), bart.validity), 0.02);
  EXPECT_FALSE(reg.low_determinacy[0]);
}

TEST(Scores, MissingItemsScoredFromAnsweredItemsOrLeftMissing) {
  Matrix x = simulated(200, 905);
  const Matrix complete = x;
  x(3, 1) = NAN;                 // one item missing
  x(7, 0) = NAN, x(7, 5) = NAN;  // two items missing
  for (Index j = 0; j < 5; ++j) x(9, j) = NAN;  // only 3 of 8 answered: below half
  const Matrix r = correlation(complete).matrix;
  const Matrix l = lode::testing::two_factor_loadings();
  const Matrix phi = lode::testing::two_factor_phi(0.3);
  const Vector u = Vector::Ones(8) - (l * phi * l.transpose()).diagonal();
  ScoreOptions o;
  o.means = complete.colwise().mean().transpose();
  o.sds = ((complete.rowwise() - complete.colwise().mean()).colwise().squaredNorm() / 199.0).cwiseSqrt().transpose();
  const auto s = factor_scores(x, r, l, phi, u, o);
  EXPECT_EQ(s.rows_complete, 197);
  EXPECT_EQ(s.rows_partial, 2);
  EXPECT_EQ(s.rows_missing, 1);
  EXPECT_TRUE(std::isnan(s.scores(9, 0)));
  // Reference, in R: the regression formula on the answered items' submatrices,
  // z[A] %*% solve(R[A, A], L[A, ] %*% Phi), with z standardised by R's scale().
  const auto ref = run_r(R"(
    z <- scale(X)
    one <- function(i, A) z[i, A, drop = FALSE] %*% solve(R[A, A], L[A, ] %*% Phi)
    emit("s3", one(4, -2)); emit("s7", one(8, -c(1, 6))); emit("s0", one(1, 1:8))
  )", {{"X", complete}, {"R", r}, {"L", l}, {"Phi", phi}});
  EXPECT_LT(max_abs(s.scores.row(3), ref.at("s3")), 1e-10);
  EXPECT_LT(max_abs(s.scores.row(7), ref.at("s7")), 1e-10);
  EXPECT_LT(max_abs(s.scores.row(0), ref.at("s0")), 1e-10);

  o.missing = MissingItemRule::leave_missing;
  const auto left = factor_scores(x, r, l, phi, u, o);
  EXPECT_EQ(left.rows_missing, 3);
  EXPECT_TRUE(std::isnan(left.scores(3, 0)) && std::isnan(left.scores(7, 1)));
  EXPECT_EQ(left.scores.row(0), s.scores.row(0));
  EXPECT_NE(left.notes[1].find("3 of 200 rows had a missing item"), std::string::npos);
}

TEST(Scores, LowDeterminacyIsFlagged) {
  // Two weak items per factor: determinacy well below 0.80 (common practice threshold).
  Matrix l(4, 2);
  l << 0.4, 0.0, 0.35, 0.0, 0.0, 0.4, 0.0, 0.3;
  const Matrix phi = Matrix::Identity(2, 2);
  const auto sim = lode::testing::simulate_factor_data(l, phi, 300, 906);
  const Matrix r = correlation(sim.x).matrix;
  const auto s = factor_scores(sim.x, r, l, Matrix(), Vector::Ones(4) - l.rowwise().squaredNorm());
  EXPECT_TRUE(s.low_determinacy[0] && s.low_determinacy[1]);
  bool noted = false;
  for (const auto& n : s.notes) noted = noted || n.find("Factor 1 has determinacy") != std::string::npos;
  EXPECT_TRUE(noted);
}

TEST(Scores, ErrorsNameTheProblem) {
  const Matrix x = simulated(50, 907);
  const Matrix r = correlation(x).matrix;
  const Matrix l = lode::testing::two_factor_loadings();
  Vector u = Vector::Ones(8) - l.rowwise().squaredNorm();
  ScoreOptions o;
  o.item_names = {"q1", "q2", "q3", "q4", "q5", "q6", "q7", "q8"};
  ErrorCode code{};
  EXPECT_EQ(error_message([&] { factor_scores(x.leftCols(7), r, l, Matrix(), u, o); }, &code),
            "the data have 7 columns, but the solution has 8 items");
  EXPECT_EQ(code, ErrorCode::invalid_argument);
  EXPECT_EQ(error_message([&] { factor_scores(x, r.topLeftCorner(7, 7), l, Matrix(), u, o); }),
            "the correlation matrix is 7 x 7, but the loadings have 8 items");
  Vector heywood = u;
  heywood(2) = 0.0;
  o.method = ScoreMethod::bartlett;
  EXPECT_EQ(error_message([&] { factor_scores(x, r, l, Matrix(), heywood, o); }),
            "Bartlett scores need positive uniquenesses, but item 'q3' has uniqueness 0 (a Heywood case); use "
            "regression or correlation-preserving scores, or refit");
  o.method = ScoreMethod::regression;
  Matrix bad_r = r;
  bad_r(0, 1) = bad_r(1, 0) = 1.0;
  bad_r(0, 2) = bad_r(2, 0) = -1.0;
  EXPECT_NE(error_message([&] { factor_scores(x, bad_r, l, Matrix(), u, o); }, &code)
                .find("the correlation matrix is not positive definite"),
            std::string::npos);
  EXPECT_EQ(code, ErrorCode::not_positive_definite);
  Matrix constant = x;
  constant.col(4).setConstant(3.0);
  EXPECT_EQ(error_message([&] { factor_scores(constant, r, l, Matrix(), u, o); }),
            "item 'q5' cannot be standardised (mean 3, standard deviation 0); a constant item cannot be scored");
  Matrix phi = Matrix::Identity(2, 2);
  phi(0, 1) = phi(1, 0) = 1.2;
  EXPECT_NE(error_message([&] { factor_scores(x, r, l, phi, u, o); }).find("factor correlation matrix is not positive definite"),
            std::string::npos);
  Matrix nan_l = l;
  nan_l(5, 1) = NAN;
  EXPECT_EQ(error_message([&] { factor_scores(x, r, nan_l, Matrix(), u, o); }),
            "the loading of item 'q6' on factor 2 is missing or infinite");
  o.min_answered_share = 1.5;
  EXPECT_EQ(error_message([&] { factor_scores(x, r, l, Matrix(), u, o); }),
            "the minimum share of answered items must lie in [0, 1], not 1.5");
}
