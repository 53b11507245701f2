// How many factors: parallel analysis, MAP, eigenvalue rules and the consensus, checked against random
// matrix theory, numpy/scipy re-implementations run live, and simulated data of known structure.
#include "lode/factor_count.hpp"
#include "lode/random.hpp"
#include "support/external.hpp"

#include <gmock/gmock.h>
#include <gtest/gtest.h>

#include <cmath>

using namespace lode;
using lode::testing::run_python;
using lode::testing::scalar;
using ::testing::HasSubstr;

namespace {

// Simple-structure data: `factors` uncorrelated factors, `per_factor` items each, loadings drawn
// uniformly from [0.5, 0.8], unique parts normal with variance 1 - loading^2.
Matrix factor_data(Index n, Index factors, Index per_factor, std::uint64_t seed) {
  auto rng = random_stream(seed, 0);
  std::uniform_real_distribution<double> loading(0.5, 0.8);
  const Index p = factors * per_factor;
  const Matrix f = standard_normal_matrix(n, factors, rng);
  const Matrix e = standard_normal_matrix(n, p, rng);
  Matrix x(n, p);
  for (Index j = 0; j < p; ++j) {
    const double l = loading(rng);
    x.col(j) = l * f.col(j / per_factor) + std::sqrt(1.0 - l * l) * e.col(j);
  }
  return x;
}

template <class F>
Error error_of(F&& f) {
  try {
    f();
  } catch (const Error& e) {
    return e;
  }
  return Error(ErrorCode::internal, "no error was thrown");
}

}  // namespace

TEST(FactorCount, LargestWhiteNoiseEigenvalueApproachesMarchenkoPasturEdge) {
  // Marchenko & Pastur (1967): for p/n -> c the largest eigenvalue of the correlation matrix of white
  // noise approaches (1 + sqrt(c))^2. n = 4000, p = 200: 1.4972; the simulated mean within 1%.
  // At this size the mean sits about 0.96% below the edge (the finite-size Tracy-Widom shift,
  // Johnstone 2001; measured here with 1500 replicates: ratio 0.9904, standard error 0.0002), so the
  // check uses enough replicates to keep the sampling error well inside the remaining margin.
  ParallelAnalysisOptions o;
  o.replicates = 400;
  o.seed = 7;
  const RandomEigenvalues rnd = random_eigenvalues(200, 4000, o);
  const double edge = std::pow(1.0 + std::sqrt(200.0 / 4000.0), 2);
  EXPECT_NEAR(rnd.pc.row(0).mean() / edge, 1.0, 0.01);
  EXPECT_LT(rnd.pc.row(0).mean(), edge);  // the finite-size shift is downwards (Tracy-Widom mean < 0)
  // Eigenvalues of a correlation matrix sum to p (trace), a property that cannot drift.
  EXPECT_NEAR(rnd.pc.col(0).sum(), 200.0, 1e-9);
}

