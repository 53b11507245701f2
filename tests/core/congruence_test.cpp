// Tucker's congruence and optimal factor matching, checked against numpy and
// scipy.optimize.linear_sum_assignment.
#include "lode/congruence.hpp"

#include "lode/random.hpp"
#include "support/external.hpp"

#include "support/errors.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <numeric>

using namespace lode;
using lode::testing::error_message;
using lode::testing::run_python;

namespace {

Matrix some_loadings() {
  Matrix l(9, 3);
  l << 0.8, 0.1, 0.0, 0.7, 0.0, 0.1, 0.6, 0.2, 0.0,  //
      0.1, 0.7, 0.0, 0.0, 0.6, 0.2, 0.2, 0.5, 0.1,   //
      0.0, 0.1, 0.8, 0.1, 0.0, 0.7, 0.0, 0.2, 0.6;
  return l;
}

}  // namespace

TEST(Congruence, CoefficientsMatchNumpy) {
  auto rng = random_stream(41, 0);
  const Matrix a = standard_normal_matrix(12, 3, rng);
  const Matrix b = standard_normal_matrix(12, 4, rng);
  // Reference: Tucker's phi written in numpy, (A'B) / outer(||a_i||, ||b_j||) (Tucker 1951).
  const auto py = run_python(
      "emit('c', A.T @ B / np.outer(np.linalg.norm(A, axis=0), np.linalg.norm(B, axis=0)))", {{"A", a}, {"B", b}});
  EXPECT_LT((tucker_congruence(a, b) - py.at("c")).cwiseAbs().maxCoeff(), 1e-14);
}

TEST(Congruence, IdenticalSolutionsAreOneWhateverTheOrderAndSigns) {
  const Matrix l = some_loadings();
  const auto same = match_factors(l, l);
  EXPECT_LT((same.matched_congruence - Vector::Ones(3)).cwiseAbs().maxCoeff(), 1e-15);
  EXPECT_EQ(same.order, (std::vector<Index>{0, 1, 2}));
  // Columns permuted (2, 0, 1) and the middle one reflected: the match undoes both.
  Matrix other(9, 3);
  other.col(0) = l.col(2);
  other.col(1) = -l.col(0);
  other.col(2) = l.col(1);
  const auto m = match_factors(l, other);
  EXPECT_EQ(m.order, (std::vector<Index>{1, 2, 0}));
  EXPECT_EQ(m.signs, Vector((Vector(3) << -1, 1, 1).finished()));
  EXPECT_LT((m.matched_congruence - Vector::Ones(3)).cwiseAbs().maxCoeff(), 1e-15);
  EXPECT_LT((m.aligned - l).cwiseAbs().maxCoeff(), 1e-15);
  EXPECT_NE(m.notes[0].find("matches factor 2 of the second (reflected) with congruence 1.000: it can be considered "
                            "the same factor"),
            std::string::npos);
  // Factor correlations follow the match.
  Matrix phi_other(3, 3);  // correlations among `other`'s factors
  phi_other << 1.0, -0.2, 0.3, -0.2, 1.0, -0.4, 0.3, -0.4, 1.0;
  const Matrix phi = align_factor_correlations(phi_other, m);
  // factor 0 of l = -other1, factor 1 = other2, factor 2 = other0
  EXPECT_DOUBLE_EQ(phi(0, 1), -phi_other(1, 2));
  EXPECT_DOUBLE_EQ(phi(0, 2), -phi_other(1, 0));
  EXPECT_DOUBLE_EQ(phi(1, 2), phi_other(2, 0));
}

TEST(Congruence, AssignmentMatchesScipy) {
  // Reference: scipy.optimize.linear_sum_assignment(maximize=True) on random 7 x 7 score matrices; the
  // optimal totals must agree (the optimal permutation may not be unique).
  lode::testing::Matrices scores;
  for (std::uint64_t s = 0; s < 5; ++s) {
    auto rng = random_stream(42, s);
    scores["S" + std::to_string(s)] = standard_normal_matrix(7, 7, rng).cwiseAbs();
  }
  const auto py = run_python(R"(
from scipy.optimize import linear_sum_assignment
for s in range(5):
    S = globals()['S%d' % s]
    r, c = linear_sum_assignment(S, maximize=True)
    emit('total%d' % s, [S[r, c].sum()])
)", scores);
  for (std::uint64_t s = 0; s < 5; ++s) {
    const Matrix& score = scores.at("S" + std::to_string(s));
    const auto match = best_assignment(score);
    double total = 0.0;
    for (Index i = 0; i < 7; ++i) total += score(i, match[static_cast<std::size_t>(i)]);
    EXPECT_NEAR(total, py.at("total" + std::to_string(s))(0, 0), 1e-12) << "seed stream " << s;
    std::vector<Index> sorted = match;
    std::sort(sorted.begin(), sorted.end());
    std::vector<Index> expected(7);
    std::iota(expected.begin(), expected.end(), Index{0});
    EXPECT_EQ(sorted, expected);
  }
}

TEST(Congruence, ErrorsNameTheProblem) {
  const Matrix l = some_loadings();
  EXPECT_EQ(error_message([&] { match_factors(l, l.leftCols(2)); }),
            "the two solutions to match differ in shape (9 items x 3 factors and 9 items x 2 factors)");
  EXPECT_EQ(error_message([&] { tucker_congruence(l, l.topRows(8)); }),
            "the two loading matrices have different numbers of items (9 and 8)");
  Matrix z = l;
  z.col(1).setZero();
  EXPECT_EQ(error_message([&] { match_factors(l, z); }),
            "factor 2 of the second solution has only zero loadings; congruence is undefined");
}
