// The restricted factor model by maximum likelihood (Joreskog 1969). Every parameter's derivative of
// Sigma = L Phi L' + diag(u) has the form x y' + y x' (a loading (a, f): x = e_a, y = column f of L Phi;
// a factor correlation (f, g): x = L_f, y = L_g; a uniqueness a: x = e_a, y = e_a / 2), so the gradient
// of F, its expected Hessian tr(W dS_i W dS_j) and its observed Hessian all come from a few Gram
// matrices X'AY (W = Sigma^-1). The search is Newton's method on the observed Hessian where that is
// positive definite and Fisher scoring (the expected Hessian) elsewhere, with step halving and the
// uniquenesses kept at or above their bound (a bound-held uniqueness whose gradient pushes outward is
// fixed for the step, as in extraction.cpp).
#include "lode/restricted_fit.hpp"

#include "lode/correlation.hpp"
#include "lode/distributions.hpp"
#include "lode/factorability.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>

namespace lode {

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

struct Layout {
  Index p = 0, k = 0;
  std::vector<std::pair<Index, Index>> loadings;  // (item, factor) of each free loading
  std::vector<std::pair<Index, Index>> phis;      // (f, g), f < g
  Index size() const { return static_cast<Index>(loadings.size() + phis.size()) + p; }
  Index phi_start() const { return static_cast<Index>(loadings.size()); }
  Index psi_start() const { return static_cast<Index>(loadings.size() + phis.size()); }
};

struct Params {
  Matrix lambda, phi;
  Vector psi;
};

Params unpack(const Layout& lay, const Vector& theta) {
  Params s{Matrix::Zero(lay.p, lay.k), Matrix::Identity(lay.k, lay.k), theta.tail(lay.p)};
  for (std::size_t i = 0; i < lay.loadings.size(); ++i)
    s.lambda(lay.loadings[i].first, lay.loadings[i].second) = theta(static_cast<Index>(i));
  for (std::size_t i = 0; i < lay.phis.size(); ++i) {
    const auto [f, g] = lay.phis[i];
    s.phi(f, g) = s.phi(g, f) = theta(lay.phi_start() + static_cast<Index>(i));
  }
  return s;
}

Matrix implied(const Params& s) {
  Matrix sigma = s.lambda * s.phi * s.lambda.transpose();
  sigma.diagonal() += s.psi;
  return sigma;
}

// F at theta, or +inf where Sigma is not positive definite.
double discrepancy(const Layout& lay, const Vector& theta, const Matrix& r, double log_det_r) {
  const Matrix sigma = implied(unpack(lay, theta));
  Eigen::LLT<Matrix> llt(sigma);
  if (llt.info() != Eigen::Success) return std::numeric_limits<double>::infinity();
  double log_det = 0.0;
  for (Index i = 0; i < lay.p; ++i) {
    const double d = llt.matrixLLT()(i, i);
    if (!(d > 0.0)) return std::numeric_limits<double>::infinity();
    log_det += 2.0 * std::log(d);
  }
  return log_det - log_det_r + llt.solve(r).trace() - static_cast<double>(lay.p);
}

// Gradient, expected and observed Hessian of F at theta (Sigma positive definite).
struct Derivatives {
  Vector gradient;
  Matrix expected, observed;
};

Derivatives derivatives(const Layout& lay, const Vector& theta, const Matrix& r) {
  const Params s = unpack(lay, theta);
  const Index p = lay.p, q = lay.size();
  const Matrix w = implied(s).llt().solve(Matrix::Identity(p, p));
  const Matrix v = w * r * w;
  const Matrix m = w - v;
  const Matrix lphi = s.lambda * s.phi;
  Matrix x = Matrix::Zero(p, q), y = Matrix::Zero(p, q);
  for (std::size_t i = 0; i < lay.loadings.size(); ++i) {
    const auto [a, f] = lay.loadings[i];
    x(a, static_cast<Index>(i)) = 1.0;
    y.col(static_cast<Index>(i)) = lphi.col(f);
  }
  for (std::size_t i = 0; i < lay.phis.size(); ++i) {
    const auto [f, g] = lay.phis[i];
    x.col(lay.phi_start() + static_cast<Index>(i)) = s.lambda.col(f);
    y.col(lay.phi_start() + static_cast<Index>(i)) = s.lambda.col(g);
  }
  for (Index a = 0; a < p; ++a) {
    x(a, lay.psi_start() + a) = 1.0;
    y(a, lay.psi_start() + a) = 0.5;
  }
  Derivatives d;
  const Matrix mx = m * x;
  d.gradient = 2.0 * (y.array() * mx.array()).colwise().sum().transpose();
  const Matrix wx = w * x, wy = w * y, vx = v * x, vy = v * y;
  const Matrix gxx = x.transpose() * wx, gyy = y.transpose() * wy, gxy = x.transpose() * wy;
  const Matrix hxx = x.transpose() * vx, hyy = y.transpose() * vy, hxy = x.transpose() * vy;
  const Matrix gyx = gxy.transpose(), hyx = hxy.transpose();
  d.expected = 2.0 * (gxy.array() * gyx.array() + gxx.array() * gyy.array()).matrix();
  const Matrix mixed = (hxy.array() * gyx.array() + hyy.array() * gxx.array() + hxx.array() * gyy.array() +
                        hyx.array() * gxy.array()).matrix();
  d.observed = -d.expected + 2.0 * mixed;
  // tr(M d2Sigma_ij): loading-loading 2 Phi_fg M_ab; loading (a, f) with correlation (f, h): 2 (M L)_ah.
  const Matrix ml = m * s.lambda;
  const auto nl = static_cast<Index>(lay.loadings.size());
  for (Index i = 0; i < nl; ++i) {
    const auto [a, f] = lay.loadings[static_cast<std::size_t>(i)];
    for (Index j = 0; j < nl; ++j) {
      const auto [b, g] = lay.loadings[static_cast<std::size_t>(j)];
      d.observed(i, j) += 2.0 * s.phi(f, g) * m(a, b);
    }
    for (std::size_t c = 0; c < lay.phis.size(); ++c) {
      const auto [g, h] = lay.phis[c];
      const Index j = lay.phi_start() + static_cast<Index>(c);
      double add = 0.0;
      if (f == g) add = 2.0 * ml(a, h);
      else if (f == h) add = 2.0 * ml(a, g);
      d.observed(i, j) += add;
      d.observed(j, i) += add;
    }
  }
  return d;
}

std::string factor_name(Index f) { return fmt::format("factor {}", f + 1); }

// Start: each factor's loadings from the first principal component of its items, factor correlations
// from unit-weighted composites, uniquenesses 1 - communality kept within [0.1, 1].
Vector start_values(const Layout& lay, const Matrix& r, const Matrix& pattern) {
  Vector theta(lay.size());
  Matrix lambda = Matrix::Zero(lay.p, lay.k);
  const Vector per_item = pattern.rowwise().sum();
  for (Index f = 0; f < lay.k; ++f) {
    std::vector<Index> items;
    for (Index a = 0; a < lay.p; ++a)
      if (pattern(a, f) != 0.0) items.push_back(a);
    const auto n = static_cast<Index>(items.size());
    Matrix sub(n, n);
    for (Index i = 0; i < n; ++i)
      for (Index j = 0; j < n; ++j) sub(i, j) = r(items[static_cast<std::size_t>(i)], items[static_cast<std::size_t>(j)]);
    Eigen::SelfAdjointEigenSolver<Matrix> eig(sub);
    Vector v = eig.eigenvectors().col(n - 1) * std::sqrt(eig.eigenvalues()(n - 1));  // component loadings
    if (v.sum() < 0) v = -v;
    for (Index i = 0; i < n; ++i) {
      const Index a = items[static_cast<std::size_t>(i)];
      lambda(a, f) = std::clamp(v(i), -0.95, 0.95) / std::sqrt(per_item(a));
    }
  }
  for (std::size_t i = 0; i < lay.loadings.size(); ++i)
    theta(static_cast<Index>(i)) = lambda(lay.loadings[i].first, lay.loadings[i].second);
  const Matrix composite = pattern.transpose() * r * pattern;
  for (std::size_t i = 0; i < lay.phis.size(); ++i) {
    const auto [f, g] = lay.phis[i];
    theta(lay.phi_start() + static_cast<Index>(i)) =
        0.9 * composite(f, g) / std::sqrt(composite(f, f) * composite(g, g));
  }
  const Vector h = (lambda.array().square()).rowwise().sum();
  for (Index a = 0; a < lay.p; ++a) theta(lay.psi_start() + a) = std::clamp(1.0 - h(a), 0.1, 1.0);
  return theta;
}

// Solves h d = -g on the free parameters: Newton on the observed Hessian where it is positive
// definite, else Fisher scoring on the expected one (made definite by a small ridge if need be).
Vector search_direction(const Derivatives& d, const std::vector<Index>& free) {
  const auto nf = static_cast<Index>(free.size());
  Matrix ho(nf, nf), he(nf, nf);
  Vector g(nf);
  for (Index i = 0; i < nf; ++i) {
    g(i) = d.gradient(free[static_cast<std::size_t>(i)]);
    for (Index j = 0; j < nf; ++j) {
      ho(i, j) = d.observed(free[static_cast<std::size_t>(i)], free[static_cast<std::size_t>(j)]);
      he(i, j) = d.expected(free[static_cast<std::size_t>(i)], free[static_cast<std::size_t>(j)]);
    }
  }
  Vector step;
  Eigen::LLT<Matrix> lo(ho);
  if (lo.info() == Eigen::Success) {
    step = lo.solve(-g);
  } else {
    Eigen::LLT<Matrix> le(he);
    for (double ridge = 1e-10; le.info() != Eigen::Success && ridge < 1e3; ridge *= 100.0)
      le.compute(he + ridge * he.diagonal().cwiseAbs().maxCoeff() * Matrix::Identity(nf, nf));
    step = le.solve(-g);
  }
  return step;
}

void fit_statistics(RestrictedFitResult& out, const Matrix& r, const Matrix& sigma, double log_det_r, double level) {
  const Index p = r.rows();
  const double n1 = static_cast<double>(out.n_obs) - 1.0;
  out.chi_square = n1 * out.discrepancy;
  out.null_df = 0.5 * static_cast<double>(p) * static_cast<double>(p - 1);
  double log_diag = 0.0;
  for (Index a = 0; a < p; ++a) log_diag += std::log(r(a, a));
  out.null_chi_square = n1 * (log_diag - log_det_r);
  const double excess = std::max(out.chi_square - out.df, 0.0);
  const double null_excess = std::max({out.null_chi_square - out.null_df, out.chi_square - out.df, 0.0});
  out.cfi = null_excess > 0.0 ? 1.0 - excess / null_excess : 1.0;
  out.bic = out.chi_square - out.df * std::log(static_cast<double>(out.n_obs));
  if (out.df > 0.0) {
    out.p_value = chi_square_sf(out.chi_square, out.df);
    const double null_ratio = out.null_chi_square / out.null_df;
    out.tli = (null_ratio - out.chi_square / out.df) / (null_ratio - 1.0);
    const double scale = out.df * n1;
    out.rmsea = std::sqrt(excess / scale);
    const double tail = 0.5 * (1.0 - level);
    out.rmsea_lower = std::sqrt(noncentrality_for_cdf(out.chi_square, out.df, 1.0 - tail) / scale);
    out.rmsea_upper = std::sqrt(noncentrality_for_cdf(out.chi_square, out.df, tail) / scale);
  } else {
    out.p_value = out.tli = out.rmsea = out.rmsea_lower = out.rmsea_upper = kNaN;
    out.notes.push_back("the model has no degrees of freedom (just identified): the chi-square test, TLI and RMSEA are "
                        "undefined");
  }
  double sum = 0.0;
  for (Index j = 0; j < p; ++j)
    for (Index i = j; i < p; ++i) {
      const double e = r(i, j) / std::sqrt(r(i, i) * r(j, j)) - sigma(i, j) / std::sqrt(sigma(i, i) * sigma(j, j));
      sum += e * e;
    }
  out.srmr = std::sqrt(sum / (0.5 * static_cast<double>(p) * static_cast<double>(p + 1)));
  // A plain reading with the cut-offs of Hu & Bentler (1999): guides, not laws.
  auto side = [](double v, double cut, bool high_is_good) {
    return (high_is_good ? v >= cut : v <= cut) ? "within" : "outside";
  };
  if (out.df > 0.0)
    out.notes.push_back(fmt::format("read with the cut-offs of Hu & Bentler (1999): CFI {:.3f} ({} 0.95 or more), TLI "
                                    "{:.3f} ({} 0.95 or more), RMSEA {:.3f} ({} 0.06 or less), SRMR {:.3f} ({} 0.08 "
                                    "or less); they are guides, not laws",
                                    out.cfi, side(out.cfi, 0.95, true), out.tli, side(out.tli, 0.95, true), out.rmsea,
                                    side(out.rmsea, 0.06, false), out.srmr, side(out.srmr, 0.08, false)));
}

}  // namespace

