// Polychoric and tetrachoric correlations, the bivariate normal CDF and the normal quantile, checked
// against R's polycor package (r-cran-polycor: polychor, the two-step estimate), mvtnorm's pmvnorm
// (Genz's bivariate algorithm, which polycor uses) and scipy (norm.ppf, integrate.quad), run live.
#include "lode/bivariate_normal.hpp"
#include "lode/correlation.hpp"
#include "lode/polychoric.hpp"
#include "lode/random.hpp"
#include "support/errors.hpp"
#include "support/external.hpp"

#include <fmt/format.h>
#include <gtest/gtest.h>

#include <algorithm>
#include <atomic>
#include <functional>
#include <cmath>
#include <string>
#include <vector>

using namespace lode;
using namespace lode::testing;  // the live references (external.hpp) and error_message

namespace {

// Codes 1..(t.size()+1) of x cut at thresholds t (ascending).
double discretise(double x, const std::vector<double>& t) {
  double code = 1.0;
  for (double c : t)
    if (x > c) code += 1.0;
  return code;
}

// n draws of a standard bivariate normal pair with correlation rho, cut at ta and tb.
Matrix ordinal_pair(Index n, double rho, const std::vector<double>& ta, const std::vector<double>& tb,
                    std::uint64_t seed) {
  auto rng = random_stream(seed, 0);
  const Matrix z = standard_normal_matrix(n, 2, rng);
  Matrix x(n, 2);
  for (Index i = 0; i < n; ++i) {
    x(i, 0) = discretise(z(i, 0), ta);
    x(i, 1) = discretise(rho * z(i, 0) + std::sqrt(1 - rho * rho) * z(i, 1), tb);
  }
  return x;
}

// A survey of p ordinal items driven by two correlated factors, cut at item-specific thresholds.
Matrix ordinal_survey(Index n, Index p, int categories, std::uint64_t seed, double missing_share = 0.0) {
  auto rng = random_stream(seed, 0);
  const Matrix f = standard_normal_matrix(n, 2, rng);
  const Matrix e = standard_normal_matrix(n, p, rng);
  std::uniform_real_distribution<double> u(0.0, 1.0);
  Matrix x(n, p);
  for (Index j = 0; j < p; ++j) {
    const double loading = 0.45 + 0.4 * static_cast<double>(j % 5) / 4.0;
    const double shift = -0.6 + 1.2 * static_cast<double>(j % 3) / 2.0;
    std::vector<double> t;
    for (int c = 1; c < categories; ++c) t.push_back(shift + 3.0 * (c - 0.5 * categories) / categories);
    for (Index i = 0; i < n; ++i) {
      const double factor = j % 2 == 0 ? f(i, 0) : 0.5 * f(i, 0) + std::sqrt(0.75) * f(i, 1);
      x(i, j) = discretise(loading * factor + std::sqrt(1 - loading * loading) * e(i, j), t);
    }
  }
  for (Index i = 0; i < n; ++i)
    for (Index j = 0; j < p; ++j)
      if (u(rng) < missing_share) x(i, j) = std::nan("");
  return x;
}

Matrix contingency(const Matrix& pair) {
  const Index r = static_cast<Index>(pair.col(0).maxCoeff()), c = static_cast<Index>(pair.col(1).maxCoeff());
  Matrix t = Matrix::Zero(r, c);
  for (Index i = 0; i < pair.rows(); ++i) t(static_cast<Index>(pair(i, 0)) - 1, static_cast<Index>(pair(i, 1)) - 1) += 1;
  return t;
}

}  // namespace

