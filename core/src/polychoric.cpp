#include "lode/polychoric.hpp"

#include "correlation_detail.hpp"
#include "polychoric_detail.hpp"
#include "lode/bivariate_normal.hpp"
#include "lode/parallel.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <limits>
#include <optional>
#include <string>
#include <vector>

namespace lode {

namespace {

constexpr double kInf = std::numeric_limits<double>::infinity();
constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

void check_options(const PolychoricOptions& o) {
  if (o.max_categories < 2 || o.max_categories > 100)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("max_categories must be between 2 and 100 (it is {})", o.max_categories));
  if (!(o.max_abs_correlation > 0.0 && o.max_abs_correlation < 1.0))
    throw Error(ErrorCode::invalid_argument,
                fmt::format("max_abs_correlation must lie strictly between 0 and 1 (it is {})", o.max_abs_correlation));
  if (!(o.zero_cell_add >= 0.0) || !std::isfinite(o.zero_cell_add))
    throw Error(ErrorCode::invalid_argument,
                fmt::format("zero_cell_add must be a finite number >= 0 (it is {})", o.zero_cell_add));
  if (!(o.tolerance > 0.0) || o.max_iterations < 1)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the tolerance must be positive and max_iterations at least 1 (they are {} and {})",
                            o.tolerance, o.max_iterations));
}

// Normal quantiles of the cumulative proportions of `counts` (all but the last, which is 1).
Vector thresholds_of(const Vector& counts) {
  const double total = counts.sum();
  Vector t(counts.size() - 1);
  double cum = 0.0;
  for (Index i = 0; i + 1 < counts.size(); ++i) {
    cum += counts(i);
    // Upper half from the complement, which is exact there.
    t(i) = cum <= 0.5 * total ? normal_quantile(cum / total) : -normal_quantile((total - cum) / total);
  }
  return t;
}

// The log-likelihood of a table and its first two derivatives in rho, thresholds fixed.
struct LogLikelihood {
  double value = 0.0, d1 = 0.0, d2 = 0.0;
};

class TableLikelihood {
 public:
  TableLikelihood(const Matrix& weights, const Vector& a, const Vector& b) : w_(weights), r_(weights.rows()), c_(weights.cols()) {
    ah_.resize(static_cast<std::size_t>(r_ + 1));
    bh_.resize(static_cast<std::size_t>(c_ + 1));
    ah_.front() = -kInf;
    ah_.back() = kInf;
    bh_.front() = -kInf;
    bh_.back() = kInf;
    for (Index i = 0; i < a.size(); ++i) ah_[static_cast<std::size_t>(i + 1)] = a(i);
    for (Index j = 0; j < b.size(); ++j) bh_[static_cast<std::size_t>(j + 1)] = b(j);
    const std::size_t cells = static_cast<std::size_t>((r_ + 1) * (c_ + 1));
    f_.assign(cells, 0.0);
    d_.assign(cells, 0.0);
    e_.assign(cells, 0.0);
    // The rho-free edges of the grid: Phi2(a_i, +inf) = Phi(a_i), Phi2(+inf, b_j) = Phi(b_j).
    for (Index i = 1; i <= r_; ++i) f_[at(i, c_)] = normal_cdf(ah_[static_cast<std::size_t>(i)]);
    for (Index j = 1; j <= c_; ++j) f_[at(r_, j)] = normal_cdf(bh_[static_cast<std::size_t>(j)]);
  }

  LogLikelihood operator()(double rho) {
    const double s = (1.0 - rho) * (1.0 + rho);
    // Interior grid points: the CDF (Genz 2004), its derivative in rho (the density; Plackett 1954)
    // and the second derivative d(phi2)/d(rho) = phi2 * (rho (1 - Q) + h k) / (1 - rho^2), where
    // Q = (h^2 - 2 rho h k + k^2) / (1 - rho^2).
    for (Index i = 1; i < r_; ++i)
      for (Index j = 1; j < c_; ++j) {
        const double h = ah_[static_cast<std::size_t>(i)], k = bh_[static_cast<std::size_t>(j)];
        const double q = (h * h - 2.0 * rho * h * k + k * k) / s;
        const double dens = bivariate_normal_density(h, k, rho);
        f_[at(i, j)] = bivariate_normal_cdf(h, k, rho);
        d_[at(i, j)] = dens;
        e_[at(i, j)] = dens * (rho * (1.0 - q) + h * k) / s;
      }
    LogLikelihood out;
    for (Index i = 1; i <= r_; ++i)
      for (Index j = 1; j <= c_; ++j) {
        const double wij = w_(i - 1, j - 1);
        if (wij <= 0.0) continue;
        const double p = std::max(cell(f_, i, j), 1e-300);
        const double dp = cell(d_, i, j), ddp = cell(e_, i, j);
        const double g = dp / p;
        out.value += wij * std::log(p);
        out.d1 += wij * g;
        out.d2 += wij * (ddp / p - g * g);
      }
    return out;
  }

