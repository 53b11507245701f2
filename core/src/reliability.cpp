#include "lode/reliability.hpp"

#include "scaling.hpp"

#include "lode/correlation.hpp"

#include <fmt/format.h>

#include <cmath>
#include <limits>

namespace lode {

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// Raw alpha of a covariance matrix: k/(k-1) (1 - trace / total).
double alpha_of(const Matrix& s) {
  const auto k = static_cast<double>(s.rows());
  if (s.rows() < 2) return kNaN;
  return k / (k - 1.0) * (1.0 - s.trace() / s.sum());
}

// Standardised alpha of a correlation matrix: k rbar / (1 + (k-1) rbar).
double standardized_alpha_of(const Matrix& r, double* rbar_out = nullptr) {
  const auto k = static_cast<double>(r.rows());
  if (r.rows() < 2) return kNaN;
  const double rbar = (r.sum() - r.trace()) / (k * (k - 1.0));
  if (rbar_out) *rbar_out = rbar;
  return k * rbar / (1.0 + (k - 1.0) * rbar);
}

Matrix without(const Matrix& m, Index drop) {
  std::vector<Index> keep;
  for (Index j = 0; j < m.rows(); ++j)
    if (j != drop) keep.push_back(j);
  return m(keep, keep);
}

}  // namespace

double alpha_from_covariance(const Matrix& s) {
  if (s.rows() != s.cols() || s.rows() < 2)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("alpha needs a square matrix of at least 2 items, not {} x {}", s.rows(), s.cols()));
  if (!s.allFinite()) throw Error(ErrorCode::invalid_argument, "the covariance matrix contains a missing or infinite value");
  if ((s - s.transpose()).cwiseAbs().maxCoeff() > 1e-10 * std::max(1.0, s.cwiseAbs().maxCoeff()))
    throw Error(ErrorCode::invalid_argument, "the covariance matrix is not symmetric");
  for (Index j = 0; j < s.rows(); ++j)
    if (!(s(j, j) > 0.0))
      throw Error(ErrorCode::insufficient_data, fmt::format("{} has variance {}; alpha needs positive variances",
                                                            item_label({}, j), s(j, j)));
  if (!(s.sum() > 0.0))
    throw Error(ErrorCode::insufficient_data, "the variance of the total score is not positive; alpha is undefined");
  return alpha_of(s);
}

AlphaResult cronbach_alpha(const Matrix& data, const AlphaOptions& options) {
  const auto& names = options.item_names;
  const Index n = data.rows(), k = data.cols();
  if (k < 2) throw Error(ErrorCode::insufficient_data, fmt::format("alpha needs at least 2 items; the scale has {}", k));
  std::vector<Index> rows;
  for (Index i = 0; i < n; ++i) {
    bool complete = true;
    for (Index j = 0; j < k; ++j) {
      if (std::isinf(data(i, j)))
        throw Error(ErrorCode::invalid_argument,
                    fmt::format("{} has an infinite value in row {}", item_label(names, j), i + 1));
      if (std::isnan(data(i, j))) complete = false;
    }
    if (complete) rows.push_back(i);
  }
  const auto m = static_cast<Index>(rows.size());
  if (m < 3)
    throw Error(ErrorCode::insufficient_data,
                fmt::format("alpha needs at least 3 rows with every item of the scale answered; {} of {} rows are "
                            "complete",
                            m, n));
  // Alpha is free of a common scale: the answers are brought to a largest magnitude in [1, 2) by a
  // power of two first (exact), so that sums of squares stay inside double precision; the item
  // means and SDs are scaled back.
  const double scale = detail::power_of_two_scale(detail::largest_magnitude(data(rows, Eigen::all)));
  const Matrix x = data(rows, Eigen::all) * scale;
  const Matrix centred = x.rowwise() - x.colwise().mean();
  const Matrix s = centred.transpose() * centred / static_cast<double>(m - 1);
  for (Index j = 0; j < k; ++j)
    if (!(s(j, j) > 0.0))
      throw Error(ErrorCode::insufficient_data,
                  fmt::format("{} is constant over the {} complete rows; alpha cannot use it", item_label(names, j), m));
  const Vector sd = s.diagonal().cwiseSqrt();
  const Matrix r = sd.cwiseInverse().asDiagonal() * s * sd.cwiseInverse().asDiagonal();

  AlphaResult out;
  out.rows_total = n;
  out.rows_used = m;
  out.items = k;
  out.alpha = alpha_of(s);
  out.alpha_standardized = standardized_alpha_of(r, &out.mean_inter_item_correlation);
  out.item_means = x.colwise().mean().transpose() / scale;
  out.item_sds = sd / scale;
  out.alpha_if_deleted.resize(k);
  out.alpha_standardized_if_deleted.resize(k);
  out.item_total_correlation.resize(k);
  for (Index j = 0; j < k; ++j) {
    const Matrix sj = without(s, j);
    out.alpha_if_deleted(j) = alpha_of(sj);
    out.alpha_standardized_if_deleted(j) = standardized_alpha_of(without(r, j));
    // cov(x_j, rest) = row sum of S minus the variance; var(rest) = sum of S without item j.
    const double cov = s.row(j).sum() - s(j, j);
    const double var_rest = sj.sum();
    out.item_total_correlation(j) = var_rest > 0.0 ? cov / std::sqrt(s(j, j) * var_rest) : kNaN;
  }

  if (m < n)
    out.notes.push_back(fmt::format("{} of {} rows had a missing item of this scale and were left out (listwise "
                                    "deletion within the scale).",
                                    n - m, n));
  for (Index j = 0; j < k; ++j) {
    if (out.item_total_correlation(j) < 0.0)
      out.notes.push_back(fmt::format("{} correlates negatively ({:.2f}) with the rest of the scale: check whether it "
                                      "must be reverse-scored.",
                                      item_label(names, j), out.item_total_correlation(j)));
    if (k > 2 && out.alpha_if_deleted(j) > out.alpha)
      out.notes.push_back(fmt::format("Alpha rises from {:.3f} to {:.3f} without {}.", out.alpha,
                                      out.alpha_if_deleted(j), item_label(names, j)));
  }
  if (out.alpha < 0.0)
    out.notes.push_back("Alpha is negative: the items correlate negatively on average; some probably need "
                        "reverse-scoring.");
  return out;
}

