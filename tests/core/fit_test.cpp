// Fit statistics: residuals and RMSR, ML chi-square with Bartlett's correction, RMSEA and its
// interval, Tucker-Lewis index, BIC; checked against R's stats::factanal, numpy and scipy.stats.
#include "lode/fit.hpp"
#include "lode/distributions.hpp"
#include "lode/extraction.hpp"
#include "support/errors.hpp"
#include "support/external.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <string>

using namespace lode;
using namespace lode::testing;  // the live references (external.hpp) and error_message

TEST(Fit, StatisticsMatchNumpyScipyFormulasForEveryMethod) {
  // Data: datasets::Harman74.cor (24 tests, n = 145), read live from R.
  const Matrix r = run_r("emit('r', Harman74.cor$cov)", {}).at("r");
  const Index n = 145;
  for (auto m : {ExtractionMethod::maximum_likelihood, ExtractionMethod::minimum_residual, ExtractionMethod::principal_axis}) {
    SCOPED_TRACE(to_string(m));
    ExtractionOptions o;
    o.method = m;
    const ExtractionResult x = extract_factors(r, 4, o);
    const FitResult fit = assess_fit(r, x.loadings, x.uniquenesses, n);
    // Reference: numpy for the discrepancy, residuals, RMSR, TLI and BIC (Tucker & Lewis 1973,
    // null model = Bartlett's sphericity statistic; BIC = chi2 - df ln n, Raftery 1995); scipy.stats.chi2.sf
    // for p; RMSEA = sqrt(max(chi2 - df, 0) / (df (n - 1))) and its 90% interval by scipy.optimize.brentq
    // on scipy.stats.ncx2.cdf (Browne & Cudeck 1993).
    const auto ref = run_python(R"(
from scipy import stats, optimize
p = R.shape[0]; k = L.shape[1]; n = N[0, 0]
S = L @ L.T + np.diag(U[:, 0]); E = R - S
F = np.linalg.slogdet(S)[1] - np.linalg.slogdet(R)[1] + np.trace(np.linalg.solve(S, R)) - p
chi = (n - 1 - (2 * p + 5) / 6 - 2 * k / 3) * F
df = ((p - k) ** 2 - (p + k)) / 2
chi0 = -(n - 1 - (2 * p + 5) / 6) * np.linalg.slogdet(R)[1]; df0 = p * (p - 1) / 2
def lam(target):
    g = lambda l: stats.ncx2.cdf(chi, df, l) - target
    return 0.0 if stats.chi2.cdf(chi, df) <= target else optimize.brentq(g, 1e-12, 10 * chi + 100, xtol=1e-12)
emit('E', E); emit('rmsr', np.sqrt(np.mean(E[np.triu_indices(p, 1)] ** 2)))
emit('F', F); emit('chi', chi); emit('df', df); emit('pv', stats.chi2.sf(chi, df))
emit('rmsea', np.sqrt(max(chi - df, 0) / (df * (n - 1))))
emit('lo', np.sqrt(lam(0.95) / (df * (n - 1)))); emit('hi', np.sqrt(lam(0.05) / (df * (n - 1))))
emit('tli', (chi0 / df0 - chi / df) / (chi0 / df0 - 1)); emit('bic', chi - df * np.log(n))
)", {{"R", r}, {"L", x.loadings}, {"U", x.uniquenesses}, {"N", scalar(static_cast<double>(n))}});
    EXPECT_LT((fit.residual.residuals - ref.at("E")).cwiseAbs().maxCoeff(), 1e-12);
    EXPECT_NEAR(fit.residual.rmsr, ref.at("rmsr")(0, 0), 1e-13);
    EXPECT_NEAR(fit.discrepancy, ref.at("F")(0, 0), 1e-10);
    EXPECT_NEAR(fit.chi_square, ref.at("chi")(0, 0), 1e-8);
    EXPECT_EQ(fit.df, ref.at("df")(0, 0));
    EXPECT_NEAR(fit.p_value, ref.at("pv")(0, 0), 1e-10);
    EXPECT_NEAR(fit.rmsea, ref.at("rmsea")(0, 0), 1e-12);
    EXPECT_NEAR(fit.rmsea_lower, ref.at("lo")(0, 0), 1e-7);
    EXPECT_NEAR(fit.rmsea_upper, ref.at("hi")(0, 0), 1e-7);
    EXPECT_NEAR(fit.tli, ref.at("tli")(0, 0), 1e-10);
    EXPECT_NEAR(fit.bic, ref.at("bic")(0, 0), 1e-8);
    EXPECT_LT(fit.rmsea_lower, fit.rmsea);
    EXPECT_GT(fit.rmsea_upper, fit.rmsea);
  }
}