 private:
  std::size_t at(Index i, Index j) const { return static_cast<std::size_t>(i * (c_ + 1) + j); }
  double cell(const std::vector<double>& g, Index i, Index j) const {
    return g[at(i, j)] - g[at(i - 1, j)] - g[at(i, j - 1)] + g[at(i - 1, j - 1)];
  }

  const Matrix& w_;
  Index r_, c_;
  std::vector<double> ah_, bh_, f_, d_, e_;
};

// Pearson correlation of the category ranks in a table: a cheap, attenuated start for rho.
double table_pearson(const Matrix& w) {
  const double n = w.sum();
  double mx = 0, my = 0;
  for (Index i = 0; i < w.rows(); ++i)
    for (Index j = 0; j < w.cols(); ++j) {
      mx += w(i, j) * static_cast<double>(i);
      my += w(i, j) * static_cast<double>(j);
    }
  mx /= n;
  my /= n;
  double sxx = 0, syy = 0, sxy = 0;
  for (Index i = 0; i < w.rows(); ++i)
    for (Index j = 0; j < w.cols(); ++j) {
      const double dx = static_cast<double>(i) - mx, dy = static_cast<double>(j) - my;
      sxx += w(i, j) * dx * dx;
      syy += w(i, j) * dy * dy;
      sxy += w(i, j) * dx * dy;
    }
  return (sxx > 0 && syy > 0) ? sxy / std::sqrt(sxx * syy) : 0.0;
}

struct Fit {
  double rho = 0.0;
  double information = kNaN;  // -d2 at the estimate
  bool at_bound = false;
  Convergence convergence;
};

// Maximises the log-likelihood over [-bound, bound]: Newton steps with analytic derivatives, kept
// inside a bracket on the sign of the score and replaced by bisection when they leave it or when the
// curvature is not negative.
Fit maximise(const Matrix& weights, const Vector& a, const Vector& b, const PolychoricOptions& o) {
  TableLikelihood loglik(weights, a, b);
  const double bound = o.max_abs_correlation;
  double lo = -bound, hi = bound;
  double rho = std::clamp(table_pearson(weights), -0.9 * bound, 0.9 * bound);
  Fit fit;
  fit.convergence.max_iterations = o.max_iterations;
  fit.convergence.tolerance = o.tolerance;
  LogLikelihood last;
  bool last_is_current = false;  // `last` was evaluated at the final rho (or within tolerance of it)
  for (int it = 1; it <= o.max_iterations; ++it) {
    const LogLikelihood l = loglik(rho);
    last = l;
    fit.convergence.iterations = it;
    if (l.d1 == 0.0) {
      fit.convergence.final_change = 0.0;
      fit.convergence.converged = true;
      last_is_current = true;
      break;
    }
    if (l.d1 > 0.0) lo = rho;
    else hi = rho;
    double next = 0.5 * (lo + hi);
    if (l.d2 < 0.0 && std::isfinite(l.d2)) {
      const double step = -l.d1 / l.d2;
      if (std::abs(step) < o.tolerance) {  // converged; the step may be below rounding of rho
        fit.convergence.final_change = std::abs(step);
        fit.convergence.converged = true;
        rho = std::clamp(rho + step, -bound, bound);
        last_is_current = true;
        break;
      }
      if (rho + step > lo && rho + step < hi) next = rho + step;
    }
    const double change = std::abs(next - rho);
    rho = next;
    fit.convergence.final_change = change;
    if (change < o.tolerance) {
      fit.convergence.converged = true;
      break;
    }
  }
  const LogLikelihood l = last_is_current ? last : loglik(rho);
  // A maximum on the edge: the score still points outward there, or (empty cells that a perfect
  // correlation fits exactly leave the likelihood flat near the edge) the edge is as likely.
  bool edge = std::abs(rho) >= bound - 1e-6 && l.d1 * rho > 0.0;
  if (!edge && std::abs(rho) > 0.9 * bound) {
    const double side = rho > 0.0 ? bound : -bound;
    edge = loglik(side).value >= l.value - 1e-10 * std::max(1.0, std::abs(l.value));
  }
  if (edge) {
    fit.at_bound = true;
    rho = rho > 0.0 ? bound : -bound;
  } else {
    fit.information = -l.d2;
  }
  fit.rho = rho;
  return fit;
}

