// Per-group factor analysis compared with the pooled solution: the Procrustes rotations against scipy
// (orthogonal: scipy.linalg.orthogonal_procrustes) and a least-squares oblique Procrustes written here in
// numpy (Hurley & Cattell 1962), congruence of groups drawn from one model, a group with a moved item
// flagged on that item, alpha per group against numpy, skipped groups and errors.
#include "lode/groups.hpp"

#include "../support/errors.hpp"
#include "../support/external.hpp"
#include "factor_simulation.hpp"

#include <gtest/gtest.h>

using namespace lode;
using lode::testing::error_message;
using lode::testing::run_python;

namespace {

// 12 items, 3 correlated factors, 4 items each.
Matrix three_factor_loadings() {
  Matrix l = Matrix::Zero(12, 3);
  const double v[4] = {0.75, 0.7, 0.65, 0.6};
  for (Index f = 0; f < 3; ++f)
    for (Index j = 0; j < 4; ++j) l(4 * f + j, f) = v[j];
  return l;
}

Matrix three_factor_phi() {
  Matrix phi(3, 3);
  phi << 1.0, 0.3, 0.2, 0.3, 1.0, 0.25, 0.2, 0.25, 1.0;
  return phi;
}

// Groups of n rows each stacked, group g drawn from `models[g]`.
struct Stacked {
  Matrix x;
  std::vector<std::int64_t> codes;
};

Stacked stack(const std::vector<Matrix>& models, Index n, std::uint64_t seed) {
  Stacked s;
  s.x.resize(n * static_cast<Index>(models.size()), models[0].rows());
  for (std::size_t g = 0; g < models.size(); ++g) {
    s.x.middleRows(static_cast<Index>(g) * n, n) =
        lode::testing::simulate_factor_data(models[g], three_factor_phi(), n, seed, g).x;
    for (Index i = 0; i < n; ++i) s.codes.push_back(static_cast<std::int64_t>(g + 1));
  }
  return s;
}

GroupComparisonOptions three_factor_options() {
  GroupComparisonOptions o;
  o.factors = 3;
  o.rotation.method = RotationMethod::oblimin;
  return o;
}

}  // namespace

TEST(Procrustes, OrthogonalMatchesScipyAndObliqueMatchesLeastSquaresInNumpy) {
  Matrix a(8, 3), target(8, 3);
  a << 0.7, 0.2, 0.1, 0.6, 0.3, -0.1, 0.65, 0.1, 0.2, 0.2, 0.7, 0.1, 0.1, 0.6, 0.3, 0.3, 0.1, 0.7, -0.1, 0.2, 0.6,
      0.2, 0.3, 0.5;
  target << 0.8, 0, 0, 0.7, 0, 0, 0.6, 0, 0, 0, 0.7, 0, 0, 0.6, 0, 0, 0, 0.8, 0, 0, 0.7, 0, 0, 0.6;
  const ProcrustesFit ortho = procrustes_orthogonal(a, target);
  const ProcrustesFit obl = procrustes_oblique(a, target);
  const auto ref = run_python(R"(
import scipy.linalg
R, _ = scipy.linalg.orthogonal_procrustes(A, B)
emit('T', R)
U = np.linalg.lstsq(A, B, rcond=None)[0]          # least squares A U ~ B
U = U * np.sqrt(np.diag(np.linalg.inv(U.T @ U)))  # unit factor variances
emit('U', U)
emit('Phi', np.linalg.inv(U.T @ U))
)",
                              {{"A", a}, {"B", target}});
  // Well-conditioned 3 x 3 problems: both sides good to a few hundred unit roundoffs.
  EXPECT_LE((ortho.transformation - ref.at("T")).cwiseAbs().maxCoeff(), 1e-12);
  EXPECT_LE((ortho.transformation.transpose() * ortho.transformation - Matrix::Identity(3, 3)).cwiseAbs().maxCoeff(), 1e-14);
  EXPECT_LE((obl.transformation - ref.at("U")).cwiseAbs().maxCoeff(), 1e-12);
  EXPECT_LE((obl.factor_correlations - ref.at("Phi")).cwiseAbs().maxCoeff(), 1e-12);
  EXPECT_EQ(error_message([&] { procrustes_oblique(a, target.leftCols(2)); }),
            "the loadings (8 x 3) and the target (8 x 2) differ in shape");
}