TEST(Fit, RmseaIntervalStartsAtZeroWhenTheModelFitsWell) {
  // Simulated residual-free population matrix plus a tiny perturbation: chi2 below df, so the point
  // estimate and the lower limit are 0 (Browne & Cudeck 1993; common practice).
  Matrix lambda(6, 1);
  lambda << 0.8, 0.7, 0.6, 0.7, 0.5, 0.6;
  const Vector psi = Vector::Ones(6) - lambda.rowwise().squaredNorm();
  Matrix r = implied_correlation(lambda, psi);
  r(0, 1) = r(1, 0) = r(0, 1) + 0.03;
  const ExtractionResult x = extract_factors(r, 1);
  const FitResult fit = assess_fit(r, x.loadings, x.uniquenesses, 3000);
  ASSERT_LT(fit.chi_square, fit.df);
  ASSERT_GT(fit.chi_square, chi_square_quantile(0.05, fit.df));  // so the upper limit is positive
  EXPECT_EQ(fit.rmsea, 0.0);
  EXPECT_EQ(fit.rmsea_lower, 0.0);
  EXPECT_GT(fit.rmsea_upper, 0.0);
  EXPECT_GT(fit.tli, 1.0);  // TLI exceeds 1 when chi2 < df (Tucker & Lewis 1973; common practice)
}

TEST(Fit, JustIdentifiedModelHasNoTestAndSaysSo) {
  Matrix r(3, 3);
  r << 1, 0.5, 0.4, 0.5, 1, 0.3, 0.4, 0.3, 1;
  const ExtractionResult x = extract_factors(r, 1);
  const FitResult fit = assess_fit(r, x.loadings, x.uniquenesses, 100);
  EXPECT_EQ(fit.df, 0.0);
  EXPECT_TRUE(std::isnan(fit.p_value));
  EXPECT_TRUE(std::isnan(fit.rmsea));
  EXPECT_TRUE(std::isnan(fit.tli));
  ASSERT_EQ(fit.notes.size(), 1u);
  EXPECT_EQ(fit.notes[0], "1 factors for 3 items leave no degrees of freedom: the model is just identified, so the "
                          "chi-square test, RMSEA and Tucker-Lewis index are undefined");
}

TEST(Fit, ErrorsNameTheProblem) {
  Matrix lambda(5, 1);
  lambda << 0.8, 0.7, 0.6, 0.5, 0.4;
  const Vector psi = Vector::Ones(5) - lambda.rowwise().squaredNorm();
  const Matrix r = implied_correlation(lambda, psi);
  EXPECT_EQ(error_message([&] { assess_fit(r, lambda, psi, 0); }),
            "the chi-square test, RMSEA, Tucker-Lewis index and BIC need the number of observations behind the "
            "correlation matrix, which is not known (n_obs = 0); the residual correlations and their root mean square "
            "need none");
  // ...while the residuals need no n.
  EXPECT_LT(residual_fit(r, lambda, psi).rmsr, 1e-15);
  Matrix three(5, 3);
  three.setConstant(0.3);
  EXPECT_EQ(error_message([&] { assess_fit(r, three, psi, 100); }),
            "3 factors for 5 items leave negative degrees of freedom (-2); 5 items can identify at most 2 factors");
  EXPECT_EQ(error_message([&] { assess_fit(r, lambda, psi, 4); }),
            "too few observations for the chi-square test: 5 items and 1 factors need more than 4.17 observations; "
            "the matrix rests on 4");
  EXPECT_EQ(error_message([&] { assess_fit(r, lambda, psi.head(4), 100); }),
            "the solution does not match the matrix: 5 items, 5 rows of loadings, 4 uniquenesses");
  FitOptions bad_level;
  bad_level.interval_level = 1.5;
  EXPECT_EQ(error_message([&] { assess_fit(r, lambda, psi, 100, bad_level); }),
            "the level of the RMSEA interval must lie strictly between 0 and 1; got 1.5");
  Vector zero_psi = psi;
  zero_psi(0) = -0.64;  // implied matrix with a negative variance share
  EXPECT_NE(error_message([&] { assess_fit(r, lambda, zero_psi, 100); }).find("model-implied correlation matrix is not positive definite"),
            std::string::npos);
  Matrix npd(4, 4);
  npd << 1, 0.9, 0.9, 0.1, 0.9, 1, 0.9, 0.9, 0.9, 0.9, 1, 0.9, 0.1, 0.9, 0.9, 1;
  EXPECT_NE(error_message([&] { assess_fit(npd, Matrix::Constant(4, 1, 0.5), Vector::Constant(4, 0.75), 100); })
                .find("need a positive-definite correlation matrix, but this one's smallest eigenvalue is -"),
            std::string::npos);
}
