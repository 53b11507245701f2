// Cronbach's alpha and McDonald's omega, checked against independent computations in R and numpy.
#include "lode/reliability.hpp"

#include "core/factor_simulation.hpp"
#include "support/external.hpp"

#include "support/errors.hpp"

#include <gtest/gtest.h>

#include <cmath>

using namespace lode;
using lode::testing::error_message;
using lode::testing::run_python;
using lode::testing::run_r;

namespace {

// Five-point items from a one-factor model, with different spreads so raw and standardised alpha differ.
Matrix likert_scale(Index n, std::uint64_t seed) {
  Matrix l(5, 1);
  l << 0.8, 0.7, 0.6, 0.5, 0.4;
  Matrix x = lode::testing::simulate_factor_data(l, Matrix::Identity(1, 1), n, seed).x;
  const double spread[5] = {1.0, 1.5, 0.8, 1.2, 2.0};
  for (Index j = 0; j < 5; ++j) x.col(j) = (x.col(j).array() * spread[j] + 3.0).round().max(1.0).min(5.0).matrix();
  return x;
}

}  // namespace

TEST(Reliability, StandardizedAlphaFollowsSpearmanBrown) {
  const Matrix x = likert_scale(300, 31);
  // Reference: the Spearman-Brown form of standardised alpha, k rbar / (1 + (k - 1) rbar), with rbar the
  // mean off-diagonal entry of R's stats::cor (Cronbach 1951; e.g. Nunnally & Bernstein 1994, from memory).
  const auto ref = run_r(R"(
    r <- cor(X); k <- ncol(X); rbar <- mean(r[upper.tri(r)])
    emit("a", k * rbar / (1 + (k - 1) * rbar)); emit("rbar", rbar)
    emit("del", sapply(1:k, function(i) { s <- r[-i, -i]; m <- mean(s[upper.tri(s)]); (k - 1) * m / (1 + (k - 2) * m) }))
  )", {{"X", x}});
  const auto a = cronbach_alpha(x);
  EXPECT_NEAR(a.alpha_standardized, ref.at("a")(0, 0), 1e-12);
  EXPECT_NEAR(a.mean_inter_item_correlation, ref.at("rbar")(0, 0), 1e-12);
  EXPECT_LT((a.alpha_standardized_if_deleted - ref.at("del").col(0)).cwiseAbs().maxCoeff(), 1e-12);
  EXPECT_NEAR(alpha_from_covariance((x.rowwise() - x.colwise().mean()).transpose() * (x.rowwise() - x.colwise().mean()) /
                                    299.0),
              a.alpha, 1e-12);
}

TEST(Reliability, RawAlphaItemDeletedAndItemTotalMatchNumpy) {
  Matrix x = likert_scale(250, 32);
  x(4, 2) = NAN;
  x(10, 0) = NAN;
  x(11, 4) = NAN;
  // Reference: an independent numpy implementation on the complete rows: alpha = k/(k-1) (1 - sum of
  // item variances / variance of the sum), and np.corrcoef of each item with the sum of the others.
  const auto py = run_python(R"(
X = X[~np.isnan(X).any(axis=1)]
def alpha(Y):
    k = Y.shape[1]
    return k / (k - 1) * (1 - Y.var(axis=0, ddof=1).sum() / Y.sum(axis=1).var(ddof=1))
k = X.shape[1]
emit('a', [alpha(X)])
emit('del', [alpha(np.delete(X, i, axis=1)) for i in range(k)])
emit('itc', [np.corrcoef(X[:, i], np.delete(X, i, axis=1).sum(axis=1))[0, 1] for i in range(k)])
emit('n', [X.shape[0]])
)", {{"X", x}});
  const auto a = cronbach_alpha(x);
  EXPECT_NEAR(a.alpha, py.at("a")(0, 0), 1e-12);
  EXPECT_LT((a.alpha_if_deleted - py.at("del").col(0)).cwiseAbs().maxCoeff(), 1e-12);
  EXPECT_LT((a.item_total_correlation - py.at("itc").col(0)).cwiseAbs().maxCoeff(), 1e-12);
  EXPECT_EQ(a.rows_used, static_cast<Index>(py.at("n")(0, 0)));
  EXPECT_EQ(a.rows_used, 247);
  EXPECT_NE(a.alpha, a.alpha_standardized);  // unequal spreads: raw and standardised differ
  EXPECT_EQ(a.notes.at(0), "3 of 250 rows had a missing item of this scale and were left out (listwise deletion "
                           "within the scale).");
}