TEST(CompareGroups, GroupsFromOneModelAreTheSameFactorsAndAlphaMatchesNumpy) {
  const Matrix l = three_factor_loadings();
  const Stacked s = stack({l, l}, 1000, 31);
  const GroupComparison c = compare_groups(s.x, s.codes, three_factor_options());
  ASSERT_EQ(c.groups.size(), 2u);
  EXPECT_TRUE(c.oblique);
  for (const GroupSolution& g : c.groups) {
    EXPECT_EQ(g.rows, 1000);
    for (Index f = 0; f < 3; ++f) EXPECT_GT(g.congruence(f), 0.95) << "group " << g.code << " factor " << f + 1;
  }
  EXPECT_TRUE(c.skipped.empty());
  EXPECT_TRUE(c.differences.empty());
  ASSERT_FALSE(c.notes.empty());
  EXPECT_NE(c.notes.back().find("not a formal test of measurement invariance"), std::string::npos);
  // Alpha of group 1's scales (the items of each pooled factor), from numpy's variances (Cronbach 1951:
  // k/(k-1) (1 - sum var / var(sum))).
  Matrix assignment(12, 1);
  for (Index i = 0; i < 12; ++i) {
    assignment(i, 0) = static_cast<double>(c.assignment[static_cast<std::size_t>(i)]);
    EXPECT_FALSE(c.reversed[static_cast<std::size_t>(i)]);
  }
  const auto ref = run_python(R"(
out = []
for f in range(3):
    S = X[:, A[:, 0] == f]
    k = S.shape[1]
    out.append(k/(k-1) * (1 - S.var(axis=0, ddof=1).sum() / S.sum(axis=1).var(ddof=1)))
emit('alpha', np.array(out))
)",
                              {{"X", s.x.topRows(1000)}, {"A", assignment}});
  // Sums of 1000 products on each side.
  EXPECT_LE((c.groups[0].alpha - ref.at("alpha")).cwiseAbs().maxCoeff(), 1e-10);
  for (Index f = 0; f < 3; ++f) EXPECT_GT(c.groups[0].omega(f), 0.6);
}

TEST(CompareGroups, AGroupWithAnItemMovedToAnotherFactorIsFlaggedOnThatItem) {
  const Matrix l = three_factor_loadings();
  Matrix moved = l;
  moved(1, 0) = 0.0;  // item 2 leaves factor 1 ...
  moved(1, 1) = 0.7;  // ... for factor 2
  // Seven groups of the common model and one with the moved item: the pooled loading of item 2 stays
  // within about 0.09 of the common model's, while the moved group's is about 0.6 away.
  const Stacked s = stack({l, l, l, l, l, l, l, moved}, 1000, 41);
  const GroupComparison c = compare_groups(s.x, s.codes, three_factor_options());
  ASSERT_EQ(c.groups.size(), 8u);
  bool moved_flagged = false;
  for (const ItemDifference& d : c.differences) {
    if (d.code == 8 && d.item == 1) moved_flagged = true;
    EXPECT_TRUE(d.code == 8) << d.text;  // the groups of the common model show no difference beyond 0.2
  }
  EXPECT_TRUE(moved_flagged);
  for (const ItemDifference& d : c.differences) {
    if (d.code == 8 && d.item == 1) {
      EXPECT_EQ(d.text.rfind("in group 8, column 2 loads ", 0), 0u) << d.text;
    }
  }
}

TEST(CompareGroups, SmallGroupsAreListedAndSkippedAndThreadsChangeNothing) {
  const Matrix l = three_factor_loadings();
  Stacked s = stack({l, l}, 400, 51);
  s.x.conservativeResize(850, Eigen::NoChange);
  s.x.bottomRows(50) = lode::testing::simulate_factor_data(l, three_factor_phi(), 50, 52).x;
  for (int i = 0; i < 50; ++i) s.codes.push_back(7);
  GroupComparisonOptions o = three_factor_options();
  o.threads = 1;
  const GroupComparison one = compare_groups(s.x, s.codes, o);
  o.threads = 2;
  const GroupComparison two = compare_groups(s.x, s.codes, o);
  ASSERT_EQ(one.skipped.size(), 1u);
  EXPECT_EQ(one.skipped[0].code, 7);
  EXPECT_EQ(one.skipped[0].reason, "group 7 has 50 respondents; at least 100 are needed");
  ASSERT_EQ(one.groups.size(), 2u);
  for (std::size_t g = 0; g < 2; ++g) EXPECT_TRUE((one.groups[g].pattern.array() == two.groups[g].pattern.array()).all());
}

TEST(CompareGroups, ErrorsNameTheProblem) {
  const Matrix l = three_factor_loadings();
  const Stacked s = stack({l}, 300, 61);
  EXPECT_EQ(error_message([&] { compare_groups(s.x, s.codes, three_factor_options()); }),
            "only 1 of 1 groups have at least 100 respondents; at least 2 such groups are needed for a comparison");
  std::vector<std::int64_t> short_codes(10, 1);
  EXPECT_EQ(error_message([&] { compare_groups(s.x, short_codes, three_factor_options()); }),
            "10 group codes were given for 300 rows; give one per row");
}