TEST(BivariateNormal, CdfMatchesScipyQuadratureAndMvtnorm) {
  std::vector<double> hs = {-3.5, -1.7, -0.4, 0.0, 0.25, 1.1, 2.6, 4.0};
  std::vector<double> rhos = {-0.9999, -0.99, -0.93, -0.8, -0.5, -0.2, 0.0, 0.1, 0.35, 0.6, 0.8, 0.92, 0.926, 0.97, 0.999};
  Matrix grid(static_cast<Index>(hs.size() * hs.size() * rhos.size()), 3);
  Index row = 0;
  for (double h : hs)
    for (double k : hs)
      for (double r : rhos) grid.row(row++) << h, k, r;
  // Reference 1: scipy.integrate.quad (adaptive, QUADPACK) of the bivariate normal integral in the
  // angle form Phi2(h,k;rho) = Phi(h)Phi(k) + (1/2pi) int_0^asin(rho) exp(-(h^2+k^2-2hk sin t)/(2cos^2 t)) dt
  // (Sheppard's formula as written by Drezner & Wesolowsky 1990), with scipy.stats.norm.cdf.
  const auto py = run_python(R"(
from scipy import integrate, stats
out = []
for h, k, r in G:
    f = lambda t: np.exp(-(h*h + k*k - 2*h*k*np.sin(t)) / (2*np.cos(t)**2))
    v, err = integrate.quad(f, 0.0, np.arcsin(r), epsabs=1e-16, epsrel=1e-14, limit=500)
    out.append(stats.norm.cdf(h) * stats.norm.cdf(k) + v / (2*np.pi))
emit('p', np.array(out))
)",
                             {{"G", grid}});
  // Reference 2: R's mvtnorm::pmvnorm (Genz's bivariate method; the routine polycor relies on).
  const auto r = run_r(R"(
    p <- apply(G, 1, function(g) mvtnorm::pmvnorm(upper = g[1:2], corr = matrix(c(1, g[3], g[3], 1), 2)))
    emit("p", p)
  )",
                       {{"G", grid}});
  double worst_py = 0.0, worst_r = 0.0;
  for (Index i = 0; i < grid.rows(); ++i) {
    const double mine = bivariate_normal_cdf(grid(i, 0), grid(i, 1), grid(i, 2));
    worst_py = std::max(worst_py, std::abs(mine - py.at("p")(i, 0)));
    worst_r = std::max(worst_r, std::abs(mine - r.at("p")(i, 0)));
  }
  EXPECT_LT(worst_py, 1e-14);
  EXPECT_LT(worst_r, 1e-14);
  // Limits: infinite arguments and |rho| = 1 (exact by definition).
  EXPECT_EQ(bivariate_normal_cdf(-INFINITY, 0.3, 0.5), 0.0);
  EXPECT_DOUBLE_EQ(bivariate_normal_cdf(INFINITY, 0.3, 0.5), normal_cdf(0.3));
  EXPECT_NEAR(bivariate_normal_cdf(0.2, 0.7, 1.0), normal_cdf(0.2), 1e-15);
  EXPECT_NEAR(bivariate_normal_cdf(0.2, 0.7, -1.0), normal_cdf(0.7) - normal_cdf(-0.2), 1e-15);
}

TEST(BivariateNormal, QuantileMatchesScipyNormPpf) {
  Matrix p(12, 1);
  p << 1e-300, 1e-20, 1e-8, 0.001, 0.02425, 0.1, 0.3, 0.5, 0.61, 0.9, 0.999, 1 - 1e-12;
  // Reference: scipy.stats.norm.ppf.
  const auto ref = run_python("from scipy import stats\nemit('q', stats.norm.ppf(P[:, 0]))", {{"P", p}});
  for (Index i = 0; i < p.rows(); ++i) {
    const double want = ref.at("q")(i, 0);
    EXPECT_NEAR(normal_quantile(p(i, 0)), want, 2e-15 * std::max(1.0, std::abs(want))) << "p = " << p(i, 0);
  }
  EXPECT_EQ(normal_quantile(0.0), -INFINITY);
  EXPECT_EQ(normal_quantile(1.0), INFINITY);
  EXPECT_TRUE(std::isnan(normal_quantile(1.5)));
}