TEST(FactorCount, WishartRouteMatchesBruteForceSimulation) {
  // The Bartlett route and correlations of simulated normal data must give the same eigenvalue
  // distributions: two-sample Kolmogorov-Smirnov test, scipy.stats.ks_2samp, run live.
  const Index p = 8, n = 40, reps = 1500;
  ParallelAnalysisOptions o;
  o.replicates = reps;
  o.seed = 101;
  const RandomEigenvalues w = random_eigenvalues(p, n, o);
  CorrelationOptions one_thread;
  one_thread.threads = 1;
  auto brute = [&](Index rows, std::uint64_t seed) {
    RandomEigenvalues b{Matrix(p, reps), Matrix(p, reps)};
    for (Index k = 0; k < reps; ++k) {
      auto rng = random_stream(seed, static_cast<std::uint64_t>(k));
      const Matrix r = correlation(standard_normal_matrix(rows, p, rng), one_thread).matrix;
      b.pc.col(k) = eigenvalues_descending(r);
      b.factor.col(k) = reduced_eigenvalues(r);
    }
    return b;
  };
  const RandomEigenvalues b = brute(n, 202);
  const RandomEigenvalues other = brute(n / 2, 303);  // a different sample size, which the test must tell apart
  const std::string script = R"(
from scipy.stats import ks_2samp
def pv(a, b): return ks_2samp(a.ravel(), b.ravel()).pvalue
emit('same', np.array([pv(W[0], B[0]), pv(W[-1], B[-1]), pv(W[3], B[3]), pv(WF[0], BF[0]), pv(WF[-1], BF[-1])]))
emit('diff', np.array([pv(W[0], O[0]), pv(WF[0], OF[0])]))
)";
  const auto ref = run_python(script, {{"W", w.pc}, {"B", b.pc}, {"WF", w.factor}, {"BF", b.factor},
                                       {"O", other.pc}, {"OF", other.factor}});
  const Matrix same = ref.at("same");
  for (Index i = 0; i < same.size(); ++i) EXPECT_GT(same(i), 0.01) << "statistic " << i;
  const Matrix diff = ref.at("diff");
  for (Index i = 0; i < diff.size(); ++i) EXPECT_LT(diff(i), 1e-6) << "statistic " << i;
}

TEST(FactorCount, FastEigenvaluesMatchNumpyEigvalsh) {
  // The random-data path uses its own tridiagonal eigenvalue iteration; a custom source feeding known
  // matrices lets its output be compared with numpy.linalg.eigvalsh (and the SMC diagonal with
  // 1 - 1/diag(inv(R))).
  const Index p = 25;
  ParallelAnalysisOptions o;
  o.replicates = 6;
  o.source = RandomDataSource::custom;
  o.threads = 1;
  o.custom_source = [&](RandomEngine& engine, Matrix& out) {
    out = correlation(standard_normal_matrix(p + 5, p, engine)).matrix;  // near-singular: a hard case
  };
  const RandomEigenvalues got = random_eigenvalues(p, 1000, o);
  Matrix stacked(p * o.replicates, p);
  for (Index k = 0; k < o.replicates; ++k) {
    auto engine = random_stream(o.seed, static_cast<std::uint64_t>(k));
    Matrix r;
    o.custom_source(engine, r);
    stacked.middleRows(k * p, p) = r;
  }
  const auto ref = run_python(R"(
k = S.shape[0] // S.shape[1]; p = S.shape[1]
pc = np.zeros((p, k)); fa = np.zeros((p, k))
for i in range(k):
    R = S[i*p:(i+1)*p]
    pc[:, i] = np.linalg.eigvalsh(R)[::-1]
    Rh = R.copy(); np.fill_diagonal(Rh, 1 - 1 / np.diag(np.linalg.inv(R)))
    fa[:, i] = np.linalg.eigvalsh(Rh)[::-1]
emit('pc', pc); emit('fa', fa)
)", {{"S", stacked}});
  EXPECT_LT((got.pc - ref.at("pc")).cwiseAbs().maxCoeff(), 1e-11);
  EXPECT_LT((got.factor - ref.at("fa")).cwiseAbs().maxCoeff(), 1e-9);
}

TEST(FactorCount, KnownStructureGivesItsCount) {
  // Simulated simple structure (loadings 0.5-0.8, n = 500): parallel analysis (both versions, both
  // random sources) and MAP recover the number of factors built in. Invented data, known truth.
  for (Index k : {2, 3, 5}) {
    const Matrix x = factor_data(500, k, 6, 40 + static_cast<std::uint64_t>(k));
    FactorCountOptions o;
    o.parallel.replicates = 200;
    const FactorCountResult res = count_factors(x, {}, o);
    EXPECT_EQ(res.parallel.suggested_factor, k) << k << " factors";
    EXPECT_EQ(res.parallel.suggested_pc, k) << k << " factors";
    EXPECT_EQ(res.map.suggested_squared, k) << k << " factors";
    EXPECT_EQ(res.map.suggested_fourth, k) << k << " factors";
    EXPECT_EQ(res.suggested, k);
    o.parallel.source = RandomDataSource::permutation;
    const FactorCountResult perm = count_factors(x, {}, o);
    EXPECT_EQ(perm.parallel.suggested_factor, k) << k << " factors, permutation";
    EXPECT_EQ(perm.parallel.suggested_pc, k) << k << " factors, permutation";
  }
}

