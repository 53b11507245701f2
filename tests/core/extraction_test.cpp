// Factor extraction, checked against R's base stats::factanal (maximum likelihood), statsmodels'
// principal-axis Factor, numpy, and exact population matrices.
#include "lode/extraction.hpp"
#include "lode/correlation.hpp"
#include "lode/fit.hpp"
#include "lode/random.hpp"
#include "support/errors.hpp"
#include "support/external.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <string>

using namespace lode;
using namespace lode::testing;  // the live references (external.hpp) and error_message

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
  EXPECT_LT((ml.uniquenesses - ref.at("u")).cwiseAbs().maxCoeff(), 1e-6);
  EXPECT_LT(max_abs_diff_up_to_column_sign(ml.loadings, ref.at("l")), 1e-6);
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

TEST(ExtractionPAF, MatchesStatsmodelsPrincipalAxis) {
  // Reference: statsmodels.multivariate.factor.Factor(method='pa', smc=True), iterated to convergence
  // (its defaults stop after 50 iterations), on datasets::Harman23.cor and Harman74.cor.
  for (const auto& [expr, k] : {std::pair<std::string, int>{"Harman23.cor$cov", 2}, {"Harman74.cor$cov", 4}}) {
    SCOPED_TRACE(expr);
    const Matrix r = r_dataset(expr);
    const auto ref = run_python(R"(
from statsmodels.multivariate.factor import Factor
res = Factor(corr=X, n_factor=int(K[0, 0]), method='pa', smc=True).fit(maxiter=200000, tol=1e-13)
emit('l', res.loadings); emit('h', res.communality); emit('u', res.uniqueness)
)", {{"X", r}, {"K", scalar(k)}});
    ExtractionOptions o = with(ExtractionMethod::principal_axis);
    o.max_iterations = 200000;
    o.tolerance = 1e-13;
    const ExtractionResult paf = extract_factors(r, k, o);
    EXPECT_TRUE(paf.convergence.converged);
    EXPECT_LT((paf.communalities - ref.at("h")).cwiseAbs().maxCoeff(), 1e-9);
    EXPECT_LT((paf.uniquenesses - ref.at("u")).cwiseAbs().maxCoeff(), 1e-9);
    EXPECT_LT(max_abs_diff_up_to_column_sign(paf.loadings, ref.at("l")), 1e-8);
  }
}

TEST(ExtractionMinres, ReachesTheLeastSquaresOptimumFoundByScipy) {
  // Reference: scipy.optimize.minimize (L-BFGS-B, tight tolerances) on the unweighted least squares
  // criterion 1/2 sum_{m > k} eig_m(R - Psi)^2 over Psi in [0.005, 1] (Joreskog 1977), and numpy for
  // the residual correlations and their root mean square; datasets::Harman74.cor, 4 factors.
  const Matrix r = r_dataset("Harman74.cor$cov");
  const ExtractionResult mr = extract_factors(r, 4, with(ExtractionMethod::minimum_residual));
  ASSERT_TRUE(mr.convergence.converged);
  const auto ref = run_python(R"(
from scipy import optimize
R = X; k = 4; p = R.shape[0]
def f(psi):
    ev = np.linalg.eigvalsh(R - np.diag(psi))
    return 0.5 * np.sum(ev[:p - k] ** 2)
start = 1 - (1 - 1 / np.diag(np.linalg.inv(R)))
res = optimize.minimize(f, start, method='L-BFGS-B', bounds=[(0.005, 1)] * p,
                        options={'ftol': 1e-16, 'gtol': 1e-12, 'maxiter': 100000, 'maxcor': 30})
emit('u', res.x); emit('f', res.fun)
S = L @ L.T + np.diag(U[:, 0]); E = R - S
emit('rmsr', np.sqrt(np.mean(E[np.triu_indices(p, 1)] ** 2))); emit('obj', 0.5 * np.sum(E ** 2))
)", {{"X", r}, {"L", mr.loadings}, {"U", mr.uniquenesses}});
  EXPECT_LT((mr.uniquenesses - ref.at("u")).cwiseAbs().maxCoeff(), 1e-5);
  EXPECT_LE(mr.objective, ref.at("f")(0, 0) + 1e-12);
  EXPECT_NEAR(mr.objective, ref.at("obj")(0, 0), 1e-12);
  EXPECT_NEAR(residual_fit(r, mr.loadings, mr.uniquenesses).rmsr, ref.at("rmsr")(0, 0), 1e-12);
  // At an interior minimum the diagonal residuals vanish: communality + uniqueness = 1.
  EXPECT_LT((mr.communalities + mr.uniquenesses - Vector::Ones(24)).cwiseAbs().maxCoeff(), 1e-8);
}

