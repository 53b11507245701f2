#include "lode/schmid_leiman.hpp"

#include "lode/correlation.hpp"

#include <fmt/format.h>

#include <cmath>
#include <limits>

namespace lode {

namespace {

void check_inputs(const Matrix& l, const Matrix& phi, const SchmidLeimanOptions& o) {
  const Index k = l.cols();
  if (k < 3)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the Schmid-Leiman transformation needs an oblique solution with at least 3 factors; this "
                            "one has {}",
                            k));
  if (phi.rows() != k || phi.cols() != k)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the factor correlations are {} x {}; the loadings have {} factors", phi.rows(), phi.cols(), k));
  if (!l.allFinite() || !phi.allFinite())
    throw Error(ErrorCode::invalid_argument, "the loadings or factor correlations hold a missing or infinite value");
  if (l.rows() < k)
    throw Error(ErrorCode::invalid_argument, fmt::format("{} items cannot carry {} factors", l.rows(), k));
  double largest = 0.0;
  for (Index a = 0; a < k; ++a)
    for (Index b = 0; b < k; ++b) {
      if (a == b && std::abs(phi(a, a) - 1.0) > 1e-8)
        throw Error(ErrorCode::invalid_argument,
                    fmt::format("factor {} has correlation {} with itself; the diagonal must be 1", a + 1, phi(a, a)));
      if (a != b) largest = std::max(largest, std::abs(phi(a, b)));
    }
  if (largest < 1e-12)
    throw Error(ErrorCode::invalid_argument,
                "the factors are uncorrelated (an orthogonal rotation): there is no general factor behind them; use an "
                "oblique rotation");
  if (!o.assignment.empty() && static_cast<Index>(o.assignment.size()) != l.rows())
    throw Error(ErrorCode::invalid_argument, fmt::format("the assignment names {} items; the loadings have {}",
                                                         o.assignment.size(), l.rows()));
  for (Index f : o.assignment)
    if (f < -1 || f >= k)
      throw Error(ErrorCode::invalid_argument,
                  fmt::format("the assignment names factor {} of {} (use -1 for none)", f + 1, k));
}

std::vector<Index> largest_loading_assignment(const Matrix& l) {
  std::vector<Index> a(static_cast<std::size_t>(l.rows()));
  for (Index i = 0; i < l.rows(); ++i) l.row(i).cwiseAbs().maxCoeff(&a[static_cast<std::size_t>(i)]);
  return a;
}

}  // namespace

// Schmid & Leiman (1957): the second-order loadings carry each factor's share of the general factor
// down to the items; the rest of each factor (sqrt of its second-order uniqueness) stays a group factor.
SchmidLeimanResult schmid_leiman(const Matrix& l, const Matrix& phi, const SchmidLeimanOptions& options) {
  check_inputs(l, phi, options);
  const Index p = l.rows(), k = l.cols();
  ExtractionOptions eo;
  eo.method = options.second_order;
  eo.max_iterations = options.max_iterations;
  eo.tolerance = options.tolerance;
  const Matrix sym = 0.5 * (phi + phi.transpose());
  const ExtractionResult second = extract_factors(sym, 1, eo);

  SchmidLeimanResult r;
  r.second_order_loadings = second.loadings.col(0);
  r.second_order_uniquenesses = (Vector::Ones(k) - r.second_order_loadings.cwiseAbs2()).cwiseMax(0.0);
  r.second_order_convergence = second.convergence;
  Matrix implied = r.second_order_loadings * r.second_order_loadings.transpose();
  r.second_order_max_residual = 0.0;
  for (Index a = 0; a < k; ++a)
    for (Index b = 0; b < a; ++b) r.second_order_max_residual = std::max(r.second_order_max_residual, std::abs(sym(a, b) - implied(a, b)));
  r.general = l * r.second_order_loadings;
  r.group = l * r.second_order_uniquenesses.cwiseSqrt().asDiagonal();
  r.uniquenesses = Vector::Ones(p) - r.general.cwiseAbs2() - r.group.rowwise().squaredNorm();
  r.assignment = options.assignment.empty() ? largest_loading_assignment(l) : options.assignment;

  // Whole scale.
  double common = std::pow(r.general.sum(), 2);
  const double general_part = common;
  for (Index f = 0; f < k; ++f) common += std::pow(r.group.col(f).sum(), 2);
  const double total = common + r.uniquenesses.sum();
  r.omega_total = common / total;
  r.omega_hierarchical = general_part / total;
  const double g2 = r.general.squaredNorm(), b2 = r.group.squaredNorm();
  r.ecv = g2 / (g2 + b2);
  // Subscales.
  r.omega_subscales = Vector::Constant(k, std::numeric_limits<double>::quiet_NaN());
  r.subscale_omega_total = r.omega_subscales;
  for (Index f = 0; f < k; ++f) {
    std::vector<Index> items;
    for (Index i = 0; i < p; ++i)
      if (r.assignment[static_cast<std::size_t>(i)] == f) items.push_back(i);
    if (items.empty()) {
      r.notes.push_back(fmt::format("no item is assigned to factor {}; it has no subscale omega", f + 1));
      continue;
    }
    double sub_common = std::pow(r.general(items).sum(), 2);
    for (Index h = 0; h < k; ++h) sub_common += std::pow(r.group(items, h).sum(), 2);
    const double sub_total = sub_common + r.uniquenesses(items).sum();
    r.omega_subscales(f) = std::pow(r.group(items, f).sum(), 2) / sub_total;
    r.subscale_omega_total(f) = sub_common / sub_total;
  }

  if (!second.convergence.converged)
    r.notes.push_back(fmt::format("the second-order fit did not converge in {} iterations; the general factor is provisional",
                                  second.convergence.iterations));
  for (const auto& h : second.heywood)
    r.notes.push_back(fmt::format("factor {} loads {:.3f} on the general factor (a Heywood case of the second-order "
                                  "fit): it is almost the general factor itself",
                                  h.item + 1, r.second_order_loadings(h.item)));
  if (r.second_order_max_residual > 0.05)
    r.notes.push_back(fmt::format("one general factor reproduces the factor correlations only roughly (largest "
                                  "residual {:.3f}); the general and group loadings then describe that approximation",
                                  r.second_order_max_residual));
  for (Index i = 0; i < p; ++i)
    if (r.uniquenesses(i) < 0.0)
      r.notes.push_back(fmt::format("{} has a negative uniqueness ({:.3f}) after the transformation (a Heywood case)",
                                    item_label(options.item_names, i), r.uniquenesses(i)));
  return r;
}

}  // namespace lode
