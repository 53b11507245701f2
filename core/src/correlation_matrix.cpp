// Properties of a correlation matrix once it exists, whatever produced it: its eigenvalues (all, and
// of the reduced matrix with squared multiple correlations on the diagonal), whether it is positive
// definite to working precision, and the nearest correlation matrix when it is not (Higham 2002,
// "Computing the nearest correlation matrix", IMA J. Numer. Anal. 22, alternating projections with
// Dykstra's correction). Declared in lode/correlation.hpp.
#include "lode/correlation.hpp"

#include <fmt/format.h>

#include <Eigen/Cholesky>
#include <Eigen/Eigenvalues>

#include <algorithm>
#include <cmath>
#include <limits>

namespace lode {

Matrix nearest_correlation(const Matrix& r, double min_eigenvalue, SmoothingReport* report, int max_iterations,
                           double tolerance) {
  const Index p = r.rows();
  Matrix y = r, x = r, ds = Matrix::Zero(p, p);
  Convergence conv;
  conv.max_iterations = max_iterations;
  conv.tolerance = tolerance;
  Eigen::SelfAdjointEigenSolver<Matrix> eig;
  for (int it = 1; it <= max_iterations; ++it) {
    const Matrix rk = y - ds;
    eig.compute(rk);
    const Vector d = eig.eigenvalues().cwiseMax(min_eigenvalue);
    x = eig.eigenvectors() * d.asDiagonal() * eig.eigenvectors().transpose();
    ds = x - rk;
    Matrix y_next = x;
    y_next.diagonal().setOnes();
    const double change = (y_next - y).norm() / std::max(1.0, y.norm());
    y = y_next;
    conv.iterations = it;
    conv.final_change = change;
    if (change < tolerance) {
      conv.converged = true;
      break;
    }
  }
  // Final projection: clip the spectrum and rescale to a unit diagonal, so the result is a
  // correlation matrix with eigenvalues essentially at or above the floor.
  eig.compute(y);
  const Vector d = eig.eigenvalues().cwiseMax(min_eigenvalue);
  Matrix z = eig.eigenvectors() * d.asDiagonal() * eig.eigenvectors().transpose();
  const Vector inv_sd = z.diagonal().cwiseSqrt().cwiseInverse();
  z = inv_sd.asDiagonal() * z * inv_sd.asDiagonal();
  z = 0.5 * (z + z.transpose());
  z.diagonal().setOnes();
  if (report) {
    report->applied = true;
    const Matrix diff = z - r;
    report->max_abs_change = diff.cwiseAbs().maxCoeff();
    report->rms_change = p > 1 ? std::sqrt(diff.squaredNorm() / static_cast<double>(p * (p - 1))) : 0.0;
    report->convergence = conv;
  }
  return z;
}

Vector eigenvalues_descending(const Matrix& symmetric) {
  Eigen::SelfAdjointEigenSolver<Matrix> eig(symmetric, Eigen::EigenvaluesOnly);
  return eig.eigenvalues().reverse();
}

bool is_positive_definite(const Matrix& symmetric) {
  Eigen::LLT<Matrix> llt(symmetric);
  if (llt.info() != Eigen::Success) return false;
  // A matrix singular up to rounding (an item that is an exact sum of others) counts as not positive
  // definite: its smallest eigenvalue must exceed the usual numerical-rank tolerance, size times
  // machine epsilon times the largest eigenvalue (as numpy.linalg.matrix_rank uses).
  const Vector ev = eigenvalues_descending(symmetric);
  return ev(ev.size() - 1) > static_cast<double>(symmetric.rows()) * std::numeric_limits<double>::epsilon() * ev(0);
}

Vector squared_multiple_correlations(const Matrix& r) {
  Eigen::LLT<Matrix> llt(r);
  if (llt.info() != Eigen::Success) {
    const Vector ev = eigenvalues_descending(r);
    throw Error(ErrorCode::not_positive_definite,
                fmt::format("the correlation matrix is not positive definite (smallest eigenvalue {:.3g}), so squared "
                            "multiple correlations are undefined; some items may be exact combinations of others",
                            ev(ev.size() - 1)));
  }
  const Matrix inv = llt.solve(Matrix::Identity(r.rows(), r.cols()));
  return (1.0 - inv.diagonal().cwiseInverse().array()).matrix();
}

Vector reduced_eigenvalues(const Matrix& r) {
  Matrix reduced = r;
  reduced.diagonal() = squared_multiple_correlations(r);
  return eigenvalues_descending(reduced);
}

}  // namespace lode