TEST(Reliability, ReverseKeyedItemIsNoted) {
  Matrix x = likert_scale(200, 33);
  x.col(3) = (6.0 - x.col(3).array()).matrix();  // reverse the fourth item
  AlphaOptions o;
  o.item_names = {"a", "b", "c", "d", "e"};
  const auto a = cronbach_alpha(x, o);
  EXPECT_LT(a.item_total_correlation(3), 0.0);
  bool noted = false;
  for (const auto& n : a.notes) noted = noted || n.find("item 'd' correlates negatively") != std::string::npos;
  EXPECT_TRUE(noted);
}

TEST(Reliability, OmegaMatchesItsFormulaInNumpy) {
  // Loadings, uniquenesses and factor correlations from R's stats::factanal (2 factors, promax; Phi =
  // (U'U)^-1 for its rotation matrix U) on simulated data; omega per factor computed independently in
  // numpy: items to the factor of their largest |loading|, Sigma = L Phi L' + Psi, omega total =
  // 1' (L Phi L')_SS 1 / 1' Sigma_SS 1 and the factor's share (sum_S lambda_f)^2 / 1' Sigma_SS 1
  // (McDonald 1999; Revelle & Zinbarg 2009 for omega total with several factors).
  const Matrix x = lode::testing::simulate_factor_data(lode::testing::two_factor_loadings(),
                                                       lode::testing::two_factor_phi(0.3), 400, 34)
                       .x;
  const auto fa = run_r(R"(
    f <- factanal(X, factors = 2, rotation = "promax")
    emit("L", unclass(f$loadings)); emit("u", f$uniquenesses); emit("phi", solve(crossprod(f$rotmat)))
    f1 <- factanal(X[, 1:4], factors = 1)
    emit("L1", unclass(f1$loadings)); emit("u1", f1$uniquenesses)
  )", {{"X", x}});
  const auto py = run_python(R"(
a = np.abs(L).argmax(axis=1)
common = L @ phi @ L.T
sigma = common + np.diag(u[:, 0])
om, share, var = [], [], []
for f in range(L.shape[1]):
    S = np.ix_(a == f, a == f)
    v = sigma[S].sum()
    om.append(common[S].sum() / v); share.append(L[a == f, f].sum() ** 2 / v); var.append(v)
emit('omega', om); emit('share', share); emit('var', var); emit('assign', a)
s1 = L1[:, 0].sum(); emit('omega1', [s1 * s1 / (s1 * s1 + u1[:, 0].sum())])
)", {{"L", fa.at("L")}, {"u", fa.at("u")}, {"phi", fa.at("phi")}, {"L1", fa.at("L1")}, {"u1", fa.at("u1")}});
  OmegaOptions o;
  o.factor_correlations = fa.at("phi");
  const auto om = omega_from_loadings(fa.at("L"), fa.at("u").col(0), o);
  ASSERT_EQ(om.scales.size(), 2u);
  for (Index f = 0; f < 2; ++f) {
    const auto& sc = om.scales[static_cast<std::size_t>(f)];
    // sums of 8 x 2 x 2 products of numbers below 1 in magnitude: rounding far below 1e-12
    EXPECT_NEAR(sc.omega, py.at("omega")(f, 0), 1e-12);
    EXPECT_NEAR(sc.factor_share, py.at("share")(f, 0), 1e-12);
    EXPECT_NEAR(sc.scale_variance, py.at("var")(f, 0), 1e-12);
  }
  for (Index i = 0; i < 8; ++i) EXPECT_EQ(om.assignment[static_cast<std::size_t>(i)], static_cast<Index>(py.at("assign")(i, 0)));
  // A one-factor fit: omega of that single scale; omega total and the factor's share agree.
  const auto one = omega_from_loadings(fa.at("L1"), fa.at("u1").col(0));
  EXPECT_NEAR(one.scales[0].omega, py.at("omega1")(0, 0), 1e-12);
  EXPECT_NEAR(one.scales[0].factor_share, py.at("omega1")(0, 0), 1e-12);
  EXPECT_EQ(one.scales[0].items.size(), 4u);
  // Factor correlations of the wrong size are refused.
  o.factor_correlations = Matrix::Identity(3, 3);
  EXPECT_EQ(error_message([&] { omega_from_loadings(fa.at("L"), fa.at("u").col(0), o); }),
            "the factor correlations are 3 x 3 for 2 factors");
  o.factor_correlations = Matrix::Constant(2, 2, NAN);
  EXPECT_EQ(error_message([&] { omega_from_loadings(fa.at("L"), fa.at("u").col(0), o); }),
            "the factor correlations contain a missing or infinite value");
}