// Estimate for a table whose rows and columns are all non-empty (at least 2 of each).
PolychoricPair estimate_table(const Matrix& table, const PolychoricOptions& o) {
  PolychoricPair out;
  out.rows = table.rows();
  out.cols = table.cols();
  out.n = static_cast<Index>(std::llround(table.sum()));
  out.thresholds_a = thresholds_of(table.rowwise().sum());
  out.thresholds_b = thresholds_of(table.colwise().sum().transpose());
  out.empty_cells = (table.array() == 0.0).count();
  Matrix corrected = table;
  for (Index j = 0; j < table.cols(); ++j)
    for (Index i = 0; i < table.rows(); ++i)
      if (table(i, j) == 0.0) corrected(i, j) = o.zero_cell_add;
  const bool correct_always = o.zero_cells == ZeroCellPolicy::always && out.empty_cells > 0 && o.zero_cell_add > 0.0;
  Fit fit = maximise(correct_always ? corrected : table, out.thresholds_a, out.thresholds_b, o);
  out.zero_cell_corrected = correct_always;
  if (fit.at_bound && o.zero_cells == ZeroCellPolicy::at_bound && out.empty_cells > 0 && o.zero_cell_add > 0.0) {
    fit = maximise(corrected, out.thresholds_a, out.thresholds_b, o);
    out.zero_cell_corrected = true;
  }
  out.rho = fit.rho;
  out.at_bound = fit.at_bound;
  out.convergence = fit.convergence;
  out.standard_error = (!fit.at_bound && fit.information > 0.0) ? 1.0 / std::sqrt(fit.information) : kNaN;
  return out;
}

// Drops empty rows and columns of a table.
Matrix drop_empty(const Matrix& counts) {
  std::vector<Index> rows, cols;
  for (Index i = 0; i < counts.rows(); ++i)
    if (counts.row(i).sum() > 0.0) rows.push_back(i);
  for (Index j = 0; j < counts.cols(); ++j)
    if (counts.col(j).sum() > 0.0) cols.push_back(j);
  Matrix t(static_cast<Index>(rows.size()), static_cast<Index>(cols.size()));
  for (std::size_t i = 0; i < rows.size(); ++i)
    for (std::size_t j = 0; j < cols.size(); ++j)
      t(static_cast<Index>(i), static_cast<Index>(j)) = counts(rows[i], cols[j]);
  return t;
}

std::string pair_list(const std::vector<PolychoricPair>& pairs, const std::vector<std::string>& names, bool (*pick)(const PolychoricPair&)) {
  std::string out;
  int shown = 0, total = 0;
  for (const auto& p : pairs) {
    if (!pick(p)) continue;
    ++total;
    if (shown < 5) {
      out += fmt::format("{}{} and {}", shown > 0 ? "; " : "", item_label(names, p.item_a), item_label(names, p.item_b));
      ++shown;
    }
  }
  if (total > shown) out += fmt::format("; and {} more", total - shown);
  return out;
}

}  // namespace

