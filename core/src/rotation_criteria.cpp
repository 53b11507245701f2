// Rotation criteria as plug-ins for the gradient projection engine: each gives the value Q(L) and the
// gradient dQ/dL at rotated loadings L (items x factors). Formulas as in Jennrich (2001, 2002) and
// Bernaards & Jennrich (2005); the engine minimises Q.
#include "lode/rotation.hpp"
#include "rotation_internal.hpp"

#include <fmt/format.h>

#include <cmath>

namespace lode::detail {

namespace {

// Orthomax family (Harman 1976): Q = -1/4 <L^2, (I - gamma/p 11') L^2>; gamma = 0 quartimax,
// 1 varimax (Kaiser 1958), m/2 equamax (Saunders 1962).
CriterionValue orthomax(const Matrix& l, double gamma) {
  const Matrix l2 = l.cwiseProduct(l);
  const double p = static_cast<double>(l.rows());
  Matrix centred = l2;
  if (gamma != 0.0) centred.rowwise() -= (gamma / p) * l2.colwise().sum();
  return {-0.25 * l2.cwiseProduct(centred).sum(), -l.cwiseProduct(centred)};
}

// Oblimin family (Carroll 1957; Jennrich & Sampson 1966): Q = 1/4 <L^2, (I - gamma/p 11') L^2 N>,
// N = 11' - I; gamma = 0 quartimin.
CriterionValue oblimin(const Matrix& l, double gamma) {
  const Matrix l2 = l.cwiseProduct(l);
  const double p = static_cast<double>(l.rows());
  Matrix x = l2;
  if (gamma != 0.0) x.rowwise() -= (gamma / p) * l2.colwise().sum();
  // (X N)_ij = sum over the other factors of X_ik
  Matrix xn = (x.rowwise().sum()).replicate(1, l.cols()) - x;
  return {0.25 * l2.cwiseProduct(xn).sum(), l.cwiseProduct(xn)};
}

// Crawford & Ferguson (1970): Q = (1-kappa)/4 <L^2, L^2 N> + kappa/4 <L^2, M L^2>, N = 11' - I
// (factors), M = 11' - I (items).
CriterionValue crawford_ferguson(const Matrix& l, double kappa) {
  const Matrix l2 = l.cwiseProduct(l);
  const Matrix row_part = l2.rowwise().sum().replicate(1, l.cols()) - l2;  // L^2 N
  const Matrix col_part = l2.colwise().sum().replicate(l.rows(), 1) - l2;  // M L^2
  const double value = 0.25 * ((1.0 - kappa) * l2.cwiseProduct(row_part).sum() +
                               kappa * l2.cwiseProduct(col_part).sum());
  Matrix gradient = (1.0 - kappa) * l.cwiseProduct(row_part) + kappa * l.cwiseProduct(col_part);
  return {value, gradient};
}

// Geomin (Yates 1987; Browne 2001): Q = sum_i (prod_j (L_ij^2 + eps))^(1/m).
CriterionValue geomin(const Matrix& l, double epsilon) {
  const Matrix l2e = (l.cwiseProduct(l)).array() + epsilon;
  const double m = static_cast<double>(l.cols());
  const Vector pro = (l2e.array().log().rowwise().sum() / m).exp().matrix();
  Matrix gradient = (2.0 / m) * l.cwiseQuotient(l2e);
  for (Index i = 0; i < l.rows(); ++i) gradient.row(i) *= pro(i);
  return {pro.sum(), gradient};
}

// Least squares toward a target, unspecified (NaN) entries left free (Browne 1972, 2001):
// Q = sum over specified entries of (L - H)^2.
CriterionValue target(const Matrix& l, const Matrix& h) {
  Matrix diff = Matrix::Zero(l.rows(), l.cols());
  for (Index j = 0; j < l.cols(); ++j)
    for (Index i = 0; i < l.rows(); ++i)
      if (!std::isnan(h(i, j))) diff(i, j) = l(i, j) - h(i, j);
  return {diff.squaredNorm(), 2.0 * diff};
}

}  // namespace

CriterionValue evaluate_criterion(const Matrix& l, const RotationOptions& o) {
  switch (o.method) {
    case RotationMethod::none:
      return {0.0, Matrix::Zero(l.rows(), l.cols())};
    case RotationMethod::varimax:
    case RotationMethod::varimax_kaiser:
    case RotationMethod::promax:
      return orthomax(l, 1.0);
    case RotationMethod::quartimax:
      return orthomax(l, 0.0);
    case RotationMethod::equamax:
      return orthomax(l, static_cast<double>(l.cols()) / 2.0);
    case RotationMethod::crawford_ferguson:
    case RotationMethod::crawford_ferguson_oblique:
      return crawford_ferguson(l, o.kappa);
    case RotationMethod::geomin_orthogonal:
    case RotationMethod::geomin:
      return geomin(l, o.epsilon);
    case RotationMethod::target_orthogonal:
    case RotationMethod::target_oblique:
      return target(l, o.target);
    case RotationMethod::oblimin:
      return oblimin(l, o.gamma);
    case RotationMethod::quartimin:
      return oblimin(l, 0.0);
  }
  throw Error(ErrorCode::internal, fmt::format("unhandled rotation method {}", static_cast<int>(o.method)));
}

}  // namespace lode::detail
