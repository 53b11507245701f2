#include "lode/congruence.hpp"

#include "scaling.hpp"

#include <fmt/format.h>

#include <cmath>
#include <limits>

namespace lode {

Matrix tucker_congruence(const Matrix& a, const Matrix& b) {
  if (a.rows() != b.rows())
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the two loading matrices have different numbers of items ({} and {})", a.rows(), b.rows()));
  if (a.rows() == 0 || a.cols() == 0 || b.cols() == 0)
    throw Error(ErrorCode::invalid_argument, "a loading matrix to compare is empty");
  if (!a.allFinite() || !b.allFinite())
    throw Error(ErrorCode::invalid_argument, "a loading matrix to compare contains a missing or infinite value");
  // Congruence is free of each column's scale: columns brought to a largest magnitude in [1, 2)
  // first keep the products and norms inside double precision (1e300 or 1e-160 loadings).
  const Matrix as = detail::columns_scaled(a), bs = detail::columns_scaled(b);
  const Vector na = as.colwise().norm();
  const Vector nb = bs.colwise().norm();
  Matrix c = as.transpose() * bs;
  for (Index i = 0; i < c.rows(); ++i)
    for (Index j = 0; j < c.cols(); ++j) {
      const double d = na(i) * nb(j);
      c(i, j) = d > 0.0 ? c(i, j) / d : std::numeric_limits<double>::quiet_NaN();
    }
  return c;
}

// Hungarian method with potentials (Kuhn 1955; Munkres 1957), in the compact O(n^3) shortest augmenting
// path form. Minimises the cost -score.
std::vector<Index> best_assignment(const Matrix& score) {
  const Index n = score.rows();
  if (n != score.cols()) throw Error(ErrorCode::invalid_argument, "the assignment problem needs a square matrix");
  if (!score.allFinite()) throw Error(ErrorCode::invalid_argument, "the assignment scores contain a missing or infinite value");
  const double inf = std::numeric_limits<double>::infinity();
  // 1-based arrays: p[j] = row assigned to column j, u/v row and column potentials.
  std::vector<double> u(static_cast<std::size_t>(n + 1), 0.0), v(static_cast<std::size_t>(n + 1), 0.0);
  std::vector<Index> p(static_cast<std::size_t>(n + 1), 0), way(static_cast<std::size_t>(n + 1), 0);
  auto cost = [&](Index i, Index j) { return -score(i - 1, j - 1); };
  for (Index i = 1; i <= n; ++i) {
    p[0] = i;
    Index j0 = 0;
    std::vector<double> minv(static_cast<std::size_t>(n + 1), inf);
    std::vector<bool> used(static_cast<std::size_t>(n + 1), false);
    do {
      used[static_cast<std::size_t>(j0)] = true;
      const Index i0 = p[static_cast<std::size_t>(j0)];
      double delta = inf;
      Index j1 = 0;
      for (Index j = 1; j <= n; ++j) {
        const auto sj = static_cast<std::size_t>(j);
        if (used[sj]) continue;
        const double cur = cost(i0, j) - u[static_cast<std::size_t>(i0)] - v[sj];
        if (cur < minv[sj]) {
          minv[sj] = cur;
          way[sj] = j0;
        }
        if (minv[sj] < delta) {
          delta = minv[sj];
          j1 = j;
        }
      }
      for (Index j = 0; j <= n; ++j) {
        const auto sj = static_cast<std::size_t>(j);
        if (used[sj]) {
          u[static_cast<std::size_t>(p[sj])] += delta;
          v[sj] -= delta;
        } else {
          minv[sj] -= delta;
        }
      }
      j0 = j1;
    } while (p[static_cast<std::size_t>(j0)] != 0);
    do {
      const Index j1 = way[static_cast<std::size_t>(j0)];
      p[static_cast<std::size_t>(j0)] = p[static_cast<std::size_t>(j1)];
      j0 = j1;
    } while (j0 != 0);
  }
  std::vector<Index> match(static_cast<std::size_t>(n), 0);
  for (Index j = 1; j <= n; ++j) match[static_cast<std::size_t>(p[static_cast<std::size_t>(j)] - 1)] = j - 1;
  return match;
}

const char* congruence_reading(double congruence) noexcept {
  const double a = std::abs(congruence);
  return a >= 0.95 ? "can be considered the same factor" : a >= 0.85 ? "shows fair similarity" : "is not the same factor";
}

FactorMatch match_factors(const Matrix& reference, const Matrix& other) {
  if (reference.rows() != other.rows() || reference.cols() != other.cols())
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the two solutions to match differ in shape ({} items x {} factors and {} items x {} factors)",
                            reference.rows(), reference.cols(), other.rows(), other.cols()));
  FactorMatch m;
  m.congruence = tucker_congruence(reference, other);
  const Index k = reference.cols();
  for (Index j = 0; j < k; ++j) {
    if (!(reference.col(j).cwiseAbs().maxCoeff() > 0.0))
      throw Error(ErrorCode::invalid_argument,
                  fmt::format("factor {} of the first solution has only zero loadings; congruence is undefined", j + 1));
    if (!(other.col(j).cwiseAbs().maxCoeff() > 0.0))
      throw Error(ErrorCode::invalid_argument,
                  fmt::format("factor {} of the second solution has only zero loadings; congruence is undefined", j + 1));
  }
  m.order = best_assignment(m.congruence.cwiseAbs());
  m.signs = Vector::Ones(k);
  m.matched_congruence.resize(k);
  m.aligned.resize(other.rows(), k);
  for (Index j = 0; j < k; ++j) {
    const Index o = m.order[static_cast<std::size_t>(j)];
    const double c = m.congruence(j, o);
    m.signs(j) = c < 0.0 ? -1.0 : 1.0;
    m.matched_congruence(j) = std::abs(c);
    m.aligned.col(j) = m.signs(j) * other.col(o);
    const double a = std::abs(c);
    const char* reading = congruence_reading(a);
    m.notes.push_back(fmt::format("factor {} of the first solution matches factor {} of the second{} with congruence "
                                  "{:.3f}: it {} (bands of Lorenzo-Seva & ten Berge 2006)",
                                  j + 1, o + 1, m.signs(j) < 0 ? " (reflected)" : "", a, reading));
  }
  return m;
}

Matrix align_factor_correlations(const Matrix& phi, const FactorMatch& match) {
  const Index k = static_cast<Index>(match.order.size());
  if (phi.rows() != k || phi.cols() != k)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the factor correlation matrix is {} x {}, but the match is for {} factors", phi.rows(),
                            phi.cols(), k));
  Matrix out(k, k);
  for (Index i = 0; i < k; ++i)
    for (Index j = 0; j < k; ++j)
      out(i, j) = match.signs(i) * match.signs(j) *
                  phi(match.order[static_cast<std::size_t>(i)], match.order[static_cast<std::size_t>(j)]);
  return out;
}

}  // namespace lode