std::vector<Vector> detect_categories(const Matrix& data, const CorrelationOptions& options) {
  check_options(options.polychoric);
  const int cap = options.polychoric.max_categories;
  std::vector<Vector> out;
  out.reserve(static_cast<std::size_t>(data.cols()));
  for (Index j = 0; j < data.cols(); ++j) {
    std::vector<double> values;
    for (Index i = 0; i < data.rows(); ++i) {
      const double v = data(i, j);
      if (std::isnan(v)) continue;
      if (!std::isfinite(v))
        throw Error(ErrorCode::invalid_argument,
                    fmt::format("{} holds an infinite value in row {}", item_label(options.item_names, j), i + 1));
      if (v != std::floor(v) || std::abs(v) > 1e9)
        throw Error(ErrorCode::invalid_argument,
                    fmt::format("{} holds the value {} in row {}; polychoric correlations need whole-number category "
                                "codes (such as 1 to 5)",
                                item_label(options.item_names, j), v, i + 1));
      values.push_back(v);
    }
    std::sort(values.begin(), values.end());
    values.erase(std::unique(values.begin(), values.end()), values.end());
    if (values.size() < 2)
      throw Error(ErrorCode::insufficient_data,
                  values.empty()
                      ? fmt::format("{} has no answers", item_label(options.item_names, j))
                      : fmt::format("{} has a single category ({}); polychoric correlations need at least 2",
                                    item_label(options.item_names, j), values.front()));
    if (values.size() > static_cast<std::size_t>(cap))
      throw Error(ErrorCode::invalid_argument,
                  fmt::format("{} has {} distinct values (from {} to {}); polychoric correlations allow at most {} "
                              "categories: recode the item, raise the limit, or use Pearson correlations",
                              item_label(options.item_names, j), values.size(), values.front(), values.back(), cap));
    out.push_back(Eigen::Map<const Vector>(values.data(), static_cast<Index>(values.size())));
  }
  return out;
}

PolychoricPair polychoric_from_table(const Matrix& counts, const PolychoricOptions& options) {
  check_options(options);
  for (Index j = 0; j < counts.cols(); ++j)
    for (Index i = 0; i < counts.rows(); ++i)
      if (!std::isfinite(counts(i, j)) || counts(i, j) < 0.0)
        throw Error(ErrorCode::invalid_argument,
                    fmt::format("the contingency table holds {} at row {}, column {}; counts must be finite and >= 0",
                                counts(i, j), i + 1, j + 1));
  const Matrix table = drop_empty(counts);
  if (table.rows() < 2 || table.cols() < 2)
    throw Error(ErrorCode::insufficient_data,
                fmt::format("the contingency table has {} non-empty row(s) and {} non-empty column(s); a polychoric "
                            "correlation needs at least 2 of each",
                            table.rows(), table.cols()));
  PolychoricPair out = estimate_table(table, options);
  out.item_a = 0;
  out.item_b = 1;
  return out;
}