TEST(Polychoric, ThresholdsAreNormalQuantilesOfTheMargins) {
  const Matrix x = ordinal_survey(700, 5, 5, 21);
  const auto res = polychoric_correlation(x);
  // Reference: scipy.stats.norm.ppf of the cumulative category proportions (numpy.unique counts).
  std::string script = "from scipy import stats\n";
  for (int j = 0; j < 5; ++j)
    script += fmt::format("v, c = np.unique(X[:, {0}], return_counts=True)\nemit('t{0}', stats.norm.ppf(np.cumsum(c)[:-1] / c.sum()))\n", j);
  const auto ref = run_python(script, {{"X", x}});
  for (int j = 0; j < 5; ++j) {
    const Matrix& want = ref.at(fmt::format("t{}", j));
    ASSERT_EQ(res.thresholds[static_cast<std::size_t>(j)].size(), want.rows());
    EXPECT_LT((res.thresholds[static_cast<std::size_t>(j)] - want.col(0)).cwiseAbs().maxCoeff(), 1e-14);
    // Complete data: every pair uses the same thresholds for an item.
  }
  EXPECT_LT((res.pairs[0].thresholds_a - res.thresholds[0]).cwiseAbs().maxCoeff(), 1e-15);
  EXPECT_LT((res.pairs[0].thresholds_b - res.thresholds[1]).cwiseAbs().maxCoeff(), 1e-15);
}

TEST(Polychoric, PairMatchesPolycorTwoStep) {
  const Matrix x = ordinal_pair(600, 0.55, {-1.2, -0.3, 0.5}, {-1.5, -0.6, 0.2, 1.0}, 3);
  // Reference: R's polycor::polychor(x, y, ML = FALSE, std.err = TRUE), the two-step estimate and its
  // standard error from the numerical Hessian of optim; and, for a tighter check of the same
  // estimate, R's optimise (tol 1e-12) on polycor's own likelihood (polycor:::binBvn, mvtnorm).
  const auto ref = run_r(R"(
    library(polycor)
    pc <- polychor(X[, 1], X[, 2], ML = FALSE, std.err = TRUE)
    tab <- table(X[, 1], X[, 2])
    f <- function(r) -sum(tab * log(polycor:::binBvn(r, pc$row.cuts, pc$col.cuts)))
    emit("rho", pc$rho)
    emit("se", sqrt(pc$var[1]))
    emit("tight", optimise(f, c(-0.9999, 0.9999), tol = 1e-12)$minimum)
    emit("rc", pc$row.cuts)
    emit("cc", pc$col.cuts)
  )",
                         {{"X", x}});
  const auto est = polychoric_from_table(contingency(x));
  EXPECT_NEAR(est.rho, ref.at("rho")(0, 0), 1e-4);
  EXPECT_NEAR(est.rho, ref.at("tight")(0, 0), 1e-7);
  EXPECT_NEAR(est.standard_error, ref.at("se")(0, 0), 1e-3 * ref.at("se")(0, 0));
  EXPECT_LT((est.thresholds_a - ref.at("rc").col(0)).cwiseAbs().maxCoeff(), 1e-14);
  EXPECT_LT((est.thresholds_b - ref.at("cc").col(0)).cwiseAbs().maxCoeff(), 1e-14);
  EXPECT_TRUE(est.convergence.converged);
  EXPECT_FALSE(est.at_bound);
  EXPECT_FALSE(est.zero_cell_corrected);
}

