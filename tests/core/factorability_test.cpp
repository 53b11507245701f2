// Factorability: KMO / MSA, Bartlett's sphericity test, determinant, SMCs. The formulas are
// recomputed independently with numpy/scipy inside the test on matrices R's datasets package ships.
#include "lode/factorability.hpp"
#include "lode/correlation.hpp"
#include "support/errors.hpp"
#include "support/external.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <string>

using namespace lode;
using namespace lode::testing;  // the live references (external.hpp) and error_message

TEST(Factorability, KmoBartlettAndDeterminantMatchNumpyFormulas) {
  // Data: datasets::Harman74.cor (Harman 1976, 24 psychological tests, n = 145), read live from R.
  const Matrix r = run_r("emit('r', Harman74.cor$cov)", {}).at("r");
  // Reference: numpy/scipy, written from the definitions: anti-image correlations from inv(R)
  // (Kaiser 1970), Bartlett (1950) -(n - 1 - (2p + 5)/6) ln|R| with df p(p-1)/2, chi2.sf for p.
  const auto ref = run_python(R"(
from scipy import stats
R = X; p = R.shape[0]; n = N[0, 0]
Q = np.linalg.inv(R)
A = -Q / np.sqrt(np.outer(np.diag(Q), np.diag(Q)))
off = ~np.eye(p, dtype=bool)
r2 = np.where(off, R**2, 0.0); a2 = np.where(off, A**2, 0.0)
emit('kmo', r2.sum() / (r2.sum() + a2.sum()))
emit('msa', r2.sum(axis=1) / (r2.sum(axis=1) + a2.sum(axis=1)))
sign, logdet = np.linalg.slogdet(R)
chi = -(n - 1 - (2 * p + 5) / 6) * logdet
df = p * (p - 1) / 2
emit('chi', chi); emit('df', df); emit('pv', stats.chi2.sf(chi, df))
emit('det', np.linalg.det(R)); emit('logdet', logdet)
emit('smc', 1 - 1 / np.diag(Q))
)", {{"X", r}, {"N", scalar(145)}});
  const KmoResult kmo = kaiser_meyer_olkin(r);
  EXPECT_NEAR(kmo.overall, ref.at("kmo")(0, 0), 1e-12);
  EXPECT_LT((kmo.per_item - ref.at("msa")).cwiseAbs().maxCoeff(), 1e-12);
  const BartlettTest b = bartlett_sphericity(r, 145);
  EXPECT_NEAR(b.chi_square, ref.at("chi")(0, 0), 1e-9 * ref.at("chi")(0, 0));
  EXPECT_EQ(b.df, ref.at("df")(0, 0));
  EXPECT_NEAR(b.p_value, ref.at("pv")(0, 0), 1e-14);
  const FactorabilityResult all = assess_factorability(r, 145);
  ASSERT_TRUE(all.kmo && all.bartlett && all.smc);
  EXPECT_NEAR(all.determinant, ref.at("det")(0, 0), 1e-10 * std::abs(ref.at("det")(0, 0)));
  EXPECT_NEAR(all.log_determinant, ref.at("logdet")(0, 0), 1e-10);
  EXPECT_LT((*all.smc - ref.at("smc")).cwiseAbs().maxCoeff(), 1e-12);
  EXPECT_NEAR(all.kmo->overall, kmo.overall, 0.0);
}

TEST(Factorability, KaiserLabelsFollowTheBandsOf1974) {
  // Kaiser (1974), "An index of factorial simplicity", Psychometrika 39: the verbal bands.
  EXPECT_STREQ(kmo_label(0.95), "marvelous");
  EXPECT_STREQ(kmo_label(0.90), "marvelous");
  EXPECT_STREQ(kmo_label(0.899), "meritorious");
  EXPECT_STREQ(kmo_label(0.80), "meritorious");
  EXPECT_STREQ(kmo_label(0.75), "middling");
  EXPECT_STREQ(kmo_label(0.65), "mediocre");
  EXPECT_STREQ(kmo_label(0.55), "miserable");
  EXPECT_STREQ(kmo_label(0.49), "unacceptable");
  EXPECT_STREQ(kmo_label(std::nan("")), "undefined");
}

TEST(Factorability, IdentityAndEquicorrelationHaveClosedForms) {
  // Property (common practice): for the identity matrix ln|R| = 0, so Bartlett's statistic is 0 and p = 1.
  const Matrix id = Matrix::Identity(5, 5);
  const BartlettTest b = bartlett_sphericity(id, 200);
  EXPECT_NEAR(b.chi_square, 0.0, 1e-12);
  EXPECT_NEAR(b.p_value, 1.0, 1e-12);
  EXPECT_EQ(b.df, 10.0);
  // Equicorrelation rho among 3 items: R^-1 has off-diagonal -rho / ((1 - rho)(1 + 2 rho)) and diagonal
  // (1 + rho) / ((1 - rho)(1 + 2 rho)), so each partial correlation is rho / (1 + rho), and
  // KMO = rho^2 / (rho^2 + rho^2 / (1 + rho)^2) (derived by hand from the inverse; common practice).
  const double rho = 0.4;
  Matrix eq = Matrix::Constant(3, 3, rho);
  eq.diagonal().setOnes();
  const double expected = rho * rho / (rho * rho + std::pow(rho / (1.0 + rho), 2));
  const KmoResult k = kaiser_meyer_olkin(eq);
  EXPECT_NEAR(k.overall, expected, 1e-14);
  EXPECT_NEAR(k.per_item(2), expected, 1e-14);
}

TEST(Factorability, ErrorsNameTheProblem) {
  Matrix singular(3, 3);
  singular << 1, 1, 0.5, 1, 1, 0.5, 0.5, 0.5, 1;  // items 1 and 2 identical
  EXPECT_EQ(error_message([&] { kaiser_meyer_olkin(singular); }).rfind(
                "the Kaiser-Meyer-Olkin measure needs the inverse of the correlation matrix, but the matrix is not "
                "positive definite (smallest eigenvalue",
                0),
            0u);
  Matrix eq = Matrix::Constant(4, 4, 0.3);
  eq.diagonal().setOnes();
  EXPECT_EQ(error_message([&] { bartlett_sphericity(eq, 0); }),
            "Bartlett's test of sphericity needs the number of observations behind the correlation matrix, which is "
            "not known (n_obs = 0)");
  EXPECT_EQ(error_message([&] { bartlett_sphericity(eq, 3); }),
            "Bartlett's test of sphericity needs more than 3.17 observations for 4 items; the matrix rests on 3");
  EXPECT_NE(error_message([&] { bartlett_sphericity(singular, 100); }).find("not positive definite"), std::string::npos);
  EXPECT_NE(error_message([&] { log_determinant(singular); }).find("log-determinant is undefined"), std::string::npos);
  EXPECT_EQ(error_message([&] { assess_factorability(eq, -1); }), "the number of observations is negative (-1)");
  // An incomplete report instead of an error when only parts are impossible.
  const FactorabilityResult part = assess_factorability(singular, 0);
  EXPECT_FALSE(part.kmo);
  EXPECT_FALSE(part.bartlett);
  EXPECT_NEAR(part.determinant, 0.0, 1e-12);
  ASSERT_EQ(part.notes.size(), 2u);
  EXPECT_NE(part.notes[1].find("needs the number of observations"), std::string::npos);
}