void check_pattern(const Matrix& pattern, Index items, const std::vector<std::string>& names) {
  if (pattern.rows() != items)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the pattern has {} rows but there are {} items; it needs one row per item", pattern.rows(), items));
  if (pattern.cols() < 1) throw Error(ErrorCode::invalid_argument, "the pattern has no factors (no columns)");
  for (Index a = 0; a < pattern.rows(); ++a)
    for (Index f = 0; f < pattern.cols(); ++f)
      if (pattern(a, f) != 0.0 && pattern(a, f) != 1.0)
        throw Error(ErrorCode::invalid_argument,
                    fmt::format("the pattern may hold only 0 and 1; {} has {} for {}", item_label(names, a),
                                pattern(a, f), factor_name(f)));
  for (Index a = 0; a < items; ++a)
    if (pattern.row(a).sum() == 0.0)
      throw Error(ErrorCode::invalid_argument,
                  fmt::format("{} is on no factor in the pattern, so the model is not identified; give it a factor or "
                              "leave it out",
                              item_label(names, a)));
  for (Index f = 0; f < pattern.cols(); ++f) {
    const double n = pattern.col(f).sum();
    if (n < 2.0)
      throw Error(ErrorCode::invalid_argument,
                  fmt::format("{} has {} item{} in the pattern; a factor needs at least two items to be identified", factor_name(f),
                              n, n == 1.0 ? "" : "s"));
  }
  const Index k = pattern.cols();
  const double free = pattern.sum() + 0.5 * static_cast<double>(k * (k - 1)) + static_cast<double>(items);
  const double df = 0.5 * static_cast<double>(items * (items + 1)) - free;
  if (df < 0.0)
    throw Error(ErrorCode::too_many_factors,
                fmt::format("the pattern has {:.0f} free parameters for {} items, leaving negative degrees of freedom "
                            "({:.0f}); the model is not identified",
                            free, items, df));
}