TEST(Polychoric, MatrixMatchesPolycorPairByPair) {
  const Matrix x = ordinal_survey(400, 6, 4, 8, 0.06);
  // Reference: R's polycor::polychor (two-step) on the rows where both items of a pair are answered
  // (pairwise) or on the complete rows (listwise): rho from polychor(x, y) (optimise; accurate to about
  // 1e-5), standard errors from polychor(x, y, std.err = TRUE) (optim's numerical Hessian). That
  // call's own rho comes from BFGS started at 0 and was seen up to 1.8e-4 away from the maximum on
  // this set, so it is not used for rho. Tighter: R's optimise (tol 1e-12) on polycor's likelihood
  // (polycor:::binBvn, mvtnorm) with polychor's thresholds.
  const auto ref = run_r(R"(
    library(polycor)
    p <- ncol(X)
    one <- function(rows) {
      R <- diag(p); S <- matrix(0, p, p); Tt <- diag(p)
      for (a in 1:(p - 1)) for (b in (a + 1):p) {
        ok <- rows & !is.na(X[, a]) & !is.na(X[, b])
        pc <- polychor(X[ok, a], X[ok, b], std.err = TRUE)
        R[a, b] <- R[b, a] <- polychor(X[ok, a], X[ok, b])
        S[a, b] <- S[b, a] <- sqrt(pc$var[1])
        tab <- table(X[ok, a], X[ok, b])
        f <- function(r) -sum(tab * log(polycor:::binBvn(r, pc$row.cuts, pc$col.cuts)))
        Tt[a, b] <- Tt[b, a] <- optimise(f, c(-0.9999, 0.9999), tol = 1e-12)$minimum
      }
      list(R = R, S = S, T = Tt)
    }
    pw <- one(rep(TRUE, nrow(X)))
    lw <- one(complete.cases(X))
    emit("pr", pw$R); emit("ps", pw$S); emit("lr", lw$R); emit("ls", lw$S); emit("pt", pw$T); emit("lt", lw$T)
    emit("nc", sum(complete.cases(X)))
  )",
                         {{"X", x}});
  CorrelationOptions o;
  o.kind = CorrelationKind::polychoric;
  o.polychoric.zero_cells = ZeroCellPolicy::none;  // polychor does not correct empty cells
  const auto pw = polychoric_correlation(x, o);
  EXPECT_LT((pw.estimates - ref.at("pr")).cwiseAbs().maxCoeff(), 1e-4);
  EXPECT_LT((pw.estimates - ref.at("pt")).cwiseAbs().maxCoeff(), 1e-6);
  EXPECT_LT(((pw.standard_errors - ref.at("ps")).array() / ref.at("ps").array().max(1e-300)).abs().maxCoeff(), 2e-3);
  o.missing = MissingPolicy::listwise;
  const auto lw = polychoric_correlation(x, o);
  EXPECT_LT((lw.estimates - ref.at("lr")).cwiseAbs().maxCoeff(), 1e-4);
  EXPECT_LT((lw.estimates - ref.at("lt")).cwiseAbs().maxCoeff(), 1e-6);
  EXPECT_LT(((lw.standard_errors - ref.at("ls")).array() / ref.at("ls").array().max(1e-300)).abs().maxCoeff(), 2e-3);
  EXPECT_EQ(lw.correlation.n_obs, static_cast<Index>(ref.at("nc")(0, 0)));
  // correlation() with kind == polychoric is the same matrix.
  EXPECT_EQ((correlation(x, o).matrix - lw.correlation.matrix).cwiseAbs().maxCoeff(), 0.0);
  EXPECT_EQ(pw.pairs_not_converged, 0);
}

