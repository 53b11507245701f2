// The core's internal eigenvalue building blocks (core/src/symmetric_eigen.hpp), checked live against
// numpy.linalg.eigh / eigvalsh: the leading eigenpairs used by extraction, and the four-lane
// tridiagonalisation and QL used by parallel analysis, whose vector-instruction and portable forms must
// give the same numbers.
#include "../../core/src/symmetric_eigen.hpp"
#include "lode/random.hpp"
#include "support/bounds.hpp"
#include "support/external.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <functional>

using namespace lode;
using lode::testing::run_python;

namespace {

// A symmetric matrix with the given eigenvalues and a Haar-random eigenbasis (random_orthogonal).
Matrix with_eigenvalues(const Vector& values, RandomEngine& engine) {
  const Matrix q = random_orthogonal(values.size(), engine);
  return q * values.asDiagonal() * q.transpose();
}

}  // namespace

TEST(SymmetricEigen, LeadingEigenpairsMatchNumpyEigh) {
  // Sample covariance-like matrices of several sizes, and matrices built with tied and nearly tied
  // leading eigenvalues (the clusters inverse iteration must orthogonalise), against numpy.linalg.eigh.
  RandomEngine engine = random_stream(5, 0);
  std::vector<std::pair<Matrix, Index>> cases;
  for (Index p : {3, 8, 30, 101}) {
    const Matrix x = standard_normal_matrix(2 * p + 3, p, engine);
    cases.push_back({x.transpose() * x / static_cast<double>(p), std::min<Index>(p - 1, 1 + p / 10)});
  }
  Vector tied = Vector::LinSpaced(40, 0.2, 1.0);
  tied.head(3).setConstant(6.0);
  cases.push_back({with_eigenvalues(tied, engine), 5});
  Vector near = Vector::LinSpaced(25, 0.5, 2.0);
  near(0) = 9.0, near(1) = 9.0 + 1e-9, near(2) = 9.0 - 2e-10, near(3) = 4.0;
  cases.push_back({with_eigenvalues(near, engine), 4});
  for (std::size_t c = 0; c < cases.size(); ++c) {
    const auto& [m, k] = cases[c];
    SCOPED_TRACE(::testing::Message() << "case " << c << ", p " << m.rows() << ", k " << k);
    detail::LeadingEigen le;
    ASSERT_TRUE(le.compute(m, k));
    const auto ref = run_python(R"(
w, v = np.linalg.eigh(M)
k = int(K[0, 0])
emit('w', w[::-1]); emit('P', v[:, ::-1][:, :k] @ v[:, ::-1][:, :k].T)
)", {{"M", m}, {"K", lode::testing::scalar(static_cast<double>(k))}});
    const double scale = ref.at("w").cwiseAbs().maxCoeff();
    const double p = static_cast<double>(m.rows());
    // Both sides backward stable: tests/support/bounds.hpp (Golub & Van Loan 2013, sections 8.3-8.4).
    EXPECT_LT((le.values() - ref.at("w")).cwiseAbs().maxCoeff(), lode::testing::eigenvalue_gap_bound(p, scale));
    const Matrix& v = le.vectors();
    ASSERT_EQ(v.cols(), k);
    EXPECT_LT((v.transpose() * v - Matrix::Identity(k, k)).cwiseAbs().maxCoeff(), 1e-13);
    // Residuals of each pair, and the projector onto the leading k-dimensional eigenspace (unique even
    // where eigenvalues inside it tie; the k-th and (k+1)-th are apart in every case).
    EXPECT_LT((m * v - v * le.values().head(k).asDiagonal()).cwiseAbs().maxCoeff(), 1e-12 * scale);
    EXPECT_LT((v * v.transpose() - ref.at("P")).cwiseAbs().maxCoeff(), 1e-11);
  }
}

TEST(SymmetricEigen, FourLaneTridiagonalisationAndQlMatchNumpyAndBothForms) {
  // Eight matrices (two sets of four lanes), including one with an exactly diagonal block and one of
  // rank-deficient structure, through the lanes: eigenvalues against numpy.linalg.eigvalsh, and the
  // AVX2 and portable forms bit for bit (they do the same arithmetic).
  RandomEngine engine = random_stream(9, 0);
  const Index p = 23;
  std::vector<Matrix> ms;
  for (int t = 0; t < 8; ++t) {
    const Matrix x = standard_normal_matrix(t == 5 ? 6 : 40, p, engine);
    Matrix m = x.transpose() * x / 40.0;
    if (t == 2) m.bottomRightCorner(8, 8) = Vector::LinSpaced(8, 1.0, 2.0).asDiagonal(), m.bottomLeftCorner(8, 15).setZero(),
                m.topRightCorner(15, 8).setZero();
    ms.push_back(m);
  }
  auto run = [&](bool vector_instructions) {
    detail::TridiagonalLanes lanes[2] = {detail::TridiagonalLanes(p), detail::TridiagonalLanes(p)};
    for (int t = 0; t < 8; ++t)
      for (Index j = 0; j < p; ++j)
        for (Index i = j; i < p; ++i) lanes[t / 4](i, j, t % 4) = ms[static_cast<std::size_t>(t)](i, j);
    lanes[0].run(vector_instructions);
    lanes[1].run(vector_instructions);
    Matrix d(p, 8), e2(p, 8);
    detail::QlState q[8];
    for (int t = 0; t < 8; ++t) {
      lanes[t / 4].extract(t % 4, d.col(t).data(), e2.col(t).data());
      q[t] = detail::QlState{d.col(t).data(), e2.col(t).data(), p, 50};
    }
    EXPECT_TRUE(detail::tridiagonal_eigenvalues_lanes(q, 8, vector_instructions));
    for (int t = 0; t < 8; ++t) std::sort(d.col(t).data(), d.col(t).data() + p, std::greater<double>());
    return d;
  };
  const Matrix fast = run(true), portable = run(false);
  EXPECT_EQ(fast, portable);
  Matrix stacked(8 * p, p);
  for (int t = 0; t < 8; ++t) stacked.middleRows(t * p, p) = ms[static_cast<std::size_t>(t)];
  const auto ref = run_python(R"(
p = S.shape[1]
emit('w', np.column_stack([np.linalg.eigvalsh(S[t*p:(t+1)*p])[::-1] for t in range(S.shape[0] // p)]))
)", {{"S", stacked}});
  double norm = 0.0;
  for (const Matrix& m : ms) norm = std::max(norm, m.cwiseAbs().rowwise().sum().maxCoeff());  // >= ||m||_2
  const double tolerance = lode::testing::eigenvalue_gap_bound(static_cast<double>(p), norm);  // support/bounds.hpp
  EXPECT_LT((fast - ref.at("w")).cwiseAbs().maxCoeff(), tolerance);
  // The same matrices one by one through the scalar iteration give the same numbers as the lanes.
  for (int t = 0; t < 8; ++t) {
    Eigen::Tridiagonalization<Matrix> tri(ms[static_cast<std::size_t>(t)]);
    Vector d = tri.diagonal(), e2(p);
    e2.head(p - 1) = tri.subDiagonal().cwiseAbs2();
    e2(p - 1) = 0.0;
    ASSERT_TRUE(detail::tridiagonal_eigenvalues(d.data(), e2.data(), p, 50));
    std::sort(d.data(), d.data() + p, std::greater<double>());
    EXPECT_LT((d - fast.col(t)).cwiseAbs().maxCoeff(), tolerance);
  }
}
