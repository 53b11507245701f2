// Factorability of a correlation matrix: Kaiser-Meyer-Olkin (Kaiser 1970, "A second generation little
// jiffy"; Kaiser & Rice 1974), Kaiser's (1974, "An index of factorial simplicity") verbal labels,
// Bartlett's (1950, "Tests of significance in factor analysis") test of sphericity.
#include "lode/factorability.hpp"
#include "positive_definite.hpp"

#include "lode/correlation.hpp"
#include "lode/distributions.hpp"

#include <fmt/format.h>

#include <cmath>
#include <limits>

namespace lode {

using detail::cholesky_or_fail;
using detail::smallest_eigenvalue_text;

namespace {

Matrix checked_matrix(const Matrix& r, const std::vector<std::string>& item_names = {}) {
  CorrelationOptions o;
  o.item_names = item_names;
  return correlation_from_matrix(r, 0, o).matrix;
}

}  // namespace

const char* kmo_label(double value) noexcept {
  if (std::isnan(value)) return "undefined";
  if (value >= 0.9) return "marvelous";
  if (value >= 0.8) return "meritorious";
  if (value >= 0.7) return "middling";
  if (value >= 0.6) return "mediocre";
  if (value >= 0.5) return "miserable";
  return "unacceptable";
}

double log_determinant(const Matrix& r) {
  const Eigen::LLT<Matrix> llt = cholesky_or_fail(
      r, "the matrix is not positive definite (smallest eigenvalue {}), so its log-determinant "
         "is undefined");
  const Matrix& l = llt.matrixLLT();
  double sum = 0.0;
  for (Index i = 0; i < r.rows(); ++i) sum += std::log(l(i, i));
  return 2.0 * sum;
}

KmoResult kaiser_meyer_olkin(const Matrix& r_in) {
  const Matrix r = checked_matrix(r_in);
  const Index p = r.rows();
  const Eigen::LLT<Matrix> llt = cholesky_or_fail(
      r, "the Kaiser-Meyer-Olkin measure needs the inverse of the correlation matrix, but the "
         "matrix is not positive definite (smallest eigenvalue {}); some items may be exact "
         "combinations of others, or the matrix needs smoothing");
  const Matrix q = llt.solve(Matrix::Identity(p, p));
  KmoResult out;
  out.per_item.resize(p);
  double sum_r2 = 0.0, sum_a2 = 0.0;
  for (Index i = 0; i < p; ++i) {
    double ri = 0.0, ai = 0.0;
    for (Index j = 0; j < p; ++j) {
      if (i == j) continue;
      const double a = -q(i, j) / std::sqrt(q(i, i) * q(j, j));  // anti-image (partial) correlation
      ri += r(i, j) * r(i, j);
      ai += a * a;
    }
    out.per_item(i) = ri / (ri + ai);
    sum_r2 += ri;
    sum_a2 += ai;
  }
  out.overall = sum_r2 / (sum_r2 + sum_a2);
  return out;
}

BartlettTest bartlett_sphericity(const Matrix& r_in, Index n_obs) {
  const Matrix r = checked_matrix(r_in);
  const Index p = r.rows();
  if (n_obs <= 0)
    throw Error(ErrorCode::insufficient_data,
                "Bartlett's test of sphericity needs the number of observations behind the correlation matrix, "
                "which is not known (n_obs = 0)");
  const double factor = static_cast<double>(n_obs) - 1.0 - (2.0 * static_cast<double>(p) + 5.0) / 6.0;
  if (!(factor > 0.0))
    throw Error(ErrorCode::insufficient_data,
                fmt::format("Bartlett's test of sphericity needs more than {:.2f} observations for {} items; the "
                            "matrix rests on {}",
                            1.0 + (2.0 * static_cast<double>(p) + 5.0) / 6.0, p, n_obs));
  const Eigen::LLT<Matrix> llt = cholesky_or_fail(
      r, "Bartlett's test of sphericity needs log|R|, but the correlation matrix is not positive "
         "definite (smallest eigenvalue {}); smooth it first");
  BartlettTest out;
  out.n_obs = n_obs;
  out.df = 0.5 * static_cast<double>(p) * static_cast<double>(p - 1);
  out.chi_square = -factor * log_determinant(r);
  out.p_value = chi_square_sf(out.chi_square, out.df);
  return out;
}

FactorabilityResult assess_factorability(const Matrix& r_in, Index n_obs, const std::vector<std::string>& item_names) {
  const Matrix r = checked_matrix(r_in, item_names);
  if (n_obs < 0)
    throw Error(ErrorCode::invalid_argument, fmt::format("the number of observations is negative ({})", n_obs));
  FactorabilityResult out;
  out.determinant = r.determinant();
  const bool pd = is_positive_definite(r);
  out.log_determinant = pd ? log_determinant(r) : std::numeric_limits<double>::quiet_NaN();
  if (pd) {
    out.kmo = kaiser_meyer_olkin(r);
    out.smc = squared_multiple_correlations(r);
    for (Index j = 0; j < r.rows(); ++j)
      if (out.kmo->per_item(j) < 0.5)
        out.notes.push_back(fmt::format("{} has a measure of sampling adequacy of {:.2f} ({}); consider leaving it out",
                                        item_label(item_names, j), out.kmo->per_item(j), kmo_label(out.kmo->per_item(j))));
  } else {
    out.notes.push_back(fmt::format(
        "the correlation matrix is not positive definite (smallest eigenvalue {}), so the Kaiser-Meyer-Olkin "
        "measure, squared multiple correlations and Bartlett's test are not available; smooth the matrix first",
        smallest_eigenvalue_text(r)));
  }
  if (n_obs == 0) {
    out.notes.push_back("Bartlett's test of sphericity needs the number of observations, which is not known");
  } else if (pd) {
    out.bartlett = bartlett_sphericity(r, n_obs);
  }
  return out;
}

}  // namespace lode