TEST(ExtractionPCA, MatchesNumpyEigendecomposition) {
  // Reference: numpy.linalg.eigh; loadings = eigenvectors * sqrt(eigenvalues), largest first.
  const Matrix r = r_dataset("Harman23.cor$cov");
  const auto ref = run_python(R"(
w, v = np.linalg.eigh(X); idx = np.argsort(w)[::-1][:3]
emit('l', v[:, idx] * np.sqrt(w[idx]))
)", {{"X", r}});
  const ExtractionResult pc = extract_factors(r, 3, with(ExtractionMethod::principal_components));
  EXPECT_LT(max_abs_diff_up_to_column_sign(pc.loadings, ref.at("l")), 1e-12);
  EXPECT_LT((pc.communalities + pc.uniquenesses - Vector::Ones(8)).cwiseAbs().maxCoeff(), 1e-14);
}

namespace {

// A population correlation matrix that is exactly a two-factor model (common practice).
Matrix two_factor_population(Matrix* lambda_out = nullptr, Vector* psi_out = nullptr) {
  Matrix lambda(8, 2);
  lambda << 0.8, 0.1, 0.7, 0.2, 0.6, 0.0, 0.75, -0.1, 0.1, 0.7, 0.2, 0.6, 0.0, 0.8, -0.05, 0.65;
  const Vector psi = Vector::Ones(8) - lambda.rowwise().squaredNorm();
  if (lambda_out) *lambda_out = lambda;
  if (psi_out) *psi_out = psi;
  return implied_correlation(lambda, psi);
}

}  // namespace

TEST(ExtractionProperties, ExactTwoFactorPopulationIsRecoveredByEveryCommonFactorMethod) {
  Matrix lambda;
  Vector psi;
  const Matrix r = two_factor_population(&lambda, &psi);
  for (auto m : {ExtractionMethod::maximum_likelihood, ExtractionMethod::minimum_residual, ExtractionMethod::principal_axis}) {
    SCOPED_TRACE(to_string(m));
    ExtractionOptions o = with(m);
    o.max_iterations = 100000;
    o.tolerance = 1e-12;
    const ExtractionResult x = extract_factors(r, 2, o);
    EXPECT_TRUE(x.convergence.converged);
    EXPECT_LT((x.uniquenesses - psi).cwiseAbs().maxCoeff(), 1e-7);
    // Loadings are identified up to rotation: compare L L'.
    EXPECT_LT((x.loadings * x.loadings.transpose() - lambda * lambda.transpose()).cwiseAbs().maxCoeff(), 1e-7);
    const FitResult fit = assess_fit(r, x.loadings, x.uniquenesses, 500);
    EXPECT_LT(fit.residual.max_abs_residual, 1e-7);
    EXPECT_LT(fit.chi_square, 1e-8);
    EXPECT_EQ(fit.rmsea, 0.0);
    EXPECT_TRUE(x.heywood.empty());
  }
}