PolychoricResult polychoric_correlation(const Matrix& data, const CorrelationOptions& options) {
  const PolychoricOptions& po = options.polychoric;
  check_options(po);
  validate_data(data, options);
  const std::vector<Vector> categories = detect_categories(data, options);
  const Index n = data.rows(), p = data.cols();

  using Mask = Eigen::Array<bool, Eigen::Dynamic, Eigen::Dynamic>;
  const Mask present = data.array().isNaN() == false;
  std::vector<Index> complete;
  for (Index i = 0; i < n; ++i)
    if (present.row(i).all()) complete.push_back(i);

  PolychoricResult result;
  CorrelationResult& cr = result.correlation;
  cr.kind = CorrelationKind::polychoric;
  cr.missing = options.missing;
  cr.report.rows_total = n;
  cr.report.rows_complete = static_cast<Index>(complete.size());
  cr.report.missing_fraction = 1.0 - present.cast<double>().mean();

  // The rows that take part: listwise, the complete ones; pairwise, all (each pair skips its gaps).
  std::vector<Index> used;
  const bool listwise = options.missing == MissingPolicy::listwise;
  if (listwise) {
    used = complete;
    if (complete.size() != static_cast<std::size_t>(n)) {
      // Listwise deletion can leave an item constant.
      Matrix kept(static_cast<Index>(complete.size()), p);
      for (std::size_t k = 0; k < complete.size(); ++k) kept.row(static_cast<Index>(k)) = data.row(complete[k]);
      CorrelationOptions check = options;
      check.missing = MissingPolicy::pairwise;
      validate_data(kept, check);
    }
  } else {
    for (Index i = 0; i < n; ++i)
      if (present.row(i).any()) used.push_back(i);
  }
  const Index m = static_cast<Index>(used.size());
  cr.report.rows_used = m;

  // Category index of every used row and item (-1 = missing), item-major.
  std::vector<std::int16_t> code(static_cast<std::size_t>(m * p), -1);
  result.categories = categories;
  result.thresholds.resize(static_cast<std::size_t>(p));
  for (Index j = 0; j < p; ++j) {
    const Vector& cats = categories[static_cast<std::size_t>(j)];
    Vector margin = Vector::Zero(cats.size());
    for (Index k = 0; k < m; ++k) {
      const double v = data(used[static_cast<std::size_t>(k)], j);
      if (std::isnan(v)) continue;
      const auto pos = std::lower_bound(cats.data(), cats.data() + cats.size(), v) - cats.data();
      code[static_cast<std::size_t>(j * m + k)] = static_cast<std::int16_t>(pos);
      margin(pos) += 1.0;
    }
    // Categories absent from the used rows (listwise) are left out of the item's thresholds.
    std::vector<double> nonempty;
    for (Index c = 0; c < margin.size(); ++c)
      if (margin(c) > 0.0) nonempty.push_back(margin(c));
    result.thresholds[static_cast<std::size_t>(j)] =
        thresholds_of(Eigen::Map<const Vector>(nonempty.data(), static_cast<Index>(nonempty.size())));
  }

  // Pair counts, checked before any estimation.
  {
    Matrix mask(m, p);
    for (Index j = 0; j < p; ++j)
      for (Index k = 0; k < m; ++k) mask(k, j) = code[static_cast<std::size_t>(j * m + k)] >= 0 ? 1.0 : 0.0;
    cr.report.pair_counts = (mask.transpose() * mask).array().round().cast<Index>();
    cr.report.min_pair_count = cr.report.pair_counts.minCoeff();
    detail::check_pairs(Matrix::Zero(p, p), cr.report.pair_counts, options);
  }

  detail::estimate_polychoric_pairs(
      result,
      [&](Index a, Index b) {
        Matrix counts = Matrix::Zero(categories[static_cast<std::size_t>(a)].size(),
                                     categories[static_cast<std::size_t>(b)].size());
        const std::int16_t* ca = code.data() + a * m;
        const std::int16_t* cb = code.data() + b * m;
        for (Index k = 0; k < m; ++k)
          if (ca[k] >= 0 && cb[k] >= 0) counts(ca[k], cb[k]) += 1.0;
        return counts;
      },
      options);
  return result;
}

