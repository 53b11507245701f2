// Factor extraction. Principal axis factoring iterates communalities from squared multiple
// correlations (Harman 1976, "Modern Factor Analysis", ch. 8). Minimum residual / unweighted least
// squares and maximum likelihood minimise a fitting function over the uniquenesses alone, the
// loadings being the best ones for given uniquenesses (Joreskog 1967, "Some contributions to
// maximum likelihood factor analysis"; Lawley & Maxwell 1971, ch. 4; Joreskog 1977 for ULS),
// with a projected quasi-Newton method on the box [min_uniqueness, 1] (Bertsekas 1982, "Projected
// Newton methods for optimization problems with simple constraints"; BFGS update, Nocedal & Wright
// 2006, ch. 6).
#include "lode/extraction.hpp"
#include "positive_definite.hpp"

#include "lode/correlation.hpp"
#include "symmetric_eigen.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <numeric>

namespace lode {

using detail::cholesky_or_fail;
using detail::smallest_eigenvalue_text;

namespace {

struct BoxMinimum {
  Vector x;
  double f = 0.0;
  Convergence convergence;
};

Vector clamp(const Vector& x, double lo, double hi) { return x.cwiseMax(lo).cwiseMin(hi); }

// Largest component of the projected gradient x - P(x - g): zero exactly at a stationary point of
// the box-constrained problem.
double projected_gradient_norm(const Vector& x, const Vector& g, double lo, double hi) {
  return (x - clamp(x - g, lo, hi)).cwiseAbs().maxCoeff();
}

// The variables held at a bound: at the lower bound with the gradient pushing down, or at the upper
// bound with the gradient pushing up. They stay fixed for the step; the search acts on the others.
std::vector<Index> free_variables(const Vector& x, const Vector& g, double lo, double hi) {
  const double edge = 1e-12 * std::max(1.0, std::abs(hi));
  std::vector<Index> free;
  for (Index i = 0; i < x.size(); ++i) {
    const bool at_lo = x(i) <= lo + edge && g(i) > 0.0;
    const bool at_hi = x(i) >= hi - edge && g(i) < 0.0;
    if (!at_lo && !at_hi) free.push_back(i);
  }
  return free;
}

// Minimises f over the box [lo, hi]^n by projected quasi-Newton steps (Bertsekas 1982): each step
// holds the variables at an active bound fixed and takes the Newton step of the free ones with the
// free block of a BFGS approximation B of the Hessian, d_F = -B_FF^-1 g_F (Nocedal & Wright 2006,
// eq. 6.19, the update of B). B_FF is the Hessian of f restricted to the free variables, so near a
// solution with items held at the bound the step is the quasi-Newton step of the reduced problem and
// converges as fast as an unconstrained one (restricting an approximation of the INVERSE Hessian to
// the free variables would not be: its free block couples them through the fixed ones). A backtracking
// search along the projected path enforces the Armijo condition. The criterion is the largest
// component of the projected gradient x - P(x - g), which is zero exactly at a stationary point of the
// box problem (a bound-held variable with the gradient pushing outward contributes zero).
// `fg(x, g)` returns f(x) and writes its gradient into g. `start_hessian` (optional, n x n, positive
// definite) replaces the first scaled identity of the approximation.
template <class FG>
BoxMinimum minimize_in_box(FG fg, Vector x, double lo, double hi, int max_iterations, double tolerance,
                           const Matrix& start_hessian = Matrix()) {
  const Index n = x.size();
  x = clamp(x, lo, hi);
  Vector g(n), g_new(n);
  double f = fg(x, g);
  const bool have_start = start_hessian.rows() == n && start_hessian.cols() == n && start_hessian.allFinite();
  Matrix b = have_start ? start_hessian : Matrix(Matrix::Identity(n, n));  // Hessian approximation
  bool scaled = have_start;
  BoxMinimum out;
  out.convergence.max_iterations = max_iterations;
  out.convergence.tolerance = tolerance;
  double criterion = projected_gradient_norm(x, g, lo, hi);
  int it = 0;
  while (criterion > tolerance && it < max_iterations) {
    ++it;
    const std::vector<Index> free = free_variables(x, g, lo, hi);
    Vector d = Vector::Zero(n);
    const Eigen::LLT<Matrix> llt(b(free, free));
    if (llt.info() == Eigen::Success) d(free) = -llt.solve(g(free));
    if (!(g.dot(d) < 0.0) || !d.allFinite()) {  // not a descent direction: restart from steepest descent
      b.setIdentity();
      scaled = false;
      d.setZero();
      d(free) = -g(free);
    }
    // Backtracking along the projected path P(x + alpha d).
    double alpha = 1.0, f_new = f;
    Vector x_new = x;
    bool accepted = false;
    for (int k = 0; k < 60; ++k) {
      x_new = clamp(x + alpha * d, lo, hi);
      f_new = fg(x_new, g_new);
      if (std::isfinite(f_new) && f_new <= f + 1e-4 * g.dot(x_new - x)) {
        accepted = true;
        break;
      }
      // Near the minimum the decrease falls below the rounding noise of f (the ML profile sums
      // eigenvalues computed to about eps times the largest one): accept a step that keeps f within
      // that noise and shrinks the projected gradient.
      if (std::isfinite(f_new) && f_new <= f + 1e-11 * std::max(std::abs(f), 1.0) &&
          projected_gradient_norm(x_new, g_new, lo, hi) < criterion) {
        accepted = true;
        break;
      }
      alpha *= 0.5;
    }
    if (!accepted) {
      if (!scaled) break;  // even steepest descent makes no progress: stop, report
      b.setIdentity();
      scaled = false;
      continue;
    }
    const Vector s = x_new - x, y = g_new - g;
    const double sy = s.dot(y);
    if (sy > 1e-12 * s.norm() * y.norm()) {
      if (!scaled) {
        b = Matrix::Identity(n, n) * (y.squaredNorm() / sy);
        scaled = true;
      }
      // B+ = B - B s s' B / (s' B s) + y y' / (s' y)
      const Vector bs = b * s;
      const double sbs = s.dot(bs);
      if (sbs > 0.0) b += (y * y.transpose()) / sy - (bs * bs.transpose()) / sbs;
    }
    x = x_new;
    f = f_new;
    g = g_new;
    criterion = projected_gradient_norm(x, g, lo, hi);
  }
  out.x = x;
  out.f = f;
  out.convergence.iterations = it;
  out.convergence.final_change = criterion;
  out.convergence.converged = criterion <= tolerance;
  return out;
}

struct Eigen_ {
  Vector values;   // descending
  Matrix vectors;  // columns in the same order
};

Eigen_ eigen_descending(const Matrix& m) {
  Eigen::SelfAdjointEigenSolver<Matrix> es(m);
  Eigen_ out;
  out.values = es.eigenvalues().reverse();
  out.vectors = es.eigenvectors().rowwise().reverse();
  return out;
}

// Loadings V_k diag(sqrt(max(values_k, 0))) from the k largest eigenpairs.
Matrix top_loadings(const Eigen_& e, int k) {
  Matrix l = e.vectors.leftCols(k);
  for (int j = 0; j < k; ++j) l.col(j) *= std::sqrt(std::max(e.values(j), 0.0));
  return l;
}

// Loadings V_k diag(sqrt(max(values_k - shift, 0))) from the k leading eigenpairs.
Matrix leading_loadings(const detail::LeadingEigen& e, int k, double shift) {
  Matrix l = e.vectors().leftCols(k);
  for (int j = 0; j < k; ++j) l.col(j) *= std::sqrt(std::max(e.values()(j) - shift, 0.0));
  return l;
}

// Maximum likelihood, concentrated on the uniquenesses (Joreskog 1967): with S* = Psi^-1/2 R Psi^-1/2
// and its eigenvalues theta, F(Psi) = sum_{m > k} (theta_m - ln theta_m - 1), L = Psi^1/2 V_k
// diag(sqrt(max(theta_k - 1, 0))), and dF/dpsi_i = (L L' + Psi - R)_ii / psi_i^2. Each evaluation
// needs every eigenvalue of S* but only its k leading eigenvectors (detail::LeadingEigen); the
// workspace is reused from one evaluation to the next.
struct MlProfile {
  const Matrix& r;
  int k;
  detail::LeadingEigen eig{};
  Matrix scaled{};
  bool decompose(const Vector& psi) {
    const Vector is = psi.cwiseSqrt().cwiseInverse();
    scaled.noalias() = is.asDiagonal() * r * is.asDiagonal();
    return eig.compute(scaled, k);
  }
  Matrix loadings(const Vector& psi) {
    if (!decompose(psi)) throw Error(ErrorCode::internal, "the eigen decomposition in maximum likelihood failed");
    return psi.cwiseSqrt().asDiagonal() * leading_loadings(eig, k, 1.0);
  }
  // Joreskog's (1967) approximation of the Hessian, E_ij = (delta_ij - (V_k V_k')_ij)^2 / (psi_i psi_j)
  // (the sum over the trailing eigenvectors (Omega Omega')_ij written with the leading ones), exact where
  // the trailing eigenvalues are 1; empty if it is not positive definite.
  Matrix approximate_hessian(const Vector& psi) {
    if (!decompose(psi)) return Matrix();
    const Matrix& v = eig.vectors();
    Matrix e = -(v * v.transpose());
    e.diagonal().array() += 1.0;
    e = e.cwiseProduct(e);
    const Vector inv = psi.cwiseInverse();
    e = inv.asDiagonal() * e * inv.asDiagonal();
    if (!e.allFinite() || Eigen::LLT<Matrix>(e).info() != Eigen::Success) return Matrix();
    return e;
  }
  double operator()(const Vector& psi, Vector& g) {
    const Index p = r.rows();
    if (!decompose(psi)) return std::numeric_limits<double>::infinity();
    const Vector& theta = eig.values();
    double f = 0.0;
    for (Index m = k; m < p; ++m) {
      const double t = theta(m);
      if (!(t > 0.0)) return std::numeric_limits<double>::infinity();
      f += t - std::log(t) - 1.0;
    }
    const Matrix& v = eig.vectors();
    for (Index i = 0; i < p; ++i) {
      double h = 0.0;  // communality (L L')_ii = psi_i sum_j max(theta_j - 1, 0) v_ij^2
      for (int j = 0; j < k; ++j) h += std::max(theta(j) - 1.0, 0.0) * v(i, j) * v(i, j);
      h *= psi(i);
      g(i) = (h + psi(i) - r(i, i)) / (psi(i) * psi(i));
    }
    return f;
  }
};

// Unweighted least squares concentrated on the uniquenesses: L from the k largest eigenpairs of
// R - Psi, F(Psi) = 1/2 ||R - L L' - Psi||^2, dF/dpsi_i = (L L' + Psi - R)_ii.
struct UlsProfile {
  const Matrix& r;
  int k;
  detail::LeadingEigen eig{};
  Matrix reduced{}, resid{};
  Matrix loadings(const Vector& psi) {
    reduced = r;
    reduced.diagonal() -= psi;
    if (!eig.compute(reduced, k)) throw Error(ErrorCode::internal, "the eigen decomposition in minimum residual failed");
    return leading_loadings(eig, k, 0.0);
  }
  double operator()(const Vector& psi, Vector& g) {
    const Matrix l = loadings(psi);
    resid = r;
    resid.noalias() -= l * l.transpose();
    resid.diagonal() -= psi;
    g = -resid.diagonal();
    return 0.5 * resid.squaredNorm();
  }
};

double least_squares_objective(const Matrix& r, const Matrix& l, const Vector& u) {
  Matrix resid = r - l * l.transpose();
  resid.diagonal() -= u;
  return 0.5 * resid.squaredNorm();
}

void check_options(const ExtractionOptions& o, Index p) {
  if (o.max_iterations < 1)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the iteration cap must be at least 1; got {}", o.max_iterations));
  if (!(o.tolerance > 0.0) || !std::isfinite(o.tolerance))
    throw Error(ErrorCode::invalid_argument, fmt::format("the convergence tolerance must be positive; got {}", o.tolerance));
  if (!(o.min_uniqueness > 0.0 && o.min_uniqueness < 1.0))
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the lower bound for uniquenesses must lie strictly between 0 and 1; got {}", o.min_uniqueness));
  if (o.n_obs < 0)
    throw Error(ErrorCode::invalid_argument, fmt::format("the number of observations is negative ({})", o.n_obs));
  if (!o.item_names.empty() && static_cast<Index>(o.item_names.size()) != p)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("{} item names were given for {} items", o.item_names.size(), p));
  if (o.start_uniquenesses.size() != 0) {
    if (o.start_uniquenesses.size() != p)
      throw Error(ErrorCode::invalid_argument,
                  fmt::format("{} starting uniquenesses were given for {} items", o.start_uniquenesses.size(), p));
    for (Index i = 0; i < p; ++i)
      if (!std::isfinite(o.start_uniquenesses(i)))
        throw Error(ErrorCode::invalid_argument,
                    fmt::format("the starting uniqueness of {} is not a finite number ({})", item_label(o.item_names, i),
                                o.start_uniquenesses(i)));
  }
}

// Columns by decreasing sum of squares, each with a non-negative sum (common practice).
void orient(Matrix& l) {
  const Index k = l.cols();
  std::vector<Index> order(static_cast<std::size_t>(k));
  std::iota(order.begin(), order.end(), Index{0});
  const Vector ss = l.colwise().squaredNorm().transpose();
  std::stable_sort(order.begin(), order.end(), [&](Index a, Index b) { return ss(a) > ss(b); });
  Matrix sorted(l.rows(), k);
  for (Index j = 0; j < k; ++j) {
    sorted.col(j) = l.col(order[static_cast<std::size_t>(j)]);
    if (sorted.col(j).sum() < 0.0) sorted.col(j) *= -1.0;
  }
  l = sorted;
}

}  // namespace