TEST(ExtractionProperties, InvariantToRescalingAColumnAndEquivariantToPermutingColumns) {
  // Simulated data (invented, for this property only): rescaling an item changes no correlation, so
  // nothing downstream may change; permuting items permutes the rows of the solution (common practice).
  auto rng = random_stream(42, 0);
  Matrix lambda;
  two_factor_population(&lambda);
  const Matrix f = standard_normal_matrix(400, 2, rng);
  const Matrix e = standard_normal_matrix(400, 8, rng);
  Matrix x = f * lambda.transpose();
  for (Index j = 0; j < 8; ++j) x.col(j) += std::sqrt(1.0 - lambda.row(j).squaredNorm()) * e.col(j);
  Matrix scaled = x;
  scaled.col(3) = scaled.col(3) * 250.0 + Vector::Constant(400, 7.0);
  std::vector<Index> perm{5, 2, 7, 0, 1, 6, 3, 4};
  Matrix permuted(400, 8);
  for (Index j = 0; j < 8; ++j) permuted.col(j) = x.col(perm[static_cast<std::size_t>(j)]);
  const Matrix r = correlation(x).matrix, rs = correlation(scaled).matrix, rp = correlation(permuted).matrix;
  for (auto m : {ExtractionMethod::maximum_likelihood, ExtractionMethod::minimum_residual, ExtractionMethod::principal_axis,
                 ExtractionMethod::principal_components}) {
    SCOPED_TRACE(to_string(m));
    ExtractionOptions o = with(m);
    o.tolerance = 1e-11;
    o.max_iterations = 100000;
    const ExtractionResult a = extract_factors(r, 2, o), b = extract_factors(rs, 2, o), c = extract_factors(rp, 2, o);
    EXPECT_LT(max_abs_diff_up_to_column_sign(b.loadings, a.loadings), 1e-9);
    EXPECT_LT((b.uniquenesses - a.uniquenesses).cwiseAbs().maxCoeff(), 1e-9);
    Matrix a_perm(8, 2);
    Vector u_perm(8);
    for (Index j = 0; j < 8; ++j) {
      a_perm.row(j) = a.loadings.row(perm[static_cast<std::size_t>(j)]);
      u_perm(j) = a.uniquenesses(perm[static_cast<std::size_t>(j)]);
    }
    EXPECT_LT(max_abs_diff_up_to_column_sign(c.loadings, a_perm), 1e-7);
    EXPECT_LT((c.uniquenesses - u_perm).cwiseAbs().maxCoeff(), 1e-6);
  }
}

TEST(ExtractionProperties, DesignedHeywoodCaseIsFlaggedWithTheItemName) {
  // With one factor and three items, communality h1 = r12 r13 / r23 (the triad formula, common practice);
  // r12 = .8, r13 = .7, r23 = .5 force h1 = 1.12 > 1: an improper solution by design.
  Matrix r(3, 3);
  r << 1, 0.8, 0.7, 0.8, 1, 0.5, 0.7, 0.5, 1;
  ExtractionOptions o = with(ExtractionMethod::maximum_likelihood);
  o.item_names = {"alpha", "beta", "gamma"};
  const ExtractionResult ml = extract_factors(r, 1, o);
  ASSERT_EQ(ml.heywood.size(), 1u);
  EXPECT_EQ(ml.heywood[0].item, 0);
  EXPECT_EQ(ml.heywood[0].label, "item 'alpha'");
  EXPECT_TRUE(ml.heywood[0].at_bound);
  EXPECT_NEAR(ml.uniquenesses(0), 0.005, 1e-12);
  bool noted = false;
  for (const auto& n : ml.notes) noted |= n.rfind("Heywood case: item 'alpha' has its uniqueness held at the lower bound", 0) == 0;
  EXPECT_TRUE(noted);

  o.method = ExtractionMethod::principal_axis;
  o.max_iterations = 100000;
  const ExtractionResult paf = extract_factors(r, 1, o);
  ASSERT_EQ(paf.heywood.size(), 1u);
  EXPECT_EQ(paf.heywood[0].label, "item 'alpha'");
  EXPECT_FALSE(paf.heywood[0].at_bound);
  EXPECT_NEAR(paf.communalities(0), 0.8 * 0.7 / 0.5, 1e-6);
}