TEST(FactorCount, MapMatchesNumpyReimplementation) {
  // Velicer (1976) and Velicer, Eaton & Fava (2000), written independently with numpy: remove the
  // first m principal components (loadings = vectors * sqrt(values)), rescale the partial covariance to
  // partial correlations, average the squared / fourth-power off-diagonal entries.
  const Matrix x = factor_data(300, 3, 4, 9);
  const Matrix r = correlation(x).matrix;
  const MapResult map = minimum_average_partial(r);
  const auto ref = run_python(R"(
p = R.shape[0]
w, v = np.linalg.eigh(R); idx = np.argsort(w)[::-1]; w = w[idx]; v = v[:, idx]
sq = np.zeros(p); fo = np.zeros(p)
off = ~np.eye(p, dtype=bool)
for m in range(p):
    A = v[:, :m] * np.sqrt(w[:m])
    C = R - A @ A.T
    d = 1 / np.sqrt(np.diag(C))
    P = C * np.outer(d, d)
    sq[m] = np.mean(P[off] ** 2); fo[m] = np.mean(P[off] ** 4)
emit('sq', sq); emit('fo', fo)
emit('msq', np.array([np.argmin(sq)])); emit('mfo', np.array([np.argmin(fo)]))
)", {{"R", r}});
  ASSERT_EQ(map.average_squared.size(), ref.at("sq").size());
  // The last entries partial out all but one component; they are ill-conditioned in any
  // implementation, so the strict comparison covers m = 0 .. p-2.
  const Index p = r.rows();
  EXPECT_LT((map.average_squared.head(p - 1) - ref.at("sq").col(0).head(p - 1)).cwiseAbs().maxCoeff(), 1e-10);
  EXPECT_LT((map.average_fourth.head(p - 1) - ref.at("fo").col(0).head(p - 1)).cwiseAbs().maxCoeff(), 1e-10);
  EXPECT_EQ(map.suggested_squared, static_cast<Index>(ref.at("msq")(0, 0)));
  EXPECT_EQ(map.suggested_fourth, static_cast<Index>(ref.at("mfo")(0, 0)));
  EXPECT_EQ(map.suggested_squared, 3);
}

TEST(FactorCount, EmpiricalKaiserMatchesNumpyReimplementation) {
  // Braeken & van Assen (2017), the reference eigenvalue
  // l_j = max((1 + sqrt(p/n))^2 (p - sum_{i<j} lambda_i) / (p - j + 1), 1), re-implemented in numpy.
  for (Index n : {60, 250, 2000}) {
    const Matrix x = factor_data(n, 3, 5, 77 + static_cast<std::uint64_t>(n));
    const Vector ev = eigenvalues_descending(correlation(x).matrix);
    const EigenvalueRules rules = eigenvalue_rules(ev, n);
    const auto ref = run_python(R"(
lam = L.ravel(); p = lam.size; nn = N[0, 0]
j = np.arange(1, p + 1)
before = np.concatenate([[0.0], np.cumsum(lam)[:-1]])
ref = np.maximum((1 + np.sqrt(p / nn)) ** 2 * (p - before) / (p - j + 1), 1.0)
above = lam > ref
ekc = p if above.all() else int(np.argmin(above))
emit('ref', ref); emit('ekc', np.array([ekc])); emit('kaiser', np.array([np.sum(lam > 1)]))
)", {{"L", ev}, {"N", scalar(static_cast<double>(n))}});
    EXPECT_LT((rules.ekc_reference - ref.at("ref").col(0)).cwiseAbs().maxCoeff(), 1e-12) << "n = " << n;
    EXPECT_EQ(rules.empirical_kaiser, static_cast<Index>(ref.at("ekc")(0, 0))) << "n = " << n;
    EXPECT_EQ(rules.kaiser, static_cast<Index>(ref.at("kaiser")(0, 0))) << "n = " << n;
  }
}

