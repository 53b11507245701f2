// Factor extraction, checked against R's base stats::factanal (maximum likelihood), statsmodels'
// principal-axis Factor, numpy, and exact population matrices.
#include "lode/extraction.hpp"
#include "lode/correlation.hpp"
#include "lode/fit.hpp"
#include "lode/random.hpp"
#include "support/external.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <string>

using namespace lode;
using lode::testing::max_abs_diff_up_to_column_sign;
using lode::testing::run_python;
using lode::testing::run_r;
using lode::testing::scalar;

namespace {

// A correlation matrix R's `datasets` package ships, read live from R.
Matrix r_dataset(const std::string& expression) {
  return run_r("emit('r', " + expression + ")", {}).at("r");
}

// factanal run with tight optimiser controls (its defaults stop about 1e-5 short of the optimum).
lode::testing::Matrices factanal_ml(const Matrix& r, int k, Index n) {
  return run_r(R"(
    f <- factanal(covmat = R, factors = k[1, 1], n.obs = n[1, 1], rotation = "none",
                  control = list(nstart = 1, lower = 0.005, opt = list(factr = 1, pgtol = 0, maxit = 10000)))
    emit("u", f$uniquenesses)
    emit("l", unclass(f$loadings))
    emit("stat", f$STATISTIC)
    emit("dof", f$dof)
    emit("pval", f$PVAL)
    emit("obj", f$criteria["objective"])
  )", {{"R", r}, {"k", scalar(k)}, {"n", scalar(static_cast<double>(n))}});
}

ExtractionOptions with(ExtractionMethod m) {
  ExtractionOptions o;
  o.method = m;
  return o;
}

void expect_ml_matches_factanal(const Matrix& r, int k, Index n, const char* what) {
  SCOPED_TRACE(what);
  const auto ref = factanal_ml(r, k, n);
  const ExtractionResult ml = extract_factors(r, k, with(ExtractionMethod::maximum_likelihood));
  ASSERT_TRUE(ml.convergence.converged) << ml.convergence.final_change;
  EXPECT_LT((ml.uniquenesses - ref.at("u")).cwiseAbs().maxCoeff(), 1e-5);
  EXPECT_LT(max_abs_diff_up_to_column_sign(ml.loadings, ref.at("l")), 1e-4);
  EXPECT_NEAR(ml.objective, ref.at("obj")(0, 0), 1e-8);
  const FitResult fit = assess_fit(r, ml.loadings, ml.uniquenesses, n);
  EXPECT_NEAR(fit.chi_square, ref.at("stat")(0, 0), 1e-4 * std::max(1.0, ref.at("stat")(0, 0)));
  EXPECT_EQ(fit.df, ref.at("dof")(0, 0));
  EXPECT_NEAR(fit.p_value, ref.at("pval")(0, 0), 1e-5);
}

}  // namespace

TEST(ExtractionML, MatchesFactanalOnAbilityCov) {
  // Reference: R stats::factanal on datasets::ability.cov (Smith & Stanley 1983), n = 112.
  const Matrix r = r_dataset("cov2cor(ability.cov$cov)");
  expect_ml_matches_factanal(r, 1, 112, "ability.cov, 1 factor");
  expect_ml_matches_factanal(r, 2, 112, "ability.cov, 2 factors");
}

TEST(ExtractionML, MatchesFactanalOnHarman74) {
  // Reference: R stats::factanal on datasets::Harman74.cor (Harman 1976, 24 psychological tests), n = 145.
  const Matrix r = r_dataset("Harman74.cor$cov");
  expect_ml_matches_factanal(r, 4, 145, "Harman74, 4 factors");
  expect_ml_matches_factanal(r, 5, 145, "Harman74, 5 factors");
}

TEST(ExtractionML, MatchesFactanalOnHarman23) {
  // Reference: R stats::factanal on datasets::Harman23.cor (Harman 1976, 8 physical measures), n = 305.
  const Matrix r = r_dataset("Harman23.cor$cov");
  expect_ml_matches_factanal(r, 2, 305, "Harman23, 2 factors");
  expect_ml_matches_factanal(r, 3, 305, "Harman23, 3 factors");
}