TEST(Reliability, OmegaOfReverseKeyedItemsMatchesARefitToReflectedAnswers) {
  // Two correlated factors on five-point answers; items 3 and 6 are keyed against their factor.
  Matrix l(6, 2);
  l << 0.8, 0.0, 0.7, 0.1, -0.6, 0.0, 0.0, 0.75, 0.1, 0.7, 0.0, -0.65;
  Matrix x = lode::testing::simulate_factor_data(l, lode::testing::two_factor_phi(0.3), 600, 41).x;
  x = (x.array() + 3.0).round().max(1.0).min(5.0).matrix();
  // Reference: numpy reflects the answers of items 3 and 6 (6 - answer, as a scale score reverse-scores
  // them); R's stats::factanal fits two factors by maximum likelihood to the answers and to the
  // reflected answers, each rotated by stats::varimax (columns reflected to a positive sum), both run
  // to tight tolerances; numpy computes omega of the refit as in OmegaMatchesItsFormulaInNumpy. Factor
  // correlations are checked with a given Phi below (an oblique rotation criterion sees the loadings
  // only through their squares too, so nothing in the reversal depends on it).
  const auto reflected = run_python("Y = X.copy(); Y[:, [2, 5]] = 6.0 - Y[:, [2, 5]]; emit('Y', Y)", {{"X", x}});
  const auto fa = run_r(R"(
    fit <- function(D) {
      f <- factanal(D, factors = 2, rotation = "none", control = list(nstart = 1, opt = list(factr = 10, maxit = 10000)))
      v <- unclass(varimax(unclass(f$loadings), eps = 1e-14)$loadings)
      s <- sign(colSums(v))
      list(L = v %*% diag(s), u = f$uniquenesses, phi = diag(2))
    }
    a <- fit(X); b <- fit(Y)
    emit("L", a$L); emit("u", a$u); emit("phi", a$phi); emit("Lr", b$L); emit("ur", b$u); emit("phir", b$phi)
  )", {{"X", x}, {"Y", reflected.at("Y")}});
  const auto py = run_python(R"(
a = np.abs(L).argmax(axis=1)
common = L @ phi @ L.T
sigma = common + np.diag(u[:, 0])
om, share = [], []
for f in range(L.shape[1]):
    S = np.ix_(a == f, a == f)
    om.append(common[S].sum() / sigma[S].sum()); share.append(L[a == f, f].sum() ** 2 / sigma[S].sum())
emit('omega', om); emit('share', share); emit('assign', a)
)", {{"L", fa.at("Lr")}, {"u", fa.at("ur")}, {"phi", fa.at("phir")}});
  OmegaOptions o;
  o.factor_correlations = fa.at("phi");
  o.reverse_negative_loaders = true;
  const auto om = omega_from_loadings(fa.at("L"), fa.at("u").col(0), o);
  const std::vector<bool> expected_reversed{false, false, true, false, false, true};
  EXPECT_EQ(om.reversed, expected_reversed);
  // The two ML fits each stop at factanal's convergence tolerance (optim's L-BFGS-B on the uniquenesses,
  // factr 10: a relative change of the objective of about 2e-15, so uniquenesses good to about 1e-7), so
  // the refit reproduces the reflected loadings to about 1e-7, not to rounding.
  for (Index f = 0; f < 2; ++f) {
    EXPECT_EQ(om.assignment[static_cast<std::size_t>(f == 0 ? 0 : 3)], static_cast<Index>(py.at("assign")(f == 0 ? 0 : 3, 0)));
    EXPECT_NEAR(om.scales[static_cast<std::size_t>(f)].omega, py.at("omega")(f, 0), 1e-6);
    EXPECT_NEAR(om.scales[static_cast<std::size_t>(f)].factor_share, py.at("share")(f, 0), 1e-6);
  }
  // With correlated factors (a given Phi): the keyed omega is the formula of OmegaMatchesItsFormulaInNumpy
  // over D L, computed in numpy (sums of 6 x 2 x 2 products of numbers below 1: rounding far below 1e-12).
  Matrix phi(2, 2);
  phi << 1.0, 0.3, 0.3, 1.0;
  const auto oblique_ref = run_python(R"(
D = np.where(np.arange(6) % 3 == 2, -1.0, 1.0)[:, None]
Lr = L * D
a = np.abs(L).argmax(axis=1)
common = Lr @ phi @ Lr.T
sigma = common + np.diag(u[:, 0])
emit('omega', [common[np.ix_(a == f, a == f)].sum() / sigma[np.ix_(a == f, a == f)].sum() for f in range(2)])
)", {{"L", fa.at("L")}, {"u", fa.at("u")}, {"phi", phi}});
  OmegaOptions oblique;
  oblique.factor_correlations = phi;
  oblique.reverse_keyed = expected_reversed;
  const auto ob = omega_from_loadings(fa.at("L"), fa.at("u").col(0), oblique);
  for (std::size_t f = 0; f < 2; ++f) EXPECT_NEAR(ob.scales[f].omega, oblique_ref.at("omega")(static_cast<Index>(f), 0), 1e-12);
  // The same items flagged by hand give the same figures; without reverse-keying the figures differ.
  OmegaOptions given;
  given.factor_correlations = fa.at("phi");
  given.reverse_keyed = expected_reversed;
  const auto by_hand = omega_from_loadings(fa.at("L"), fa.at("u").col(0), given);
  for (std::size_t f = 0; f < 2; ++f) EXPECT_EQ(by_hand.scales[f].omega, om.scales[f].omega);
  OmegaOptions plain;
  plain.factor_correlations = fa.at("phi");
  const auto as_scored = omega_from_loadings(fa.at("L"), fa.at("u").col(0), plain);
  EXPECT_GT(om.scales[0].omega - as_scored.scales[0].omega, 0.05);
  EXPECT_EQ(as_scored.reversed, std::vector<bool>(6, false));
  given.reverse_keyed = {true};
  EXPECT_EQ(error_message([&] { omega_from_loadings(fa.at("L"), fa.at("u").col(0), given); }),
            "the reverse-keyed flags list 1 items, but the loadings have 6");
}