TEST(FactorCount, PercentilesAndMeansMatchNumpy) {
  // The random thresholds: numpy.mean and numpy.percentile (default linear interpolation, Hyndman &
  // Fan type 7) over the same random eigenvalues.
  const Matrix x = factor_data(200, 2, 5, 3);
  ParallelAnalysisOptions o;
  o.replicates = 101;
  o.percentile = 90.0;
  const ParallelAnalysisResult pa = parallel_analysis(correlation(x).matrix, 200, o);
  const RandomEigenvalues rnd = random_eigenvalues(10, 200, o);
  const auto ref = run_python(R"(
emit('pm', P.mean(axis=1)); emit('pq', np.percentile(P, 90, axis=1))
emit('fm', F.mean(axis=1)); emit('fq', np.percentile(F, 90, axis=1))
)", {{"P", rnd.pc}, {"F", rnd.factor}});
  EXPECT_LT((pa.random_pc_mean - ref.at("pm").col(0)).cwiseAbs().maxCoeff(), 1e-12);
  EXPECT_LT((pa.random_pc_percentile - ref.at("pq").col(0)).cwiseAbs().maxCoeff(), 1e-12);
  EXPECT_LT((pa.random_factor_mean - ref.at("fm").col(0)).cwiseAbs().maxCoeff(), 1e-12);
  EXPECT_LT((pa.random_factor_percentile - ref.at("fq").col(0)).cwiseAbs().maxCoeff(), 1e-12);
  // The suggestion counts leading observed eigenvalues above the chosen threshold (Horn 1965).
  Index k = 0;
  while (k < 10 && pa.observed_factor(k) > pa.random_factor_percentile(k)) ++k;
  EXPECT_EQ(pa.suggested_factor, k);
  EXPECT_EQ(pa.suggested_factor, 2);
}

TEST(FactorCount, PermutationKeepsMissingPatternAndAgreesWithCompleteData) {
  // Permuting white noise gives random eigenvalues close to the normal-theory ones (both estimate the
  // null distribution); with missing values the same data, correlated pairwise, stay close as well.
  auto rng = random_stream(5, 0);
  Matrix x = standard_normal_matrix(400, 12, rng);
  ParallelAnalysisOptions o;
  o.replicates = 200;
  o.source = RandomDataSource::permutation;
  const RandomEigenvalues perm = permuted_eigenvalues(x, {}, o);
  o.source = RandomDataSource::normal_theory;
  const RandomEigenvalues normal = random_eigenvalues(12, 400, o);
  EXPECT_NEAR(perm.pc.row(0).mean(), normal.pc.row(0).mean(), 0.02);
  EXPECT_NEAR(perm.factor.row(0).mean(), normal.factor.row(0).mean(), 0.02);
  std::uniform_real_distribution<double> u(0.0, 1.0);
  for (Index i = 0; i < x.rows(); ++i)
    for (Index j = 0; j < x.cols(); ++j)
      if (u(rng) < 0.05) x(i, j) = std::nan("");
  o.source = RandomDataSource::permutation;
  const RandomEigenvalues missing = permuted_eigenvalues(x, {}, o);
  EXPECT_NEAR(missing.pc.row(0).mean(), normal.pc.row(0).mean(), 0.04);
  CorrelationOptions listwise;
  listwise.missing = MissingPolicy::listwise;
  const ParallelAnalysisResult pa = parallel_analysis(x, listwise, o);
  EXPECT_EQ(pa.n_obs, correlation(x, listwise).n_obs);
  EXPECT_EQ(pa.suggested_pc, 0);  // white noise: nothing above random
}