TEST(ExtractionProperties, TwoConstructsNeedTwoFactors) {
  // Simulated (invented for this check): two constructs, three indicators each, loadings .7,
  // n = 1000. Two factors leave near-zero residual correlations, one factor leaves clearly
  // non-zero ones (common practice).
  auto rng = random_stream(7, 0);
  const Matrix f = standard_normal_matrix(1000, 2, rng);
  const Matrix e = standard_normal_matrix(1000, 6, rng);
  Matrix x(1000, 6);
  for (Index j = 0; j < 6; ++j) x.col(j) = 0.7 * f.col(j / 3) + std::sqrt(1 - 0.49) * e.col(j);
  const Matrix r = correlation(x).matrix;
  for (auto m : {ExtractionMethod::maximum_likelihood, ExtractionMethod::minimum_residual, ExtractionMethod::principal_axis}) {
    SCOPED_TRACE(to_string(m));
    const ExtractionResult one = extract_factors(r, 1, with(m)), two = extract_factors(r, 2, with(m));
    const ResidualFit r1 = residual_fit(r, one.loadings, one.uniquenesses);
    const ResidualFit r2 = residual_fit(r, two.loadings, two.uniquenesses);
    EXPECT_LT(r2.max_abs_residual, 0.05);
    EXPECT_LT(r2.rmsr, 0.03);
    EXPECT_GT(r1.rmsr, 0.10);
    EXPECT_GT(r1.max_abs_residual, 0.15);
  }
}

TEST(ExtractionErrors, EachNamesTheProblem) {
  const Matrix r = two_factor_population();
  EXPECT_EQ(error_message([&] { extract_factors(r, 0); }), "the number of factors must be at least 1; got 0");
  EXPECT_EQ(error_message([&] { extract_factors(r, 8); }), "8 factors from 8 items: there must be fewer factors than items");
  EXPECT_EQ(error_message([&] { extract_factors(r.topLeftCorner(5, 5), 3); }),
            "maximum likelihood with 3 factors for 5 items has negative degrees of freedom (-2); 5 items can identify "
            "at most 2 factors");
  try {
    extract_factors(r.topLeftCorner(4, 4), 2);
    ADD_FAILURE() << "no error";
  } catch (const Error& e) {
    EXPECT_EQ(e.code(), ErrorCode::too_many_factors);
    EXPECT_STREQ(e.what(), "maximum likelihood with 2 factors for 4 items has negative degrees of freedom (-1); 4 items "
                           "can identify at most 1 factor");
  }
  Matrix npd(4, 4);  // pairwise-deletion style matrix, smallest eigenvalue below zero
  npd << 1, 0.9, 0.9, 0.1, 0.9, 1, 0.9, 0.9, 0.9, 0.9, 1, 0.9, 0.1, 0.9, 0.9, 1;
  ASSERT_FALSE(is_positive_definite(npd));
  const std::string ml_npd = error_message([&] { extract_factors(npd, 1); });
  EXPECT_EQ(ml_npd.rfind("maximum likelihood needs a positive-definite correlation matrix, but this one's smallest "
                         "eigenvalue is -",
                         0),
            0u);
  EXPECT_NE(ml_npd.find("smooth it to the nearest correlation matrix first"), std::string::npos);
  EXPECT_NE(error_message([&] { extract_factors(npd, 1, with(ExtractionMethod::principal_axis)); })
                .find("principal axis factoring starts from squared multiple correlations"),
            std::string::npos);
  // Minimum residual still works on such a matrix, and says how it started.
  const ExtractionResult mr = extract_factors(npd, 1, with(ExtractionMethod::minimum_residual));
  EXPECT_NE(mr.notes.front().find("not positive definite"), std::string::npos);
  ExtractionOptions o;
  o.n_obs = 8;
  EXPECT_EQ(error_message([&] { extract_factors(r, 2, o); }),
            "too few observations: a correlation matrix of 8 items from 8 observations is singular; at least 9 "
            "observations are needed, and many more for stable factors");
  o.n_obs = -3;
  EXPECT_EQ(error_message([&] { extract_factors(r, 2, o); }), "the number of observations is negative (-3)");
  o = {};
  o.max_iterations = 0;
  EXPECT_EQ(error_message([&] { extract_factors(r, 2, o); }), "the iteration cap must be at least 1; got 0");
  o = {};
  o.tolerance = -1;
  EXPECT_EQ(error_message([&] { extract_factors(r, 2, o); }), "the convergence tolerance must be positive; got -1");
  o = {};
  o.min_uniqueness = 0;
  EXPECT_EQ(error_message([&] { extract_factors(r, 2, o); }),
            "the lower bound for uniquenesses must lie strictly between 0 and 1; got 0");
  o = {};
  o.item_names = {"a", "b"};
  EXPECT_EQ(error_message([&] { extract_factors(r, 2, o); }), "2 item names were given for 8 items");
  Matrix bad = r;
  bad(0, 0) = 2.0;
  EXPECT_EQ(error_message([&] { extract_factors(bad, 2); }), "the diagonal of a correlation matrix must be 1; column 1 has 2");
  // Non-convergence is reported, not hidden.
  o = {};
  o.max_iterations = 2;
  const ExtractionResult capped = extract_factors(r_dataset("Harman74.cor$cov"), 4, o);
  EXPECT_FALSE(capped.convergence.converged);
  EXPECT_EQ(capped.convergence.iterations, 2);
  EXPECT_EQ(capped.notes.back().rfind("maximum likelihood did not converge in 2 iterations", 0), 0u);
  // Starting uniquenesses of the wrong length, or not finite.
  o = {};
  o.start_uniquenesses = Vector::Constant(3, 0.5);
  EXPECT_EQ(error_message([&] { extract_factors(r, 2, o); }), "3 starting uniquenesses were given for 8 items");
  o.start_uniquenesses = Vector::Constant(8, 0.5);
  o.start_uniquenesses(2) = std::nan("");
  o.item_names = {"a", "b", "c", "d", "e", "f", "g", "h"};
  EXPECT_EQ(error_message([&] { extract_factors(r, 2, o); }), "the starting uniqueness of item 'c' is not a finite number (nan)");
}

