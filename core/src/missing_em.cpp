#include "lode/missing_em.hpp"

#include "correlation_detail.hpp"

#include "lode/correlation.hpp"
#include "lode/parallel.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>

namespace lode {

namespace {

// Rows are handled in fixed blocks, each with its own sums, added in block order: the result does not
// depend on the thread count.
constexpr Index kBlockRows = 4096;

// The answered items of each row in a compact form: for row t, the missing items are
// missing[start[t] .. start[t + 1]).
struct Patterns {
  std::vector<Index> start;
  std::vector<Index> missing;
};

struct BlockSums {
  Matrix cross;  // filled rows' cross-products plus the conditional covariances (lower triangle)
  Vector sum;    // filled rows' sums
};

// One E step over rows [begin, end): fills the missing entries of z by their conditional means given
// the row's answers, mu and the precision matrix k = sigma^-1 (for the normal, x_M | x_O has
// covariance (K_MM)^-1 and mean mu_M - (K_MM)^-1 K_MO (x_O - mu_O)), and adds the block's
// cross-products and conditional covariances.
void expect_block(Matrix& z, const Patterns& pat, Index begin, Index end, const Vector& mu, const Matrix& k,
                  BlockSums& out) {
  const Index p = z.cols();
  out.cross = Matrix::Zero(p, p);
  out.sum = Vector::Zero(p);
  Vector d(p);
  for (Index t = begin; t < end; ++t) {
    const Index s0 = pat.start[static_cast<std::size_t>(t)], s1 = pat.start[static_cast<std::size_t>(t + 1)];
    const Index q = s1 - s0;
    if (q == 0) continue;
    const Index* m = pat.missing.data() + s0;
    d = z.row(t).transpose() - mu;
    for (Index a = 0; a < q; ++a) d(m[a]) = 0.0;
    Matrix kmm(q, q);
    Vector rhs(q);
    for (Index a = 0; a < q; ++a) {
      rhs(a) = k.col(m[a]).dot(d);  // k is symmetric
      for (Index b = 0; b < q; ++b) kmm(a, b) = k(m[a], m[b]);
    }
    const Eigen::LLT<Matrix> llt(kmm);  // a principal block of a positive-definite matrix
    const Matrix cov = llt.solve(Matrix::Identity(q, q));
    const Vector shift = cov * rhs;
    for (Index a = 0; a < q; ++a) {
      z(t, m[a]) = mu(m[a]) - shift(a);
      for (Index b = 0; b <= a; ++b) {
        const Index i = std::max(m[a], m[b]), j = std::min(m[a], m[b]);
        out.cross(i, j) += cov(a, b);
      }
    }
  }
  const auto rows = z.middleRows(begin, end - begin);
  out.cross.selfadjointView<Eigen::Lower>().rankUpdate(rows.transpose());
  out.sum = rows.colwise().sum().transpose();
}

void check_columns(const Matrix& x, const std::vector<std::string>& names, Vector& centre, Vector& scale) {
  const Index n = x.rows(), p = x.cols();
  centre.resize(p);
  scale.resize(p);
  for (Index j = 0; j < p; ++j) {
    double sum = 0.0;
    Index count = 0;
    for (Index i = 0; i < n; ++i) {
      const double v = x(i, j);
      if (std::isnan(v)) continue;
      if (!std::isfinite(v))
        throw Error(ErrorCode::invalid_argument, fmt::format("{} holds an infinite value in row {}", item_label(names, j), i + 1));
      sum += v;
      ++count;
    }
    if (count < 2)
      throw Error(ErrorCode::insufficient_data,
                  fmt::format("{} is answered in only {} rows; the EM estimate needs at least 2", item_label(names, j), count));
    const double mean = sum / static_cast<double>(count);
    double ss = 0.0;
    for (Index i = 0; i < n; ++i)
      if (!std::isnan(x(i, j))) ss += (x(i, j) - mean) * (x(i, j) - mean);
    if (!(ss > 0.0))
      throw Error(ErrorCode::insufficient_data,
                  fmt::format("{} is constant in its answers; remove it, it carries no information", item_label(names, j)));
    centre(j) = mean;
    scale(j) = std::sqrt(ss / static_cast<double>(count));
  }
}

}  // namespace

// EM for the multivariate normal with data missing at random (Dempster, Laird & Rubin 1977; Little &
// Rubin 2002, 11.2.1). Works on the items standardised by their observed means and standard deviations
// and starts from their observed means and variances with zero covariances (positive definite).
EmEstimate em_estimate(const Matrix& data, const EmOptions& options, const std::vector<std::string>& item_names) {
  if (!(options.tolerance > 0.0) || !std::isfinite(options.tolerance))
    throw Error(ErrorCode::invalid_argument, fmt::format("the EM tolerance must be positive; it is {}", options.tolerance));
  if (options.max_iterations < 1)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the EM iteration cap must be at least 1; it is {}", options.max_iterations));
  const Index p = data.cols();
  if (p < 1) throw Error(ErrorCode::invalid_argument, "the data have no items");
  Vector centre, scale;
  check_columns(data, item_names, centre, scale);

  // Rows with at least one answer, standardised, and their missing items.
  std::vector<Index> used;
  for (Index i = 0; i < data.rows(); ++i)
    if (!data.row(i).array().isNaN().all()) used.push_back(i);
  const auto m = static_cast<Index>(used.size());
  if (m < 2) throw Error(ErrorCode::insufficient_data, fmt::format("only {} rows hold an answer; the EM estimate needs at least 2", m));
  Matrix z(m, p);
  Patterns pat;
  pat.start.reserve(static_cast<std::size_t>(m + 1));
  pat.start.push_back(0);
  for (Index t = 0; t < m; ++t) {
    for (Index j = 0; j < p; ++j) {
      const double v = data(used[static_cast<std::size_t>(t)], j);
      if (std::isnan(v)) {
        pat.missing.push_back(j);
        z(t, j) = 0.0;
      } else {
        z(t, j) = (v - centre(j)) / scale(j);
      }
    }
    pat.start.push_back(static_cast<Index>(pat.missing.size()));
  }

  EmEstimate est;
  est.rows_used = m;
  est.convergence.max_iterations = options.max_iterations;
  est.convergence.tolerance = options.tolerance;
  Vector mu = Vector::Zero(p);           // observed means of standardised items
  Matrix sigma = Matrix::Identity(p, p);  // observed variances, zero covariances
  const Index blocks = (m + kBlockRows - 1) / kBlockRows;
  std::vector<BlockSums> sums(static_cast<std::size_t>(blocks));
  const int threads = pat.missing.empty() ? 1 : options.threads;
  for (int it = 1; it <= options.max_iterations; ++it) {
    if (options.progress && !options.progress(it - 1, options.max_iterations))
      throw Error(ErrorCode::cancelled, "the EM estimate was cancelled");
    const Eigen::LLT<Matrix> llt(sigma);
    if (llt.info() != Eigen::Success)
      throw Error(ErrorCode::not_positive_definite,
                  fmt::format("the EM estimate of the covariance matrix became singular at iteration {}: some items are "
                              "(almost) exact linear combinations of others; drop one of them",
                              it));
    const Matrix k = llt.solve(Matrix::Identity(p, p));
    parallel_for(blocks, threads, [&](Index b) {
      const Index begin = b * kBlockRows, end = std::min(m, begin + kBlockRows);
      expect_block(z, pat, begin, end, mu, k, sums[static_cast<std::size_t>(b)]);
    });
    Matrix cross = Matrix::Zero(p, p);
    Vector sum = Vector::Zero(p);
    for (const auto& s : sums) {
      cross += s.cross;
      sum += s.sum;
    }
    const Vector mu_new = sum / static_cast<double>(m);
    Matrix sigma_new = cross / static_cast<double>(m);
    sigma_new.selfadjointView<Eigen::Lower>().rankUpdate(mu_new, -1.0);
    sigma_new = sigma_new.selfadjointView<Eigen::Lower>();
    const double change = std::max((mu_new - mu).cwiseAbs().maxCoeff(), (sigma_new - sigma).cwiseAbs().maxCoeff());
    mu = mu_new;
    sigma = sigma_new;
    est.convergence.iterations = it;
    est.convergence.final_change = change;
    if (change <= options.tolerance) {
      est.convergence.converged = true;
      break;
    }
  }
  if (options.progress && !options.progress(options.max_iterations, options.max_iterations))
    throw Error(ErrorCode::cancelled, "the EM estimate was cancelled");
  est.means = centre + scale.cwiseProduct(mu);
  est.covariance.resize(p, p);
  for (Index j = 0; j < p; ++j)
    for (Index i = j; i < p; ++i) est.covariance(i, j) = est.covariance(j, i) = scale(i) * sigma(i, j) * scale(j);
  return est;
}

namespace detail {

// The em rule: Pearson correlations from the EM estimate of the covariance matrix (missing_em.hpp), the
// pair counts as they are, and every row with an answer as the sample size.
void correlation_by_em(const Matrix& data, const CorrelationOptions& options, CorrelationResult& result) {
  EmOptions eo = options.em;
  eo.threads = options.threads;
  result.em = em_estimate(data, eo, options.item_names);
  const Vector inv_sd = result.em.covariance.diagonal().cwiseSqrt().cwiseInverse();
  result.matrix = inv_sd.asDiagonal() * result.em.covariance * inv_sd.asDiagonal();
  result.matrix.diagonal().setOnes();
  result.report.rows_used = result.em.rows_used;
  const Convergence& c = result.em.convergence;
  if (c.converged)
    result.notes.push_back(fmt::format(
        "correlations estimated by EM under the assumption that answers are missing at random, from the {} rows with "
        "at least one answer (converged in {} iterations)",
        result.em.rows_used, c.iterations));
  else
    result.notes.push_back(fmt::format(
        "the EM estimate did not converge in {} iterations (largest last change {:.3g}, criterion {:.3g}); its "
        "correlations are provisional",
        c.iterations, c.final_change, c.tolerance));
}

}  // namespace detail

}  // namespace lode