TEST(Tetrachoric, TablesMatchPolycorIncludingAnEmptyCell) {
  std::vector<Matrix> tables;
  Matrix t(2, 2);
  t << 40, 10, 15, 35;
  tables.push_back(t);
  t << 5, 20, 30, 45;
  tables.push_back(t);
  t << 60, 2, 3, 35;
  tables.push_back(t);
  t << 12, 30, 25, 8;
  tables.push_back(t);
  t << 30, 0, 12, 58;  // an empty cell: the likelihood is largest at rho = 1
  tables.push_back(t);
  PolychoricOptions none;
  none.zero_cells = ZeroCellPolicy::none;
  for (std::size_t i = 0; i < tables.size(); ++i) {
    // Reference: R's polycor::polychor on the 2 x 2 table (two-step): std.err = TRUE for rho and its
    // standard error; for the empty-cell table the default (optimise on [-0.9999, 0.9999], tolerance
    // .Machine$double.eps^0.25, about 1.2e-4), since the maximum is on the bound.
    // Standard errors: polychor(T, std.err = TRUE) where its BFGS run stays admissible (for the
    // third table it steps past 1 and polychor reports "inadmissible correlation set to 0.9999"),
    // else the central second difference of polycor's likelihood (polycor:::binBvn) at the optimum.
    const auto ref = run_r(R"(
      library(polycor)
      emit("rho", polychor(T))
      rc <- qnorm(cumsum(rowSums(T)) / sum(T))[1]; cc <- qnorm(cumsum(colSums(T)) / sum(T))[1]
      f <- function(r) -sum(T * log(polycor:::binBvn(r, rc, cc)))
      rho <- optimise(f, c(-0.9999, 0.9999), tol = 1e-12)$minimum
      emit("tight", rho)
      pc <- tryCatch(polychor(T, std.err = TRUE), warning = function(w) NULL)
      h <- 1e-4
      emit("se", if (is.null(pc)) 1 / sqrt((f(rho + h) - 2 * f(rho) + f(rho - h)) / h^2) else sqrt(pc$var[1]))
    )",
                           {{"T", tables[i]}});
    const auto est = polychoric_from_table(tables[i], none);
    if (i + 1 < tables.size()) {
      EXPECT_NEAR(est.rho, ref.at("rho")(0, 0), 1e-4) << "table " << i;
      EXPECT_NEAR(est.rho, ref.at("tight")(0, 0), 1e-7) << "table " << i;
      EXPECT_NEAR(est.standard_error, ref.at("se")(0, 0), 1e-3 * ref.at("se")(0, 0)) << "table " << i;
    } else {
      EXPECT_TRUE(est.at_bound);
      EXPECT_EQ(est.rho, 0.9999);
      EXPECT_NEAR(est.rho, ref.at("rho")(0, 0), 2e-4);  // within optimise's default tolerance
      EXPECT_TRUE(std::isnan(est.standard_error));
    }
  }
}

TEST(Polychoric, TableWithEmptyCellsAwayFromTheBoundMatchesPolycor) {
  Matrix t(3, 4);
  t << 20, 11, 3, 0, 9, 25, 14, 4, 0, 6, 18, 21;
  // Reference: R's polycor::polychor(T, std.err = TRUE), which leaves empty cells as they are.
  const auto ref = run_r(R"(
    pc <- polycor::polychor(T, std.err = TRUE); emit("rho", pc$rho); emit("se", sqrt(pc$var[1]))
  )",
                         {{"T", t}});
  // The default policy changes nothing here: the estimate is inside the bound.
  const auto est = polychoric_from_table(t);
  EXPECT_FALSE(est.zero_cell_corrected);
  EXPECT_EQ(est.empty_cells, 2);
  EXPECT_NEAR(est.rho, ref.at("rho")(0, 0), 1e-4);
  EXPECT_NEAR(est.standard_error, ref.at("se")(0, 0), 1e-3 * ref.at("se")(0, 0));
}

