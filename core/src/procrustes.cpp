#include "lode/rotation.hpp"

#include <fmt/format.h>

namespace lode {

namespace {

void check_shapes(const Matrix& a, const Matrix& target) {
  if (a.rows() != target.rows() || a.cols() != target.cols())
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the loadings ({} x {}) and the target ({} x {}) differ in shape", a.rows(), a.cols(),
                            target.rows(), target.cols()));
  if (a.cols() < 1 || a.rows() < a.cols())
    throw Error(ErrorCode::invalid_argument,
                fmt::format("a Procrustes rotation needs at least as many items as factors ({} items, {} factors)",
                            a.rows(), a.cols()));
  if (!a.allFinite() || !target.allFinite())
    throw Error(ErrorCode::invalid_argument, "the loadings or the target hold a missing or infinite value");
}

}  // namespace

ProcrustesFit procrustes_orthogonal(const Matrix& a, const Matrix& target) {
  check_shapes(a, target);
  const Eigen::JacobiSVD<Matrix> svd(a.transpose() * target, Eigen::ComputeFullU | Eigen::ComputeFullV);
  ProcrustesFit f;
  f.transformation = svd.matrixU() * svd.matrixV().transpose();
  f.pattern = a * f.transformation;
  f.factor_correlations = Matrix::Identity(a.cols(), a.cols());
  return f;
}

ProcrustesFit procrustes_oblique(const Matrix& a, const Matrix& target) {
  check_shapes(a, target);
  const Eigen::LDLT<Matrix> ata(a.transpose() * a);
  if (ata.info() != Eigen::Success || !ata.isPositive() || ata.vectorD().minCoeff() <= 0.0)
    throw Error(ErrorCode::not_positive_definite, "the loadings' factors are linearly dependent; no oblique fit exists");
  Matrix u = ata.solve(a.transpose() * target);
  const Vector d = (u.transpose() * u).inverse().diagonal();
  if (!d.allFinite() || d.minCoeff() <= 0.0)
    throw Error(ErrorCode::not_positive_definite,
                "the target leaves a factor without a column of its own; no oblique fit exists");
  u = u * d.cwiseSqrt().asDiagonal();
  ProcrustesFit f;
  f.transformation = u;
  f.pattern = a * u;
  f.factor_correlations = (u.transpose() * u).inverse();
  f.factor_correlations.diagonal().setOnes();  // 1 up to rounding by construction
  return f;
}

}  // namespace lode