TEST(Reliability, OmegaWithGivenAssignmentAndNotes) {
  Matrix l(4, 2);
  l << 0.7, 0.1, -0.6, 0.0, 0.1, 0.8, 0.0, 0.7;
  const Vector u = Vector::Ones(4) - l.rowwise().squaredNorm();
  OmegaOptions o;
  o.assignment = {0, 0, 1, -1};
  o.item_names = {"w", "x", "y", "z"};
  const auto om = omega_from_loadings(l, u, o);
  EXPECT_EQ(om.scales[1].items, std::vector<Index>{2});
  // By hand, uncorrelated factors: the scale's loadings sum to (0.7 - 0.6, 0.1 + 0) = (0.1, 0.1), so the
  // common variance of its sum is 0.1^2 + 0.1^2 and the factor's own part 0.1^2.
  const double common = 0.01 + 0.01, var = common + u(0) + u(1);
  EXPECT_NEAR(om.scales[0].omega, common / var, 1e-15);
  EXPECT_NEAR(om.scales[0].factor_share, 0.01 / var, 1e-15);
  EXPECT_NEAR(om.scales[0].scale_variance, var, 1e-15);
  bool negative_noted = false;
  for (const auto& n : om.notes) negative_noted = negative_noted || n.find("item 'x' loads negatively") != std::string::npos;
  EXPECT_TRUE(negative_noted);
}