TEST(Polychoric, ZeroCellCorrectionIsTheStatedOne) {
  Matrix t(2, 2);
  t << 30, 0, 12, 58;
  // Stated correction: 0.5 added to each empty cell for the estimate of rho, thresholds from the
  // observed margins. Reference: R's optimise (tol 1e-12) of polycor's likelihood (polycor:::binBvn,
  // mvtnorm) on the corrected table with the thresholds qnorm of the uncorrected margins.
  const auto ref = run_r(R"(
    rc <- qnorm(cumsum(rowSums(T)) / sum(T))[1]; cc <- qnorm(cumsum(colSums(T)) / sum(T))[1]
    W <- T; W[W == 0] <- 0.5
    f <- function(r) -sum(W * log(polycor:::binBvn(r, rc, cc)))
    rho <- optimise(f, c(-0.9999, 0.9999), tol = 1e-12)$minimum
    h <- 1e-4  # central second difference of the negative log-likelihood
    emit("rho", rho)
    emit("se", 1 / sqrt((f(rho + h) - 2 * f(rho) + f(rho - h)) / h^2))
  )",
                         {{"T", t}});
  const auto at_bound = polychoric_from_table(t);  // default policy: correct only at the bound
  EXPECT_TRUE(at_bound.zero_cell_corrected);
  EXPECT_FALSE(at_bound.at_bound);
  EXPECT_NEAR(at_bound.rho, ref.at("rho")(0, 0), 1e-7);
  EXPECT_NEAR(at_bound.standard_error, ref.at("se")(0, 0), 1e-4 * ref.at("se")(0, 0));
  PolychoricOptions always;
  always.zero_cells = ZeroCellPolicy::always;
  EXPECT_EQ(polychoric_from_table(t, always).rho, at_bound.rho);
  // "always" also changes a table whose estimate is inside the bound; "at_bound" does not.
  Matrix u(3, 3);
  u << 20, 11, 0, 9, 25, 14, 3, 6, 18;
  EXPECT_FALSE(polychoric_from_table(u).zero_cell_corrected);
  const auto corrected = polychoric_from_table(u, always);
  EXPECT_TRUE(corrected.zero_cell_corrected);
  EXPECT_NE(corrected.rho, polychoric_from_table(u).rho);
}

TEST(Polychoric, RecoversTheTrueCorrelationWithinItsStandardError) {
  // Property check over repeated seeds (the two-step estimate is consistent and its standard error
  // is the asymptotic one; Olsson 1979): about 95% of 1.96-SE intervals cover the true rho, and the
  // standardised errors have mean near 0 and spread near 1. Wide tolerances: 300 replicates.
  const double true_rho = 0.45;
  int covered = 0;
  double sum_z = 0.0, sum_z2 = 0.0;
  const int reps = 300;
  for (int s = 0; s < reps; ++s) {
    const Matrix x = ordinal_pair(500, true_rho, {-0.8, 0.1, 0.9}, {-1.0, -0.2, 0.6, 1.3}, 1000 + s);
    const auto est = polychoric_from_table(contingency(x));
    const double z = (est.rho - true_rho) / est.standard_error;
    covered += std::abs(z) < 1.96;
    sum_z += z;
    sum_z2 += z * z;
  }
  const double mean = sum_z / reps, sd = std::sqrt(sum_z2 / reps - mean * mean);
  EXPECT_GT(covered, 0.90 * reps);
  EXPECT_LT(covered, 0.99 * reps);
  EXPECT_LT(std::abs(mean), 0.25);
  EXPECT_GT(sd, 0.8);
  EXPECT_LT(sd, 1.2);
}

TEST(Polychoric, ThreadsDoNotChangeTheResultAndProgressCanCancel) {
  const Matrix x = ordinal_survey(800, 12, 5, 4, 0.03);
  CorrelationOptions o;
  o.kind = CorrelationKind::polychoric;
  o.threads = 1;
  const auto one = polychoric_correlation(x, o);
  o.threads = 2;
  const auto two = polychoric_correlation(x, o);
  EXPECT_EQ((one.estimates - two.estimates).cwiseAbs().maxCoeff(), 0.0);
  EXPECT_EQ(one.pairs.size(), 66u);
  std::atomic<long long> last{-1};
  o.polychoric.progress = [&](std::int64_t done, std::int64_t total) {
    EXPECT_EQ(total, 66);
    last = done;
    return true;
  };
  polychoric_correlation(x, o);
  EXPECT_EQ(last.load(), 66);
  // Cancelling: a callback that refuses at its first call (after about 50 ms) stops a computation
  // that would take far longer on one thread (3160 pairs of 9-category items, n = 6000).
  const Matrix big = ordinal_survey(6000, 80, 9, 5);
  o.threads = 1;
  bool called = false;
  o.polychoric.progress = [&](std::int64_t done, std::int64_t total) {
    called = true;
    return done == total;
  };
  EXPECT_NE(error_message([&] { polychoric_correlation(big, o); }).find("cancelled"), std::string::npos);
  EXPECT_TRUE(called);
}