TEST(ExtractionProperties, AnyStartReachesTheSameOptimumAsFactanal) {
  // Harman74.cor (R's datasets), 4 factors: maximum likelihood and minimum residual from their usual
  // starts, from flat uniquenesses of 0.5, from values outside the box (moved into it) and from R's
  // stats::factanal solution (the warm start a bootstrap replicate uses) all stop at the same optimum:
  // the ML one agrees with factanal to 1e-6 (as MatchesFactanalOnHarman74), and every start agrees with
  // the usual start to 1e-7. From the optimum itself the search has little left to do.
  const Matrix r = r_dataset("Harman74.cor$cov");
  const auto ref = factanal_ml(r, 4, 145);
  const Vector reference = ref.at("u");
  for (auto m : {ExtractionMethod::maximum_likelihood, ExtractionMethod::minimum_residual}) {
    SCOPED_TRACE(to_string(m));
    ExtractionOptions o = with(m);
    const ExtractionResult usual = extract_factors(r, 4, o);
    ASSERT_TRUE(usual.convergence.converged);
    if (m == ExtractionMethod::maximum_likelihood) {
      EXPECT_LT((usual.uniquenesses - reference).cwiseAbs().maxCoeff(), 1e-6);
    }
    Vector outside = Vector::Constant(24, 0.3);
    outside(0) = -1.0, outside(1) = 7.0;
    for (const Vector& start : {Vector(Vector::Constant(24, 0.5)), outside, reference, usual.uniquenesses}) {
      o.start_uniquenesses = start;
      const ExtractionResult from = extract_factors(r, 4, o);
      ASSERT_TRUE(from.convergence.converged);
      EXPECT_LT((from.uniquenesses - usual.uniquenesses).cwiseAbs().maxCoeff(), 1e-7);
      EXPECT_LT(max_abs_diff_up_to_column_sign(from.loadings, usual.loadings), 1e-6);
      EXPECT_NEAR(from.objective, usual.objective, 1e-10);
    }
    o.start_uniquenesses = usual.uniquenesses;
    EXPECT_LE(extract_factors(r, 4, o).convergence.iterations, 3);
  }
}