TEST(FactorCount, SameSeedSameResultWhateverTheThreads) {
  const Matrix x = factor_data(300, 3, 5, 12);
  for (auto source : {RandomDataSource::normal_theory, RandomDataSource::permutation}) {
    FactorCountOptions o;
    o.parallel.replicates = 50;
    o.parallel.source = source;
    o.parallel.threads = 1;
    const FactorCountResult one = count_factors(x, {}, o);
    o.parallel.threads = 2;
    const FactorCountResult two = count_factors(x, {}, o);
    EXPECT_EQ(one.parallel.random_pc_percentile, two.parallel.random_pc_percentile) << to_string(source);
    EXPECT_EQ(one.parallel.random_factor_mean, two.parallel.random_factor_mean) << to_string(source);
    o.parallel.seed += 1;
    const FactorCountResult other = count_factors(x, {}, o);
    EXPECT_NE(one.parallel.random_pc_mean, other.parallel.random_pc_mean) << to_string(source);
  }
}

TEST(FactorCount, ProgressReportsAndCancels) {
  ParallelAnalysisOptions o;
  o.replicates = 200000;
  std::int64_t last_total = 0;
  o.progress = [&](std::int64_t, std::int64_t total) {
    last_total = total;
    return false;
  };
  const Error e = error_of([&] { random_eigenvalues(30, 100, o); });
  EXPECT_EQ(e.code(), ErrorCode::cancelled);
  EXPECT_EQ(last_total, 200000);
  o.replicates = 20;
  std::int64_t final_done = -1;
  o.progress = [&](std::int64_t done, std::int64_t total) {
    EXPECT_EQ(total, 20);
    final_done = done;
    return true;
  };
  random_eigenvalues(10, 100, o);
  EXPECT_EQ(final_done, 20);
}

TEST(FactorCount, ConsensusTableAndScree) {
  const Matrix x = factor_data(500, 3, 6, 21);
  FactorCountOptions o;
  o.parallel.replicates = 100;
  const FactorCountResult res = count_factors(x, {}, o);
  ASSERT_EQ(res.table.size(), 6u);
  EXPECT_TRUE(res.table[0].primary);
  EXPECT_EQ(res.table[0].factors, res.suggested);
  EXPECT_EQ(res.suggested, 3);
  EXPECT_THAT(res.reason, HasSubstr("3 factors"));
  EXPECT_THAT(res.reason, HasSubstr("95th percentile of 100 normal-theory random data sets"));
  EXPECT_EQ(res.scree.position.size(), 18);
  EXPECT_EQ(res.scree.position(17), 18.0);
  EXPECT_EQ(res.scree.random_pc, res.parallel.random_pc_percentile);
  EXPECT_EQ(res.scree.observed_factor, res.parallel.observed_factor);
  // From the correlation matrix and n, with the same seed, normal theory gives the same answer.
  const FactorCountResult from_r = count_factors_from_correlation(correlation(x).matrix, 500, o);
  EXPECT_EQ(from_r.parallel.random_pc_mean, res.parallel.random_pc_mean);
  EXPECT_EQ(from_r.suggested, 3);
  o.parallel.threshold = RandomThreshold::mean;
  const FactorCountResult mean = count_factors(x, {}, o);
  EXPECT_EQ(mean.scree.random_factor, mean.parallel.random_factor_mean);
  EXPECT_THAT(mean.reason, HasSubstr("the mean of 100"));
}