TEST(Polychoric, IndefiniteMatrixIsFlaggedAndSmoothedOnRequest) {
  // Three items answered in disjoint blocks of rows: 1 and 2 agree, 2 and 3 agree, 1 and 3 disagree,
  // so the pairwise estimates (about +0.9, +0.9, -0.9) cannot form a correlation matrix.
  const Index block = 300;
  Matrix x = Matrix::Constant(3 * block, 3, std::nan(""));
  auto rng = random_stream(17, 0);
  const Matrix z = standard_normal_matrix(3 * block, 2, rng);
  const std::vector<double> t = {-0.7, 0.0, 0.8};
  for (Index i = 0; i < block; ++i) {
    const double u = z(i, 0), v = 0.9 * u + std::sqrt(1 - 0.81) * z(i, 1);
    x(i, 0) = discretise(u, t), x(i, 1) = discretise(v, t);
    const double u2 = z(block + i, 0), v2 = 0.9 * u2 + std::sqrt(1 - 0.81) * z(block + i, 1);
    x(block + i, 1) = discretise(u2, t), x(block + i, 2) = discretise(v2, t);
    const double u3 = z(2 * block + i, 0), v3 = -0.9 * u3 + std::sqrt(1 - 0.81) * z(2 * block + i, 1);
    x(2 * block + i, 0) = discretise(u3, t), x(2 * block + i, 2) = discretise(v3, t);
  }
  CorrelationOptions o;
  o.kind = CorrelationKind::polychoric;
  const auto raw = correlation(x, o);
  EXPECT_FALSE(raw.positive_definite);
  EXPECT_FALSE(raw.smoothing.applied);
  o.smooth_if_not_positive_definite = true;
  const auto smooth = polychoric_correlation(x, o);
  EXPECT_TRUE(smooth.correlation.positive_definite);
  EXPECT_TRUE(smooth.correlation.smoothing.applied);
  EXPECT_GT(smooth.correlation.smoothing.max_abs_change, 0.1);
  EXPECT_LT(smooth.estimates(0, 2), -0.8);  // the estimates themselves are kept
  bool noted = false;
  for (const auto& n : smooth.correlation.notes) noted |= n.find("nearest correlation matrix") != std::string::npos;
  EXPECT_TRUE(noted);
  EXPECT_EQ(smooth.correlation.n_obs, block);
}

TEST(Polychoric, ResampledCategoriesKeepEachItemsFrequencies) {
  const Matrix x = ordinal_survey(500, 6, 5, 9, 0.05);
  auto rng = random_stream(42, 0);
  const Matrix y = resample_categories(x, rng);
  auto rng_again = random_stream(42, 0);
  const Matrix y_again = resample_categories(x, rng_again);  // same engine state, same data
  EXPECT_TRUE((y.array().isNaN() == y_again.array().isNaN()).all());
  EXPECT_TRUE((y.array().isNaN() || y.array() == y_again.array()).all());
  for (Index j = 0; j < x.cols(); ++j) {
    std::vector<double> a, b;
    for (Index i = 0; i < x.rows(); ++i) {
      if (!std::isnan(x(i, j))) a.push_back(x(i, j));
      if (!std::isnan(y(i, j))) b.push_back(y(i, j));
    }
    std::sort(a.begin(), a.end());
    std::sort(b.begin(), b.end());
    EXPECT_EQ(a, b) << "column " << j;
  }
  // Items become independent: the resampled polychoric correlations are near 0 (each within 4 of
  // its standard errors), while the originals are not.
  CorrelationOptions o;
  const auto orig = polychoric_correlation(x, o);
  const auto res = polychoric_correlation(y, o);
  EXPECT_GT(orig.estimates(0, 2), 0.3);
  for (const auto& pr : res.pairs) EXPECT_LT(std::abs(pr.rho), 4.0 * pr.standard_error);
  // With another row count: draws with replacement, no missing values, proportions near the
  // observed ones (within 5 binomial standard errors).
  auto rng2 = random_stream(42, 1);
  const Matrix d = resample_categories(x, rng2, 3000);
  ASSERT_EQ(d.rows(), 3000);
  EXPECT_FALSE(d.array().isNaN().any());
  for (Index j = 0; j < x.cols(); ++j)
    for (double c = 1; c <= 5; ++c) {
      double answered = 0, hits = 0, draws = 0;
      for (Index i = 0; i < x.rows(); ++i)
        if (!std::isnan(x(i, j))) answered += 1, hits += x(i, j) == c;
      for (Index i = 0; i < d.rows(); ++i) draws += d(i, j) == c;
      const double prop = hits / answered;
      EXPECT_NEAR(draws / 3000.0, prop, 5.0 * std::sqrt(prop * (1 - prop) / 3000.0) + 1e-12);
    }
}