const char* to_string(ExtractionMethod method) noexcept {
  switch (method) {
    case ExtractionMethod::principal_axis: return "principal axis factoring";
    case ExtractionMethod::minimum_residual: return "minimum residual";
    case ExtractionMethod::maximum_likelihood: return "maximum likelihood";
    case ExtractionMethod::principal_components: return "principal components";
  }
  return "unknown";
}

double factor_model_df(Index items, int factors) {
  const double p = static_cast<double>(items), k = factors;
  return 0.5 * ((p - k) * (p - k) - (p + k));
}

int max_identified_factors(Index items) {
  int k = 0;
  while (k + 1 < items && factor_model_df(items, k + 1) >= 0.0) ++k;
  return k;
}

Matrix implied_correlation(const Matrix& loadings, const Vector& uniquenesses) {
  if (loadings.rows() != uniquenesses.size())
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the loadings have {} rows but there are {} uniquenesses", loadings.rows(), uniquenesses.size()));
  Matrix s = loadings * loadings.transpose();
  s.diagonal() += uniquenesses;
  return s;
}

namespace {

// Every item whose uniqueness is held at the lower bound (bounded methods) or whose communality reaches
// 1, listed in out.heywood with a note (common practice: improper estimates).
void flag_heywood_cases(ExtractionResult& out, const ExtractionOptions& options) {
  const Vector& u = out.uniquenesses;
  const Index p = u.size();
  const bool bounded =
      options.method == ExtractionMethod::minimum_residual || options.method == ExtractionMethod::maximum_likelihood;
  for (Index i = 0; i < p; ++i) {
    const bool at_bound = bounded && u(i) <= options.min_uniqueness * (1.0 + 1e-6);
    const bool over = out.communalities(i) >= 1.0 - 1e-12;
    if (!at_bound && !over) continue;
    HeywoodItem hw;
    hw.item = i;
    hw.label = item_label(options.item_names, i);
    hw.communality = out.communalities(i);
    hw.uniqueness = u(i);
    hw.at_bound = at_bound;
    out.heywood.push_back(hw);
    out.notes.push_back(
        at_bound ? fmt::format("Heywood case: {} has its uniqueness held at the lower bound {} (a bound of common practice; "
                               "communality {:.4f}); "
                               "its estimates are improper, which often means too many factors or too few items per "
                               "factor",
                               hw.label, options.min_uniqueness, hw.communality)
                 : fmt::format("Heywood case: {} has communality {:.4f}, at or above 1 (uniqueness {:.4f}); its "
                               "estimates are improper, which often means too many factors or too few items per factor",
                               hw.label, hw.communality, hw.uniqueness));
  }
}

}  // namespace

