// Fit of a factor solution. The likelihood-ratio chi-square with Bartlett's (1950) correction
// (Lawley & Maxwell 1971, section 4.6), RMSEA (Steiger & Lind 1980) with the interval of Browne &
// Cudeck (1993) by inverting the noncentral chi-square, the Tucker-Lewis (1973) index against the
// zero-factor model, and BIC in the chi-square form chi2 - df ln n (Raftery 1995).
#include "lode/fit.hpp"
#include "positive_definite.hpp"

#include "lode/correlation.hpp"
#include "lode/distributions.hpp"
#include "lode/extraction.hpp"
#include "lode/factorability.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>

namespace lode {

using detail::cholesky_or_fail;
using detail::smallest_eigenvalue_text;

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

void check_shapes(const Matrix& r, const Matrix& loadings, const Vector& uniquenesses) {
  if (r.rows() != r.cols())
    throw Error(ErrorCode::invalid_argument,
                fmt::format("a correlation matrix must be square; this one is {} x {}", r.rows(), r.cols()));
  if (loadings.rows() != r.rows() || uniquenesses.size() != r.rows())
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the solution does not match the matrix: {} items, {} rows of loadings, {} uniquenesses",
                            r.rows(), loadings.rows(), uniquenesses.size()));
  if (loadings.cols() < 1)
    throw Error(ErrorCode::invalid_argument, "the solution has no factors (the loadings have no columns)");
  if (!loadings.allFinite() || !uniquenesses.allFinite())
    throw Error(ErrorCode::invalid_argument, "the loadings or uniquenesses hold a missing or infinite value");
}

}  // namespace

ResidualFit residual_fit(const Matrix& r, const Matrix& loadings, const Vector& uniquenesses) {
  check_shapes(r, loadings, uniquenesses);
  const Index p = r.rows();
  ResidualFit out;
  out.residuals = r - implied_correlation(loadings, uniquenesses);
  double sum = 0.0, largest = 0.0;
  for (Index j = 0; j < p; ++j)
    for (Index i = j + 1; i < p; ++i) {
      const double e = out.residuals(i, j);
      sum += e * e;
      largest = std::max(largest, std::abs(e));
    }
  const double pairs = 0.5 * static_cast<double>(p) * static_cast<double>(p - 1);
  out.rmsr = pairs > 0 ? std::sqrt(sum / pairs) : 0.0;
  out.max_abs_residual = largest;
  return out;
}

double ml_discrepancy(const Matrix& r, const Matrix& implied) {
  if (r.rows() != implied.rows() || r.cols() != implied.cols() || r.rows() != r.cols())
    throw Error(ErrorCode::invalid_argument, "the ML discrepancy needs two square matrices of the same size");
  const Eigen::LLT<Matrix> ls = cholesky_or_fail(
      implied, "the model-implied correlation matrix is not positive definite (smallest eigenvalue {}); "
               "the likelihood-based fit is undefined (are some uniquenesses zero or negative?)");
  double log_det_s = 0.0;
  for (Index i = 0; i < implied.rows(); ++i) log_det_s += 2.0 * std::log(ls.matrixLLT()(i, i));
  const double trace = ls.solve(r).trace();
  return log_det_s - log_determinant(r) + trace - static_cast<double>(r.rows());
}

FitResult assess_fit(const Matrix& r_in, const Matrix& loadings, const Vector& uniquenesses, Index n_obs,
                     const FitOptions& options) {
  const Matrix r = correlation_from_matrix(r_in, 0).matrix;
  check_shapes(r, loadings, uniquenesses);
  const Index p = r.rows();
  const int k = static_cast<int>(loadings.cols());
  if (!(options.interval_level > 0.0 && options.interval_level < 1.0))
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the level of the RMSEA interval must lie strictly between 0 and 1; got {}", options.interval_level));
  if (n_obs < 0) throw Error(ErrorCode::invalid_argument, fmt::format("the number of observations is negative ({})", n_obs));
  if (n_obs == 0)
    throw Error(ErrorCode::insufficient_data,
                "the chi-square test, RMSEA, Tucker-Lewis index and BIC need the number of observations behind the "
                "correlation matrix, which is not known (n_obs = 0); the residual correlations and their root mean "
                "square need none");
  FitResult out;
  out.n_obs = n_obs;
  out.items = p;
  out.factors = k;
  out.df = factor_model_df(p, k);
  if (out.df < 0.0) {
    const int most = max_identified_factors(p);
    throw Error(ErrorCode::too_many_factors,
                fmt::format("{} factors for {} items leave negative degrees of freedom ({}); {} items can identify at "
                            "most {} factor{}",
                            k, p, out.df, p, most, most == 1 ? "" : "s"));
  }
  const double n = static_cast<double>(n_obs);
  const double multiplier = n - 1.0 - (2.0 * p + 5.0) / 6.0 - 2.0 * k / 3.0;
  if (!(multiplier > 0.0))
    throw Error(ErrorCode::insufficient_data,
                fmt::format("too few observations for the chi-square test: {} items and {} factors need more than {:.2f} "
                            "observations; the matrix rests on {}",
                            p, k, 1.0 + (2.0 * p + 5.0) / 6.0 + 2.0 * k / 3.0, n_obs));
  if (!is_positive_definite(r))
    throw Error(ErrorCode::not_positive_definite,
                fmt::format("the chi-square, RMSEA, Tucker-Lewis index and BIC need a positive-definite correlation "
                            "matrix, but this one's smallest eigenvalue is {}; smooth it first",
                            smallest_eigenvalue_text(r)));
  out.residual = residual_fit(r, loadings, uniquenesses);
  // F >= 0 mathematically; rounding can leave a tiny negative value at an exact fit.
  out.discrepancy = std::max(ml_discrepancy(r, implied_correlation(loadings, uniquenesses)), 0.0);
  out.chi_square = multiplier * out.discrepancy;
  out.null_df = 0.5 * static_cast<double>(p) * static_cast<double>(p - 1);
  out.null_chi_square = -(n - 1.0 - (2.0 * p + 5.0) / 6.0) * log_determinant(r);
  out.bic = out.chi_square - out.df * std::log(n);
  if (out.df > 0.0) {
    out.p_value = chi_square_sf(out.chi_square, out.df);
    const double scale = out.df * (n - 1.0);
    out.rmsea = std::sqrt(std::max(out.chi_square - out.df, 0.0) / scale);
    const double tail = 0.5 * (1.0 - options.interval_level);
    out.rmsea_lower = std::sqrt(noncentrality_for_cdf(out.chi_square, out.df, 1.0 - tail) / scale);
    out.rmsea_upper = std::sqrt(noncentrality_for_cdf(out.chi_square, out.df, tail) / scale);
    const double null_ratio = out.null_chi_square / out.null_df;
    out.tli = (null_ratio - out.chi_square / out.df) / (null_ratio - 1.0);
  } else {
    out.p_value = out.rmsea = out.rmsea_lower = out.rmsea_upper = out.tli = kNaN;
    out.notes.push_back(fmt::format("{} factors for {} items leave no degrees of freedom: the model is just identified, "
                                    "so the chi-square test, RMSEA and Tucker-Lewis index are undefined",
                                    k, p));
  }
  return out;
}

}  // namespace lode