OmegaResult omega_from_loadings(const Matrix& loadings, const Vector& uniquenesses, const OmegaOptions& options) {
  const auto& names = options.item_names;
  const Index p = loadings.rows(), k = loadings.cols();
  if (p == 0 || k == 0) throw Error(ErrorCode::invalid_argument, "the loading matrix is empty");
  if (uniquenesses.size() != p)
    throw Error(ErrorCode::invalid_argument, fmt::format("there are {} uniquenesses for {} items", uniquenesses.size(), p));
  for (Index i = 0; i < p; ++i) {
    for (Index j = 0; j < k; ++j)
      if (!std::isfinite(loadings(i, j)))
        throw Error(ErrorCode::invalid_argument,
                    fmt::format("the loading of {} on factor {} is missing or infinite", item_label(names, i), j + 1));
    if (!std::isfinite(uniquenesses(i)))
      throw Error(ErrorCode::invalid_argument,
                  fmt::format("the uniqueness of {} is missing or infinite", item_label(names, i)));
  }
  OmegaResult out;
  if (!options.assignment.empty()) {
    if (static_cast<Index>(options.assignment.size()) != p)
      throw Error(ErrorCode::invalid_argument,
                  fmt::format("the scale assignment lists {} items, but the loadings have {}", options.assignment.size(), p));
    for (Index i = 0; i < p; ++i) {
      const Index f = options.assignment[static_cast<std::size_t>(i)];
      if (f < -1 || f >= k)
        throw Error(ErrorCode::invalid_argument,
                    fmt::format("{} is assigned to factor {}, but there are {} factors", item_label(names, i), f + 1, k));
    }
    out.assignment = options.assignment;
    out.notes.push_back("Items were assigned to scales as given.");
  } else {
    out.assignment.resize(static_cast<std::size_t>(p));
    for (Index i = 0; i < p; ++i) loadings.row(i).cwiseAbs().maxCoeff(&out.assignment[static_cast<std::size_t>(i)]);
    if (k > 1)
      out.notes.push_back("Each item was assigned to the scale of the factor on which it has its largest absolute "
                          "loading.");
  }
  const Matrix& phi_in = options.factor_correlations;
  if (phi_in.size() != 0) {
    if (phi_in.rows() != k || phi_in.cols() != k)
      throw Error(ErrorCode::invalid_argument, fmt::format("the factor correlations are {} x {} for {} factors",
                                                           phi_in.rows(), phi_in.cols(), k));
    if (!phi_in.allFinite())
      throw Error(ErrorCode::invalid_argument, "the factor correlations contain a missing or infinite value");
  }
  const Matrix phi = phi_in.size() != 0 ? phi_in : Matrix(Matrix::Identity(k, k));
  // Reverse-keyed items enter with their rows of loadings reversed (D Lambda; see OmegaOptions).
  if (!options.reverse_keyed.empty() && static_cast<Index>(options.reverse_keyed.size()) != p)
    throw Error(ErrorCode::invalid_argument, fmt::format("the reverse-keyed flags list {} items, but the loadings have {}",
                                                         options.reverse_keyed.size(), p));
  out.reversed.assign(static_cast<std::size_t>(p), false);
  Matrix keyed = loadings;
  std::string reversed_list;
  for (Index i = 0; i < p; ++i) {
    const auto u = static_cast<std::size_t>(i);
    const Index f = out.assignment[u];
    const bool negative = f >= 0 && loadings(i, f) < 0.0;
    out.reversed[u] = (!options.reverse_keyed.empty() && options.reverse_keyed[u]) ||
                      (options.reverse_negative_loaders && negative);
    if (!out.reversed[u]) continue;
    keyed.row(i) = -keyed.row(i);
    reversed_list += (reversed_list.empty() ? "" : ", ") + item_label(names, i);
  }
  if (!reversed_list.empty())
    out.notes.push_back(fmt::format("Reverse-scored in their scales: {}; omega uses their loadings reversed, as a "
                                    "refit to the reverse-scored answers gives them.",
                                    reversed_list));
  for (Index f = 0; f < k; ++f) {
    ScaleOmega sc;
    sc.factor = f;
    Vector lambda_sum = Vector::Zero(k);  // Lambda_S' 1: the scale's loadings on every factor, summed
    for (Index i = 0; i < p; ++i)
      if (out.assignment[static_cast<std::size_t>(i)] == f) {
        sc.items.push_back(i);
        sc.sum_loadings += keyed(i, f);
        sc.sum_uniquenesses += uniquenesses(i);
        lambda_sum += keyed.row(i).transpose();
        if (keyed(i, f) < 0.0)
          out.notes.push_back(fmt::format("{} loads negatively ({:.2f}) on factor {}: omega sums loadings as they are; "
                                          "reverse-score the item if the scale score is to add it.",
                                          item_label(names, i), keyed(i, f), f + 1));
        if (uniquenesses(i) <= 0.0)
          out.notes.push_back(fmt::format("{} has a uniqueness of {:.3f} (a Heywood case): omega for factor {} is "
                                          "overstated.",
                                          item_label(names, i), uniquenesses(i), f + 1));
      }
    const double common = lambda_sum.dot(phi * lambda_sum);  // 1' Lambda_S Phi Lambda_S' 1
    sc.scale_variance = common + sc.sum_uniquenesses;          // 1' Sigma_SS 1
    sc.omega = sc.items.empty() ? kNaN : common / sc.scale_variance;
    sc.factor_share = sc.items.empty() ? kNaN : sc.sum_loadings * sc.sum_loadings / sc.scale_variance;
    if (sc.items.empty())
      out.notes.push_back(fmt::format("No item was assigned to factor {}; it has no scale and no omega.", f + 1));
    else if (sc.items.size() < 3)
      out.notes.push_back(fmt::format("The scale of factor {} has only {} item(s); omega from so few items is fragile.",
                                      f + 1, sc.items.size()));
    out.scales.push_back(std::move(sc));
  }
  if (k > 1)
    out.notes.push_back("Omega total is the share of the variance of a scale's sum (as the model implies it) that all "
                        "the common factors explain, the scale items' loadings on other factors and the factor "
                        "correlations included; the factor's share is the part due to the scale's own factor alone, "
                        "(sum of the items' loadings on it)^2 over the same variance.");
  return out;
}