TEST(PolychoricErrors, MessagesNameTheProblem) {
  Matrix x = ordinal_survey(200, 4, 5, 2);
  CorrelationOptions o;
  o.kind = CorrelationKind::polychoric;
  o.item_names = {"q1", "q2", "q3", "q4"};
  Matrix frac = x;
  frac(6, 1) = 2.5;
  EXPECT_NE(error_message([&] { correlation(frac, o); }).find("item 'q2' holds the value 2.5 in row 7; polychoric"),
            std::string::npos);
  Matrix wide = x;
  for (Index i = 0; i < 200; ++i) wide(i, 2) = static_cast<double>(i % 14);
  EXPECT_NE(error_message([&] { correlation(wide, o); }).find("item 'q3' has 14 distinct values (from 0 to 13)"),
            std::string::npos);
  EXPECT_NE(error_message([&] { correlation(wide, o); }).find("at most 10 categories"), std::string::npos);
  CorrelationOptions more = o;
  more.polychoric.max_categories = 14;
  EXPECT_EQ(error_message([&] { correlation(wide, more); }), "(no error)");
  // q4 answered as 1 wherever q1 is answered, and 1 or 2 elsewhere (pairwise deletion).
  Matrix split = x;
  for (Index i = 0; i < 200; ++i) {
    if (i < 100) split(i, 3) = 1.0;
    else split(i, 3) = 1.0 + static_cast<double>(i % 2), split(i, 0) = std::nan("");
  }
  EXPECT_NE(error_message([&] { correlation(split, o); })
                .find("in the rows where item 'q1' and item 'q4' are both answered, item 'q4' has a single category"),
            std::string::npos);
  Matrix single = x;
  single.col(1).setConstant(3.0);
  EXPECT_NE(error_message([&] { correlation(single, o); }).find("item 'q2' is constant"), std::string::npos);
  CorrelationOptions bad = o;
  bad.polychoric.max_categories = 1;
  EXPECT_NE(error_message([&] { correlation(x, bad); }).find("max_categories must be between 2 and 100 (it is 1)"), std::string::npos);
  bad = o;
  bad.polychoric.max_abs_correlation = 1.0;
  EXPECT_NE(error_message([&] { correlation(x, bad); }).find("max_abs_correlation must lie strictly between 0 and 1"),
            std::string::npos);
  Matrix one_row(1, 3);
  one_row << 5, 0, 3;
  EXPECT_NE(error_message([&] { polychoric_from_table(one_row); }).find("1 non-empty row(s) and 2 non-empty column(s)"),
            std::string::npos);
  Matrix negative(2, 2);
  negative << 3, -1, 2, 4;
  EXPECT_NE(error_message([&] { polychoric_from_table(negative); }).find("holds -1 at row 1, column 2"), std::string::npos);
}