ExtractionResult extract_factors(const Matrix& r_in, int factors, const ExtractionOptions& options) {
  CorrelationOptions co;
  co.item_names = options.item_names;
  check_options(options, r_in.rows());
  const CorrelationResult checked = correlation_from_matrix(r_in, 0, co);  // also tests positive definiteness
  const Matrix& r = checked.matrix;
  const Index p = r.rows();
  const int k = factors;
  const auto method_name = to_string(options.method);
  if (k < 1)
    throw Error(ErrorCode::invalid_argument, fmt::format("the number of factors must be at least 1; got {}", k));
  if (k >= p)
    throw Error(ErrorCode::too_many_factors,
                fmt::format("{} factors from {} items: there must be fewer factors than items", k, p));
  if (options.n_obs > 0 && options.n_obs <= p)
    throw Error(ErrorCode::insufficient_data,
                fmt::format("too few observations: a correlation matrix of {} items from {} observations is singular; "
                            "at least {} observations are needed, and many more for stable factors",
                            p, options.n_obs, p + 1));
  const bool pd = checked.positive_definite;
  if (options.method == ExtractionMethod::maximum_likelihood) {
    const double df = factor_model_df(p, k);
    if (df < 0.0)
      throw Error(ErrorCode::too_many_factors,
                  fmt::format("maximum likelihood with {} factors for {} items has negative degrees of freedom ({}); "
                              "{} items can identify at most {} factor{}",
                              k, p, df, p, max_identified_factors(p), max_identified_factors(p) == 1 ? "" : "s"));
    if (!pd)
      throw Error(ErrorCode::not_positive_definite,
                  fmt::format("maximum likelihood needs a positive-definite correlation matrix, but this one's smallest "
                              "eigenvalue is {}; smooth it to the nearest correlation matrix first (or use minimum "
                              "residual extraction)",
                              smallest_eigenvalue_text(r)));
  }

  ExtractionResult out;
  out.method = options.method;
  out.factors = k;
  Matrix l;
  Vector u;
  switch (options.method) {
    case ExtractionMethod::principal_components: {
      const Eigen_ e = eigen_descending(r);
      l = top_loadings(e, k);
      out.convergence.converged = true;
      break;
    }
    case ExtractionMethod::principal_axis: {
      if (!pd)
        throw Error(ErrorCode::not_positive_definite,
                    fmt::format("principal axis factoring starts from squared multiple correlations, which need a "
                                "positive-definite correlation matrix, but this one's smallest eigenvalue is {}; smooth "
                                "it to the nearest correlation matrix first (or use minimum residual extraction)",
                                smallest_eigenvalue_text(r)));
      Vector h = squared_multiple_correlations(r);
      Convergence& c = out.convergence;
      c.max_iterations = options.max_iterations;
      c.tolerance = options.tolerance;
      bool short_of_positive = false;
      detail::LeadingEigen e;
      Matrix reduced = r;
      for (int it = 1; it <= options.max_iterations; ++it) {
        reduced.diagonal() = h;
        if (!e.compute(reduced, k))
          throw Error(ErrorCode::internal, "the eigen decomposition in principal axis factoring failed");
        short_of_positive = e.values()(k - 1) <= 0.0;
        l = leading_loadings(e, k, 0.0);
        const Vector h_new = l.rowwise().squaredNorm();
        c.iterations = it;
        c.final_change = (h_new - h).cwiseAbs().maxCoeff();
        h = h_new;
        if (c.final_change < options.tolerance) {
          c.converged = true;
          break;
        }
      }
      if (short_of_positive)
        out.notes.push_back(fmt::format("the reduced correlation matrix has fewer than {} positive eigenvalues; the "
                                        "last factor{} carry no variance",
                                        k, k > 1 ? "s" : ""));
      break;
    }
    case ExtractionMethod::minimum_residual: {
      Vector start;
      if (options.start_uniquenesses.size() != 0) {
        start = options.start_uniquenesses;
      } else if (pd) {
        start = Vector::Ones(p) - squared_multiple_correlations(r);
      } else {
        // No SMCs without an inverse: start from each item's largest absolute correlation (common practice).
        Matrix a = r.cwiseAbs();
        a.diagonal().setZero();
        start = Vector::Ones(p) - a.rowwise().maxCoeff();
        out.notes.push_back(fmt::format("the correlation matrix is not positive definite (smallest eigenvalue {}); "
                                        "minimum residual started from the largest correlations instead of squared "
                                        "multiple correlations",
                                        smallest_eigenvalue_text(r)));
      }
      UlsProfile uls{r, k};
      BoxMinimum m = minimize_in_box([&](const Vector& x, Vector& g) { return uls(x, g); }, start, options.min_uniqueness,
                                     1.0, options.max_iterations, options.tolerance);
      out.convergence = m.convergence;
      u = m.x;
      l = uls.loadings(u);
      break;
    }
    case ExtractionMethod::maximum_likelihood: {
      // Start of Joreskog (1967): psi_i = (1 - k / (2p)) / (R^-1)_ii, unless the caller gave one.
      Vector start = options.start_uniquenesses;
      if (start.size() == 0) {
        const Matrix inv = r.llt().solve(Matrix::Identity(p, p));
        start = (1.0 - 0.5 * k / static_cast<double>(p)) * inv.diagonal().cwiseInverse();
      }
      MlProfile ml{r, k};
      // The quasi-Newton search starts from Joreskog's approximate Hessian at the start rather than a
      // scaled identity: the same search and stopping rule, about a third fewer iterations.
      const Matrix h0 = ml.approximate_hessian(start.cwiseMax(options.min_uniqueness).cwiseMin(1.0));
      BoxMinimum m = minimize_in_box([&](const Vector& x, Vector& g) { return ml(x, g); }, start, options.min_uniqueness,
                                     1.0, options.max_iterations, options.tolerance, h0);
      out.convergence = m.convergence;
      u = m.x;
      l = ml.loadings(u);
      out.objective = m.f;
      break;
    }
  }
  orient(l);
  out.loadings = l;
  out.communalities = l.rowwise().squaredNorm();
  if (u.size() == 0) u = Vector::Ones(p) - out.communalities;
  out.uniquenesses = u;
  out.factor_variance = l.colwise().squaredNorm().transpose();
  if (options.method != ExtractionMethod::maximum_likelihood) out.objective = least_squares_objective(r, l, u);

  flag_heywood_cases(out, options);
  if (!out.convergence.converged)
    out.notes.push_back(fmt::format("{} did not converge in {} iterations (criterion {:.3g}, tolerance {:.3g}); treat "
                                    "the results with caution",
                                    method_name, out.convergence.iterations, out.convergence.final_change,
                                    out.convergence.tolerance));
  return out;
}

}  // namespace lode