namespace detail {

Vector polychoric_thresholds(const Vector& counts) { return thresholds_of(counts); }

void check_polychoric_options(const PolychoricOptions& options) { check_options(options); }

void estimate_polychoric_pairs(PolychoricResult& result, const std::function<Matrix(Index, Index)>& table_of,
                               const CorrelationOptions& options) {
  const PolychoricOptions& po = options.polychoric;
  CorrelationResult& cr = result.correlation;
  const Index p = static_cast<Index>(result.thresholds.size());
  const Index n_pairs = p * (p - 1) / 2;
  std::vector<std::pair<Index, Index>> index;
  index.reserve(static_cast<std::size_t>(n_pairs));
  for (Index a = 0; a < p; ++a)
    for (Index b = a + 1; b < p; ++b) index.emplace_back(a, b);
  result.pairs.resize(static_cast<std::size_t>(n_pairs));
  std::vector<std::optional<Error>> failures(static_cast<std::size_t>(n_pairs));

  parallel_for(
      n_pairs, options.threads,
      [&](Index u) {
        const auto [a, b] = index[static_cast<std::size_t>(u)];
        const Matrix table = drop_empty(table_of(a, b));
        if (table.rows() < 2 || table.cols() < 2) {
          const bool a_single = table.rows() < 2;
          failures[static_cast<std::size_t>(u)] = Error(
              ErrorCode::insufficient_data,
              fmt::format("in the rows where {} and {} are both answered, {} has a single category, so their "
                          "polychoric correlation is undefined (try listwise deletion or drop one of them)",
                          item_label(options.item_names, a), item_label(options.item_names, b),
                          item_label(options.item_names, a_single ? a : b)));
          return;
        }
        PolychoricPair est = estimate_table(table, po);
        est.item_a = a;
        est.item_b = b;
        result.pairs[static_cast<std::size_t>(u)] = std::move(est);
      },
      po.progress);
  for (auto& f : failures)
    if (f) throw *f;

  result.estimates = Matrix::Identity(p, p);
  result.standard_errors = Matrix::Zero(p, p);
  for (const auto& pr : result.pairs) {
    result.estimates(pr.item_a, pr.item_b) = result.estimates(pr.item_b, pr.item_a) = pr.rho;
    result.standard_errors(pr.item_a, pr.item_b) = result.standard_errors(pr.item_b, pr.item_a) = pr.standard_error;
    if (!pr.convergence.converged) ++result.pairs_not_converged;
    if (pr.at_bound) ++result.pairs_at_bound;
    if (pr.zero_cell_corrected) ++result.pairs_zero_cell_corrected;
  }
  cr.matrix = result.estimates;
  cr.n_obs = options.missing == MissingPolicy::listwise ? cr.report.rows_used : cr.report.min_pair_count;

  cr.notes.push_back(
      "polychoric correlations (two-step: thresholds from each pair's margins, then the maximum-likelihood "
      "correlation); chi-square tests and fit indices that assume normally distributed items are approximate here");
  if (result.pairs_zero_cell_corrected > 0)
    cr.notes.push_back(fmt::format(
        "{} pair(s) had {} added to each empty cell of their table for the estimate ({}): {}",
        result.pairs_zero_cell_corrected, po.zero_cell_add,
        po.zero_cells == ZeroCellPolicy::always ? "applied to every table with an empty cell"
                                                : "otherwise the estimate runs to a perfect correlation",
        pair_list(result.pairs, options.item_names, [](const PolychoricPair& q) { return q.zero_cell_corrected; })));
  if (result.pairs_at_bound > 0)
    cr.notes.push_back(fmt::format(
        "{} pair(s) reached the bound |r| = {} (empty cells make a perfect correlation most likely); their "
        "standard errors are undefined: {}",
        result.pairs_at_bound, po.max_abs_correlation,
        pair_list(result.pairs, options.item_names, [](const PolychoricPair& q) { return q.at_bound; })));
  if (result.pairs_not_converged > 0)
    cr.notes.push_back(fmt::format(
        "{} pair(s) did not converge within {} iterations: {}", result.pairs_not_converged, po.max_iterations,
        pair_list(result.pairs, options.item_names, [](const PolychoricPair& q) { return !q.convergence.converged; })));
  finish(cr, options);
}

}  // namespace detail

Matrix resample_categories(const Matrix& data, RandomEngine& engine, Index rows) {
  const Index n = data.rows(), p = data.cols();
  if (n == 0 || p == 0) throw Error(ErrorCode::invalid_argument, "there are no data to resample");
  // A uniform integer in [0, bound) by rejection (unbiased, the same on every platform).
  auto uniform_below = [&engine](std::uint64_t bound) {
    const std::uint64_t limit = std::numeric_limits<std::uint64_t>::max() - std::numeric_limits<std::uint64_t>::max() % bound;
    for (;;) {
      const std::uint64_t x = engine();
      if (x < limit) return static_cast<Index>(x % bound);
    }
  };
  if (rows < 0 || rows == n) {
    Matrix out = data;
    for (Index j = 0; j < p; ++j)
      for (Index i = n - 1; i > 0; --i) std::swap(out(i, j), out(uniform_below(static_cast<std::uint64_t>(i + 1)), j));
    return out;
  }
  Matrix out(rows, p);
  for (Index j = 0; j < p; ++j) {
    std::vector<double> answered;
    for (Index i = 0; i < n; ++i)
      if (!std::isnan(data(i, j))) answered.push_back(data(i, j));
    if (answered.empty())
      throw Error(ErrorCode::insufficient_data, fmt::format("column {} has no answers to resample", j + 1));
    for (Index i = 0; i < rows; ++i) out(i, j) = answered[static_cast<std::size_t>(uniform_below(answered.size()))];
  }
  return out;
}

}  // namespace lode