SingleScaleOmega omega_single_scale(const Matrix& correlation, const ExtractionOptions& options) {
  if (options.method == ExtractionMethod::principal_components)
    throw Error(ErrorCode::invalid_argument,
                "omega needs a common factor fit with uniquenesses; principal components estimate none");
  const ExtractionResult e = extract_factors(correlation, 1, options);
  SingleScaleOmega out;
  out.loadings = e.loadings.col(0);
  if (out.loadings.sum() < 0.0) out.loadings = -out.loadings;
  out.uniquenesses = e.uniquenesses;
  out.method = e.method;
  out.convergence = e.convergence;
  OmegaOptions oo;
  oo.item_names = options.item_names;
  const OmegaResult om = omega_from_loadings(out.loadings, out.uniquenesses, oo);
  out.omega = om.scales.at(0).omega;
  out.notes.push_back(fmt::format("Omega from a one-factor {} fit of {} items.", to_string(e.method), correlation.rows()));
  if (!e.convergence.converged)
    out.notes.push_back(fmt::format("The one-factor fit did not converge within {} iterations (last change {:.3g}); "
                                    "omega is provisional.",
                                    e.convergence.max_iterations, e.convergence.final_change));
  for (const auto& n : e.notes) out.notes.push_back(n);
  for (const auto& n : om.notes) out.notes.push_back(n);
  return out;
}

}  // namespace lode