namespace {

// The optimum of the concentrated ML criterion F(psi) = sum_{m > k} (theta_m - ln theta_m - 1), theta the
// eigenvalues of Psi^-1/2 R Psi^-1/2 (Joreskog 1967), over psi in [0.005, 1], found independently by
// scipy.optimize.minimize (L-BFGS-B) with the gradient (Sigma - R)_ii / psi_i^2 written here in numpy.
Matrix scipy_ml_uniquenesses(const Matrix& r, int k) {
  return run_python(R"(
from scipy import optimize
R = X; k = int(K[0, 0]); p = R.shape[0]
def fg(psi):
    s = 1 / np.sqrt(psi)
    th, v = np.linalg.eigh(s[:, None] * R * s[None, :])
    th, v = th[::-1], v[:, ::-1]
    f = np.sum(th[k:] - np.log(th[k:]) - 1)
    lam = np.sqrt(psi)[:, None] * v[:, :k] * np.sqrt(np.maximum(th[:k] - 1, 0))[None, :]
    g = (np.sum(lam ** 2, axis=1) + psi - np.diag(R)) / psi ** 2
    return f, g
start = (1 - 0.5 * k / p) / np.diag(np.linalg.inv(R))
res = optimize.minimize(fg, start, jac=True, method='L-BFGS-B', bounds=[(0.005, 1)] * p,
                        options={'ftol': 0, 'gtol': 1e-13, 'maxiter': 100000, 'maxcor': 50})
emit('u', res.x); emit('f', res.fun)
)", {{"X", r}, {"K", scalar(k)}}).at("u");
}

}  // namespace

TEST(ExtractionML, ConvergesWithinTheDefaultIterationsWhenAUniquenessIsHeldAtTheBound) {
  // Two solutions with a uniqueness held at the lower bound 0.005 (Heywood optima): a 9-item, 3-factor
  // matrix of three clusters (n = 300; the correlations were given in a bug report, not a published source)
  // and datasets::Harman23.cor with 3 factors (R's datasets, Harman 1976). With the default cap of 1,000
  // iterations and tolerance 1e-9 on the projected gradient the search must converge, to the optimum that
  // scipy's L-BFGS-B finds independently (uniquenesses to 1e-6).
  Matrix nine(9, 9);
  nine << 1, .479, .391, .115, .154, .046, .182, .163, .05, .479, 1, .258, .123, .119, .003, .04, -.029, .194, .391,
      .258, 1, .117, .155, .067, .025, .029, .105, .115, .123, .117, 1, .497, .418, .061, .145, .076, .154, .119, .155,
      .497, 1, .532, .099, .113, .091, .046, .003, .067, .418, .532, 1, .188, .154, .155, .182, .04, .025, .061, .099,
      .188, 1, .511, .438, .163, -.029, .029, .145, .113, .154, .511, 1, .451, .05, .194, .105, .076, .091, .155, .438,
      .451, 1;
  for (const auto& [what, r] : {std::pair<std::string, Matrix>{"nine items", nine},
                                {"Harman23.cor", r_dataset("Harman23.cor$cov")}}) {
    SCOPED_TRACE(what);
    ExtractionOptions o = with(ExtractionMethod::maximum_likelihood);
    const ExtractionResult ml = extract_factors(r, 3, o);
    EXPECT_TRUE(ml.convergence.converged) << ml.convergence.iterations << " iterations, criterion "
                                          << ml.convergence.final_change;
    EXPECT_LE(ml.convergence.iterations, o.max_iterations);
    EXPECT_LE(ml.convergence.final_change, o.tolerance);  // the criterion reported is the one tested
    EXPECT_FALSE(ml.heywood.empty());                    // the bound is active at this optimum
    const Matrix ref = scipy_ml_uniquenesses(r, 3);
    EXPECT_LT((ml.uniquenesses - ref).cwiseAbs().maxCoeff(), 1e-6);
  }
}
