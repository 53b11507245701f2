// Split-sample replication and the confirmatory check on held-out respondents: identical halves give
// congruence 1, a clean four-factor model replicates, noise does not, results do not depend on the
// thread count, cancellation, and the errors with their messages.
#include "lode/replication.hpp"

#include "core/factor_simulation.hpp"
#include "support/errors.hpp"

#include <gtest/gtest.h>

using namespace lode;
using lode::testing::error_message;

namespace {

// Four factors, five items each, loadings 0.6-0.8, factor correlations 0.3.
Matrix four_factor_loadings() {
  Matrix l = Matrix::Zero(20, 4);
  const double values[] = {0.8, 0.7, 0.65, 0.6, 0.75};
  for (Index f = 0; f < 4; ++f)
    for (Index i = 0; i < 5; ++i) l(5 * f + i, f) = values[i];
  return l;
}

Matrix equal_phi(Index k, double rho) {
  Matrix phi = Matrix::Constant(k, k, rho);
  phi.diagonal().setOnes();
  return phi;
}

RotationOptions oblimin() {
  RotationOptions r;
  r.method = RotationMethod::oblimin;
  return r;
}

}  // namespace

TEST(Replication, IdenticalHalvesHaveCongruenceOne) {
  const Matrix l = four_factor_loadings();
  Matrix other = l;
  other.col(0).swap(other.col(2));
  other.col(1) *= -1.0;  // reordered and reflected: the alignment undoes both
  const HalvesComparison c = compare_halves(l, other, other);
  for (Index j = 0; j < 4; ++j) EXPECT_NEAR(c.congruence(j), 1.0, 1e-15);
  for (bool same : c.same_factor) EXPECT_TRUE(same);
}

TEST(Replication, ACleanFourFactorModelReplicatesAndNoiseDoesNot) {
  const Matrix x = lode::testing::simulate_factor_data(four_factor_loadings(), equal_phi(4, 0.3), 2000, 41).x;
  ExtractionOptions ml;
  ReplicationOptions o;
  o.splits = 40;
  o.seed = 3;
  const ReplicationResult r = replicate_halves(x, 4, ml, oblimin(), o);
  EXPECT_EQ(r.splits_used, 40);
  for (Index j = 0; j < 4; ++j) {
    EXPECT_GT(r.congruence_median(j), 0.95);
    EXPECT_GT(r.share_fair(j), 0.9);
  }
  EXPECT_GT(r.item_stability.minCoeff(), 0.95);
  EXPECT_EQ(r.suggested_full, 4);
  EXPECT_GT(r.share_same_count, 0.9);

  // Pure noise: 20 independent items; two factors of it do not replicate.
  auto rng = random_stream(9, 0);
  const Matrix noise = standard_normal_matrix(400, 20, rng);
  const ReplicationResult n = replicate_halves(noise, 2, ml, oblimin(), o);
  EXPECT_LT(n.congruence_median.maxCoeff(), 0.85);
  EXPECT_LT(n.item_stability.mean(), 0.8);
}

TEST(Replication, DoesNotDependOnThreadsAndCanBeCancelled) {
  const Matrix x = lode::testing::simulate_factor_data(four_factor_loadings(), equal_phi(4, 0.2), 300, 5).x;
  ReplicationOptions o;
  o.splits = 6;
  o.threads = 1;
  const ReplicationResult one = replicate_halves(x, 4, {}, oblimin(), o);
  o.threads = 2;
  const ReplicationResult two = replicate_halves(x, 4, {}, oblimin(), o);
  EXPECT_EQ(one.congruence, two.congruence);
  EXPECT_EQ(one.item_stability, two.item_stability);
  o.progress = [](std::int64_t, std::int64_t) { return false; };  // cancels at the first report, before any split
  ErrorCode code{};
  error_message([&] { replicate_halves(x, 4, {}, oblimin(), o); }, &code);
  EXPECT_EQ(code, ErrorCode::cancelled);
}

TEST(Replication, RefusesTooFewRespondentsOrSplits) {
  const Matrix x = lode::testing::simulate_factor_data(four_factor_loadings(), equal_phi(4, 0.2), 40, 5).x;
  ReplicationOptions o;
  EXPECT_EQ(error_message([&] { replicate_halves(x, 4, {}, oblimin(), o); }),
            "halves of 40 respondents have 20 each, but 20 items need more respondents than items in each half (at "
            "least 42 in all)");
  o.splits = 1;
  EXPECT_EQ(error_message([&] { replicate_halves(x, 4, {}, oblimin(), o); }), "replication needs at least 2 splits, not 1");
}

TEST(Holdout, TheSimpleStructureFitsHeldOutRespondents) {
  Matrix l = four_factor_loadings();
  Matrix with_noise(21, 4);
  with_noise << l, Matrix::Zero(1, 4);  // item 21 measures nothing: salient nowhere, left out and listed
  const Matrix x = lode::testing::simulate_factor_data(with_noise, equal_phi(4, 0.3), 1200, 8).x;
  HoldoutOptions o;
  o.seed = 4;
  const HoldoutResult h = holdout_check(x, 4, {}, oblimin(), o);
  EXPECT_EQ(h.n_holdout, 600);
  EXPECT_EQ(h.n_explore, 600);
  ASSERT_EQ(h.items_left_out.size(), 1u);
  EXPECT_EQ(h.items_left_out[0], 20);
  EXPECT_EQ(h.items_fitted.size(), 20u);
  const RestrictedFitResult& f = h.confirmatory;
  EXPECT_TRUE(f.convergence.converged);
  EXPECT_EQ(f.df, 210 - (20 + 6 + 20));
  // The model is true: the chi-square is a chi-square(164) draw, CFI near 1, RMSEA near 0.
  EXPECT_GT(f.cfi, 0.97);
  EXPECT_LT(f.rmsea, 0.03);
  EXPECT_GT(f.p_value, 1e-4);
}

TEST(Holdout, ATooSmallShareNamesTheWorkableShares) {
  const Matrix x = lode::testing::simulate_factor_data(four_factor_loadings(), equal_phi(4, 0.3), 200, 8).x;
  HoldoutOptions o;
  o.share = 0.05;
  EXPECT_EQ(error_message([&] { holdout_check(x, 4, {}, oblimin(), o); }),
            "holding out 5% of 200 respondents leaves 10 for the held-out part, but 20 items need at least 21; the "
            "workable shares run from 0.105 to 0.895");
  o.share = 1.0;
  EXPECT_NE(error_message([&] { holdout_check(x, 4, {}, oblimin(), o); }).find("strictly between 0 and 1"),
            std::string::npos);
}
