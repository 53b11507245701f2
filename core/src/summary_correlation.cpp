// Correlations from a summary: Pearson from the pairwise moments, Spearman from the pair tables
// (midranks from each table's margins), polychoric from the pair tables through the same estimation
// as raw data. Each gives what correlation() gives from the rows the summary was made of.
#include "lode/summary.hpp"

#include "correlation_detail.hpp"
#include "polychoric_detail.hpp"
#include "summary_detail.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>

namespace lode {

namespace {

std::vector<std::string> names_for(const Summary& s, const CorrelationOptions& o) {
  return o.item_names.empty() ? s.item_names : o.item_names;
}

// The intake checks of validate_data, on what the summary kept (same messages).
void validate_summary(const Summary& s, const CorrelationOptions& o) {
  const Index p = s.items();
  if (o.missing == MissingPolicy::em)
    throw Error(ErrorCode::invalid_argument,
                "the em rule needs the respondents' rows; a summary keeps only sums over pairs of items: use pairwise "
                "or listwise deletion with a summary, or pass the rows");
  const bool listwise = o.missing == MissingPolicy::listwise;
  if (listwise != s.options.listwise)
    throw Error(ErrorCode::invalid_argument,
                s.options.listwise
                    ? "this summary holds complete rows only (listwise deletion): ask for listwise correlations"
                    : "listwise correlations need a summary built with listwise deletion (complete rows only); this "
                      "one keeps every answer (pairwise)");
  if (p < 3)
    throw Error(ErrorCode::insufficient_data,
                fmt::format("factor analysis needs at least 3 items (columns); the data have {}", p));
  if (s.rows_total < 3)
    throw Error(ErrorCode::insufficient_data, fmt::format("the data have {} rows; at least 3 are needed", s.rows_total));
  if (listwise && s.rows_complete < o.min_pair_observations)
    throw Error(ErrorCode::insufficient_data,
                fmt::format("only {} of {} rows survive listwise deletion (rows with every item answered); at "
                            "least {} are needed: use pairwise deletion or fewer items",
                            s.rows_complete, s.rows_total, o.min_pair_observations));
  for (Index j = 0; j < p; ++j) {
    if (s.n(j, j) < o.min_pair_observations)
      throw Error(ErrorCode::insufficient_data,
                  fmt::format("{} is answered in only {} of {} rows; at least {} are needed", item_label(o.item_names, j),
                              s.n(j, j), s.rows_total, o.min_pair_observations));
    if (s.m2(j, j) == 0.0)
      throw Error(ErrorCode::insufficient_data,
                  fmt::format("{} is constant (every answer is {}); remove it, it carries no information",
                              item_label(o.item_names, j), s.mean(j, j)));
  }
}

CorrelationResult base_result(const Summary& s, const CorrelationOptions& o) {
  const Index p = s.items();
  CorrelationResult r;
  r.kind = o.kind;
  r.missing = o.missing;
  r.report.rows_total = s.rows_total;
  r.report.rows_complete = s.rows_complete;
  r.report.rows_used = o.missing == MissingPolicy::listwise ? s.rows_complete : s.rows_any;
  r.report.missing_fraction =
      s.rows_total == 0 ? 0.0 : static_cast<double>(s.missing_cells) / (static_cast<double>(s.rows_total) * static_cast<double>(p));
  r.report.pair_counts = s.n;
  r.report.min_pair_count = s.n.minCoeff();
  return r;
}

void require_tables(const Summary& s, const CorrelationOptions& o, const char* what) {
  for (Index j = 0; j < s.items(); ++j)
    if (s.categories[static_cast<std::size_t>(j)].over_limit)
      throw Error(ErrorCode::invalid_argument,
                  fmt::format("{} has more than {} distinct values, so the summary keeps only its moments: Pearson "
                              "correlations work from them, but {} correlations need its category counts and pair "
                              "tables (build the summary with a higher max_categories, or use Pearson)",
                              item_label(o.item_names, j), s.options.max_categories, what));
}

Matrix pearson_of(const Summary& s) {
  const Index p = s.items();
  Matrix r = Matrix::Identity(p, p);
  for (Index j = 0; j < p; ++j)
    for (Index i = j + 1; i < p; ++i) {
      const double vi = s.m2(i, j), vj = s.m2(j, i);
      const double v = (vi > 0.0 && vj > 0.0) ? s.comoment(i, j) / std::sqrt(vi * vj)
                                              : std::numeric_limits<double>::quiet_NaN();
      r(i, j) = r(j, i) = std::clamp(v, -1.0, 1.0);
    }
  return r;
}

// Average ranks (1-based) of the categories of a margin: ties share the mean of their positions.
Vector midranks(const Vector& margin) {
  Vector out(margin.size());
  double before = 0.0;
  for (Index k = 0; k < margin.size(); ++k) {
    out(k) = before + 0.5 * (margin(k) + 1.0);
    before += margin(k);
  }
  return out;
}

// Spearman's coefficient of one pair from its table: Pearson's of the midranks, weighted by the cells.
double spearman_of_table(const Matrix& t) {
  const Vector ra = t.rowwise().sum(), cb = t.colwise().sum().transpose();
  const double n = t.sum();
  const double centre = 0.5 * (n + 1.0);
  const Vector da = midranks(ra).array() - centre, db = midranks(cb).array() - centre;
  const double saa = (ra.array() * da.array().square()).sum(), sbb = (cb.array() * db.array().square()).sum();
  const double sab = da.dot(t * db);
  if (saa <= 0.0 || sbb <= 0.0) return std::numeric_limits<double>::quiet_NaN();
  return std::clamp(sab / std::sqrt(saa * sbb), -1.0, 1.0);
}

}  // namespace

Matrix summary_table(const Summary& s, Index a, Index b) {
  const Index p = s.items();
  if (a < 0 || b < 0 || a >= p || b >= p || a == b || !detail::has_table(s, a, b))
    throw Error(ErrorCode::invalid_argument, fmt::format("the summary keeps no table for items {} and {}", a + 1, b + 1));
  const Index lo = std::min(a, b), hi = std::max(a, b);
  const auto& cells = s.tables[detail::pair_index(lo, hi, p)];
  const Index klo = static_cast<Index>(s.categories[static_cast<std::size_t>(lo)].values.size());
  const Index khi = static_cast<Index>(s.categories[static_cast<std::size_t>(hi)].values.size());
  Matrix t = Matrix::Zero(klo, khi);
  if (!cells.empty())
    for (Index r = 0; r < klo; ++r)
      for (Index c = 0; c < khi; ++c) t(r, c) = static_cast<double>(cells[static_cast<std::size_t>(r * khi + c)]);
  return a < b ? t : Matrix(t.transpose());
}

CorrelationResult correlation_from_summary(const Summary& s, const CorrelationOptions& options) {
  if (options.kind == CorrelationKind::polychoric) return polychoric_from_summary(s, options).correlation;
  CorrelationOptions o = options;
  o.item_names = names_for(s, options);
  validate_summary(s, o);
  CorrelationResult result = base_result(s, o);
  if (o.kind == CorrelationKind::pearson) {
    result.matrix = pearson_of(s);
  } else {
    require_tables(s, o, "Spearman");
    const Index p = s.items();
    result.matrix = Matrix::Identity(p, p);
    for (Index a = 0; a < p; ++a)
      for (Index b = a + 1; b < p; ++b) result.matrix(a, b) = result.matrix(b, a) = spearman_of_table(summary_table(s, a, b));
  }
  detail::check_pairs(result.matrix, result.report.pair_counts, o);
  result.n_obs = o.missing == MissingPolicy::listwise ? result.report.rows_used : result.report.min_pair_count;
  detail::finish(result, o);
  return result;
}

PolychoricResult polychoric_from_summary(const Summary& s, const CorrelationOptions& options) {
  CorrelationOptions o = options;
  o.kind = CorrelationKind::polychoric;
  o.item_names = names_for(s, options);
  detail::check_polychoric_options(o.polychoric);
  validate_summary(s, o);
  require_tables(s, o, "polychoric");
  const Index p = s.items();
  PolychoricResult result;
  for (Index j = 0; j < p; ++j) {
    const auto& cat = s.categories[static_cast<std::size_t>(j)];
    for (double v : cat.values)
      if (v != std::floor(v) || std::abs(v) > 1e9)
        throw Error(ErrorCode::invalid_argument,
                    fmt::format("{} holds the value {}; polychoric correlations need whole-number category codes "
                                "(such as 1 to 5)",
                                item_label(o.item_names, j), v));
    if (cat.values.size() > static_cast<std::size_t>(o.polychoric.max_categories))
      throw Error(ErrorCode::invalid_argument,
                  fmt::format("{} has {} distinct values (from {} to {}); polychoric correlations allow at most {} "
                              "categories: recode the item, raise the limit, or use Pearson correlations",
                              item_label(o.item_names, j), cat.values.size(), cat.values.front(), cat.values.back(),
                              o.polychoric.max_categories));
    result.categories.push_back(Eigen::Map<const Vector>(cat.values.data(), static_cast<Index>(cat.values.size())));
    Vector counts(static_cast<Index>(cat.counts.size()));
    for (std::size_t k = 0; k < cat.counts.size(); ++k) counts(static_cast<Index>(k)) = static_cast<double>(cat.counts[k]);
    result.thresholds.push_back(detail::polychoric_thresholds(counts));
  }
  result.correlation = base_result(s, o);
  detail::check_pairs(Matrix::Zero(p, p), result.correlation.report.pair_counts, o);
  detail::estimate_polychoric_pairs(result, [&](Index a, Index b) { return summary_table(s, a, b); }, o);
  return result;
}

}  // namespace lode