SimpleStructure simple_structure(const Matrix& loadings, double cut) {
  SimpleStructure s;
  s.pattern = Matrix::Zero(loadings.rows(), loadings.cols());
  for (Index a = 0; a < loadings.rows(); ++a) {
    Index best = 0;
    const double top = loadings.row(a).cwiseAbs().maxCoeff(&best);
    if (top >= cut) s.pattern(a, best) = 1.0;
    else s.unassigned.push_back(a);
  }
  return s;
}

RestrictedFitResult fit_restricted(const Matrix& r_in, const Matrix& pattern, const RestrictedFitOptions& options) {
  const Matrix r = correlation_from_matrix(r_in, 0).matrix;
  const Index p = r.rows(), k = pattern.cols();
  check_pattern(pattern, p, options.item_names);
  // The Wishart likelihood of p items needs more than p respondents (the sample covariance matrix of
  // n <= p respondents is singular), as the hold-out check's parts do.
  if (options.n_obs <= p)
    throw Error(ErrorCode::insufficient_data,
                fmt::format("the restricted fit of {} items needs more than {} respondents behind the matrix; got {}", p,
                            p, options.n_obs));
  if (options.max_iterations < 1 || !(options.tolerance > 0.0) || !(options.min_uniqueness >= 0.0) ||
      !(options.interval_level > 0.0 && options.interval_level < 1.0))
    throw Error(ErrorCode::invalid_argument,
                "the restricted fit's options need at least one iteration, a positive tolerance, a non-negative "
                "uniqueness bound and an interval level strictly between 0 and 1");
  if (!is_positive_definite(r))
    throw Error(ErrorCode::not_positive_definite,
                "the maximum likelihood fit needs a positive-definite correlation matrix; this one is not (smooth it "
                "first)");
  const double log_det_r = log_determinant(r);

  Layout lay;
  lay.p = p;
  lay.k = k;
  for (Index f = 0; f < k; ++f)
    for (Index a = 0; a < p; ++a)
      if (pattern(a, f) != 0.0) lay.loadings.emplace_back(a, f);
  for (Index f = 0; f < k; ++f)
    for (Index g = f + 1; g < k; ++g) lay.phis.emplace_back(f, g);
  const Index q = lay.size();
  const double bound = options.min_uniqueness;

  Vector theta = start_values(lay, r, pattern);
  double value = discrepancy(lay, theta, r, log_det_r);
  RestrictedFitResult out;
  out.convergence.max_iterations = options.max_iterations;
  out.convergence.tolerance = options.tolerance;
  std::vector<Index> free;
  Derivatives d;
  for (int it = 0;; ++it) {
    d = derivatives(lay, theta, r);
    free.clear();
    double largest = 0.0;
    for (Index i = 0; i < q; ++i) {
      const bool held = i >= lay.psi_start() && theta(i) <= bound && d.gradient(i) > 0.0;
      if (!held) {
        free.push_back(i);
        largest = std::max(largest, std::abs(d.gradient(i)));
      }
    }
    out.convergence.iterations = it;
    out.convergence.final_change = largest;
    if (largest <= options.tolerance) {
      out.convergence.converged = true;
      break;
    }
    if (it >= options.max_iterations) break;
    const Vector step = search_direction(d, free);
    bool moved = false;
    for (double alpha = 1.0; alpha > 1e-10; alpha *= 0.5) {
      Vector trial = theta;
      for (std::size_t i = 0; i < free.size(); ++i) trial(free[i]) += alpha * step(static_cast<Index>(i));
      for (Index a = 0; a < p; ++a) trial(lay.psi_start() + a) = std::max(trial(lay.psi_start() + a), bound);
      const double tv = discrepancy(lay, trial, r, log_det_r);
      if (tv <= value) {
        moved = tv < value || (trial - theta).cwiseAbs().maxCoeff() > 0.0;
        theta = trial;
        value = tv;
        break;
      }
    }
    if (!moved) break;  // no step lowers F: at the optimum to rounding, or stuck (reported by the gradient)
  }
  if (!out.convergence.converged && out.convergence.final_change <= 1e3 * options.tolerance &&
      out.convergence.iterations < options.max_iterations)
    out.notes.push_back(fmt::format("no step lowered the discrepancy further; the largest gradient component is {:.2g} "
                                    "against the criterion {:.2g}",
                                    out.convergence.final_change, options.tolerance));

  const Params s = unpack(lay, theta);
  out.pattern = pattern;
  out.loadings = s.lambda;
  out.factor_correlations = s.phi;
  out.uniquenesses = s.psi;
  out.n_obs = options.n_obs;
  out.free_parameters = q;
  out.df = 0.5 * static_cast<double>(p * (p + 1)) - static_cast<double>(q);
  out.discrepancy = std::max(value, 0.0);
  const Matrix sigma = implied(s);
  fit_statistics(out, r, sigma, log_det_r, options.interval_level);

  // Standard errors: (2 / (N - 1)) times the inverse of F's Hessian over the parameters not held at a bound.
  out.loadings_se = Matrix::Constant(p, k, kNaN);
  out.factor_correlations_se = Matrix::Constant(k, k, kNaN);
  out.uniquenesses_se = Vector::Constant(p, kNaN);
  std::vector<Index> interior;
  for (Index i = 0; i < q; ++i)
    if (!(i >= lay.psi_start() && theta(i) <= bound)) interior.push_back(i);
  const auto ni = static_cast<Index>(interior.size());
  Matrix h(ni, ni);
  for (Index i = 0; i < ni; ++i)
    for (Index j = 0; j < ni; ++j) h(i, j) = d.observed(interior[static_cast<std::size_t>(i)], interior[static_cast<std::size_t>(j)]);
  Eigen::LLT<Matrix> hl(h);
  if (hl.info() == Eigen::Success) {
    const Vector var = hl.solve(Matrix::Identity(ni, ni)).diagonal() * (2.0 / (static_cast<double>(options.n_obs) - 1.0));
    for (Index c = 0; c < ni; ++c) {
      const Index i = interior[static_cast<std::size_t>(c)];
      const double se = std::sqrt(var(c));
      if (i < lay.phi_start()) {
        const auto [a, f] = lay.loadings[static_cast<std::size_t>(i)];
        out.loadings_se(a, f) = se;
      } else if (i < lay.psi_start()) {
        const auto [f, g] = lay.phis[static_cast<std::size_t>(i - lay.phi_start())];
        out.factor_correlations_se(f, g) = out.factor_correlations_se(g, f) = se;
      } else {
        out.uniquenesses_se(i - lay.psi_start()) = se;
      }
    }
  } else {
    out.notes.push_back("the information matrix is not positive definite at the estimate, so no standard errors are "
                        "given (the model may be empirically under-identified)");
  }

  for (Index a = 0; a < p; ++a) {
    const double communality = sigma(a, a) - s.psi(a);
    if (s.psi(a) <= bound)
      out.heywood.push_back({a, item_label(options.item_names, a), communality, s.psi(a), true});
  }
  if (!out.heywood.empty())
    out.notes.push_back(fmt::format("{} item{} reached the lower bound of the uniquenesses ({}): a Heywood case; the "
                                    "solution is improper there and its standard errors are left out",
                                    out.heywood.size(), out.heywood.size() == 1 ? "" : "s", bound));
  out.factor_correlations_proper = is_positive_definite(s.phi) && (s.phi.cwiseAbs().array() <= 1.0).all();
  if (!out.factor_correlations_proper)
    out.notes.push_back("the factor correlation matrix is not positive definite (a correlation at or beyond 1 in size): "
                        "the solution is improper, and two factors may be one");
  if (!out.convergence.converged)
    out.notes.push_back(fmt::format("the fit did not converge within {} iterations (largest gradient component {:.2g}, "
                                    "criterion {:.2g}); its numbers are not an optimum",
                                    options.max_iterations, out.convergence.final_change, options.tolerance));
  out.notes.push_back("standard errors treat the correlation matrix as a covariance matrix; for correlations they are "
                      "approximate (Cudeck 1989)");
  return out;
}

}  // namespace lode