TEST(Reliability, ErrorsNameTheProblem) {
  Matrix x = likert_scale(20, 35);
  AlphaOptions o;
  o.item_names = {"a", "b", "c", "d", "e"};
  EXPECT_EQ(error_message([&] { cronbach_alpha(x.leftCols(1), o); }), "alpha needs at least 2 items; the scale has 1");
  Matrix c = x;
  c.col(2).setConstant(4.0);
  EXPECT_EQ(error_message([&] { cronbach_alpha(c, o); }), "item 'c' is constant over the 20 complete rows; alpha cannot use it");
  Matrix m = x;
  for (Index i = 0; i < 18; ++i) m(i, i % 5) = NAN;
  EXPECT_EQ(error_message([&] { cronbach_alpha(m, o); }),
            "alpha needs at least 3 rows with every item of the scale answered; 2 of 20 rows are complete");
  OmegaOptions oo;
  oo.assignment = {0, 3};
  EXPECT_EQ(error_message([&] { omega_from_loadings(Matrix::Constant(2, 2, 0.5), Vector::Constant(2, 0.5), oo); }),
            "column 2 is assigned to factor 4, but there are 2 factors");
  EXPECT_EQ(error_message([&] { omega_from_loadings(Matrix::Constant(3, 1, 0.5), Vector::Constant(2, 0.5)); }),
            "there are 2 uniquenesses for 3 items");
}

TEST(Reliability, SingleScaleOmegaFromOneFactorFitMatchesFactanalAndNumpy) {
  // Reference: R's stats::factanal one-factor ML fit of the scale's correlations, then omega computed in
  // numpy from its loadings and uniquenesses (McDonald 1999). The tolerance allows for the two ML
  // optimisers stopping at slightly different points.
  const Matrix x = likert_scale(300, 36);
  const auto fa = run_r(R"(
    f <- factanal(covmat = cor(X), factors = 1, n.obs = nrow(X))
    emit("L", unclass(f$loadings)); emit("u", f$uniquenesses); emit("R", cor(X))
  )", {{"X", x}});
  const auto py = run_python(R"(
s = np.abs(L[:, 0]).sum(); emit('omega', [s * s / (s * s + u[:, 0].sum())])
)", {{"L", fa.at("L")}, {"u", fa.at("u")}});
  ExtractionOptions o;
  o.n_obs = 300;
  const auto om = omega_single_scale(fa.at("R"), o);
  EXPECT_TRUE(om.convergence.converged);
  EXPECT_NEAR(om.omega, py.at("omega")(0, 0), 1e-5);
  EXPECT_LT((om.loadings - fa.at("L").col(0).cwiseAbs()).cwiseAbs().maxCoeff(), 1e-4);
  o.method = ExtractionMethod::principal_components;
  EXPECT_EQ(error_message([&] { omega_single_scale(fa.at("R"), o); }),
            "omega needs a common factor fit with uniquenesses; principal components estimate none");
}