TEST(FactorCount, ErrorsNameTheProblem) {
  const Matrix x = factor_data(100, 2, 4, 1);
  const Matrix r = correlation(x).matrix;
  FactorCountOptions o;
  o.parallel.replicates = 0;
  Error e = error_of([&] { count_factors(x, {}, o); });
  EXPECT_EQ(e.code(), ErrorCode::invalid_argument);
  EXPECT_THAT(e.what(), HasSubstr("at least 1 random data set; 0 were asked for"));
  o.parallel.replicates = 10;
  o.parallel.percentile = 100.0;
  e = error_of([&] { count_factors(x, {}, o); });
  EXPECT_THAT(e.what(), HasSubstr("strictly between 0 and 100; it is 100"));
  o.parallel.percentile = 95.0;
  o.parallel.source = RandomDataSource::permutation;
  e = error_of([&] { count_factors_from_correlation(r, 100, o); });
  EXPECT_EQ(e.code(), ErrorCode::invalid_argument);
  EXPECT_THAT(e.what(), HasSubstr("permutation parallel analysis needs the raw data"));
  o.parallel.source = RandomDataSource::normal_theory;
  e = error_of([&] { count_factors_from_correlation(r, 8, o); });
  EXPECT_EQ(e.code(), ErrorCode::insufficient_data);
  EXPECT_THAT(e.what(), HasSubstr("more observations than items: 8 observations for 8 items"));
  e = error_of([&] { count_factors_from_correlation(r, 0, o); });
  EXPECT_THAT(e.what(), HasSubstr("number of observations behind the correlation matrix is unknown"));
  o.parallel.source = RandomDataSource::custom;
  o.parallel.threads = 1;  // so the first failing replicate is the first one
  e = error_of([&] { count_factors_from_correlation(r, 100, o); });
  EXPECT_THAT(e.what(), HasSubstr("'custom' but no generator was given"));
  o.parallel.custom_source = [](RandomEngine&, Matrix& out) { out = Matrix::Identity(3, 3); };
  e = error_of([&] { count_factors_from_correlation(r, 100, o); });
  EXPECT_THAT(e.what(), HasSubstr("returned a 3 x 3 matrix; 8 x 8 was expected"));
  o.parallel.custom_source = [](RandomEngine&, Matrix& out) { out = Matrix::Ones(8, 8); };
  e = error_of([&] { count_factors_from_correlation(r, 100, o); });
  EXPECT_EQ(e.code(), ErrorCode::not_positive_definite);
  EXPECT_THAT(e.what(), HasSubstr("random data set 1 is not positive definite"));
  Matrix constant = x;
  constant.col(2).setConstant(3.0);
  e = error_of([&] { count_factors(constant); });
  EXPECT_THAT(e.what(), HasSubstr("column 3 is constant"));
  e = error_of([&] { minimum_average_partial(Matrix::Identity(2, 2)); });
  EXPECT_THAT(e.what(), HasSubstr("at least 3 items; this one is 2 x 2"));
}

TEST(FactorCount, PermutationWithPolychoricCorrelations) {
  // Ordinal items: shuffling keeps each item's category frequencies; every replicate is correlated
  // polychorically like the observed data. Five-point items cut from two-factor data (invented).
  Matrix x = factor_data(400, 2, 4, 31);
  x = (x.array() * 1.1 + 3.0).round().max(1.0).min(5.0).matrix();
  CorrelationOptions poly;
  poly.kind = CorrelationKind::polychoric;
  FactorCountOptions o;
  o.parallel.replicates = 16;
  o.parallel.source = RandomDataSource::permutation;
  const FactorCountResult res = count_factors(x, poly, o);
  EXPECT_EQ(res.parallel.suggested_factor, 2);
  EXPECT_EQ(res.map.suggested_squared, 2);
  // Shuffled ordinal items are near-uncorrelated: the leading random eigenvalue stays near the
  // normal-theory one for n = 400, p = 8 (polychoric estimates are noisier, hence the loose bound).
  ParallelAnalysisOptions normal;
  normal.replicates = 200;
  const double normal_mean = random_eigenvalues(8, 400, normal).pc.row(0).mean();
  EXPECT_NEAR(res.parallel.random_pc_mean(0), normal_mean, 0.15);
  EXPECT_GT(res.parallel.random_pc_mean(0), 1.0);
}
