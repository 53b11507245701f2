// Mergeable summaries: building them from rows, merging (Chan, Golub & LeVeque 1979) and checks.
// The byte form is in summary_bytes.cpp, correlations from a summary in summary_correlation.cpp.
#include "lode/summary.hpp"

#include "summary_detail.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <cstdint>

namespace lode {

namespace {

constexpr Index kBlockRows = 4096;

// Moments of one block about the pair means, by matrix products over the presence mask, each column
// first shifted by its first answered value (exact zeros for a constant column, small sums otherwise).
struct BlockMoments {
  IndexMatrix n;
  Matrix mean, m2, comoment;
};

BlockMoments block_moments(const Matrix& x) {
  const Index rows = x.rows(), p = x.cols();
  Vector shift = Vector::Zero(p);
  for (Index j = 0; j < p; ++j)
    for (Index i = 0; i < rows; ++i)
      if (!std::isnan(x(i, j))) {
        shift(j) = x(i, j);
        break;
      }
  Matrix present(rows, p), z(rows, p);
  for (Index j = 0; j < p; ++j)
    for (Index i = 0; i < rows; ++i) {
      const bool here = !std::isnan(x(i, j));
      present(i, j) = here ? 1.0 : 0.0;
      z(i, j) = here ? x(i, j) - shift(j) : 0.0;
    }
  const Matrix count = present.transpose() * present;
  const Matrix s = z.transpose() * present;                             // s(i, j): sum of z_i where i and j answered
  const Matrix q = z.array().square().matrix().transpose() * present;  // sums of squares, same rows
  const Matrix c = z.transpose() * z;                                   // products where both answered
  BlockMoments b;
  b.n = count.array().round().cast<Index>();
  b.mean = Matrix::Zero(p, p);
  b.m2 = Matrix::Zero(p, p);
  b.comoment = Matrix::Zero(p, p);
  for (Index j = 0; j < p; ++j)
    for (Index i = 0; i < p; ++i) {
      const Index k = b.n(i, j);
      if (k == 0) continue;
      const double nk = static_cast<double>(k);
      b.mean(i, j) = shift(i) + s(i, j) / nk;
      b.m2(i, j) = std::max(0.0, q(i, j) - s(i, j) * s(i, j) / nk);
      b.comoment(i, j) = i == j ? b.m2(i, j) : c(i, j) - s(i, j) * s(j, i) / nk;
    }
  return b;
}

// The pairwise update of Chan, Golub & LeVeque (1979), entry by entry: (n, mean, m2, comoment) of `into`
// becomes that of the union of both sets of rows.
void merge_moments(IndexMatrix& n, Matrix& mean, Matrix& m2, Matrix& comoment, const IndexMatrix& nb,
                   const Matrix& meanb, const Matrix& m2b, const Matrix& comomentb) {
  const Index p = n.rows();
  for (Index j = 0; j < p; ++j)
    for (Index i = 0; i < p; ++i) {
      const Index na = n(i, j), nbij = nb(i, j);
      if (nbij == 0) continue;
      if (na == 0) {
        n(i, j) = nbij;
        mean(i, j) = meanb(i, j);
        m2(i, j) = m2b(i, j);
        comoment(i, j) = comomentb(i, j);
        continue;
      }
      const double total = static_cast<double>(na + nbij);
      const double weight = static_cast<double>(na) * static_cast<double>(nbij) / total;
      const double di = meanb(i, j) - mean(i, j), dj = meanb(j, i) - mean(j, i);
      m2(i, j) += m2b(i, j) + di * di * weight;
      comoment(i, j) += comomentb(i, j) + (i == j ? di * di : di * dj) * weight;
      n(i, j) = na + nbij;
    }
  // Means last: the comoment above needs both old means of the pair.
  for (Index j = 0; j < p; ++j)
    for (Index i = 0; i < p; ++i) {
      const Index nbij = nb(i, j);
      const Index na = n(i, j) - nbij;
      if (nbij == 0 || na == 0) continue;
      mean(i, j) += (meanb(i, j) - mean(i, j)) * static_cast<double>(nbij) / static_cast<double>(n(i, j));
    }
}

// The categories of `other` joined into `into` (both sorted); returns where each old value went.
std::vector<std::size_t> join_values(std::vector<double>& into, const std::vector<double>& other) {
  std::vector<double> joined;
  std::set_union(into.begin(), into.end(), other.begin(), other.end(), std::back_inserter(joined));
  std::vector<std::size_t> where(into.size());
  for (std::size_t k = 0; k < into.size(); ++k)
    where[k] = static_cast<std::size_t>(std::lower_bound(joined.begin(), joined.end(), into[k]) - joined.begin());
  into = std::move(joined);
  return where;
}

// Widens table (a, b) from the old category counts to the new ones, moving cells to their new places.
std::vector<std::int64_t> remap_table(const std::vector<std::int64_t>& table, std::size_t old_cols,
                                      const std::vector<std::size_t>& rows_to, const std::vector<std::size_t>& cols_to,
                                      std::size_t new_rows, std::size_t new_cols) {
  std::vector<std::int64_t> out(new_rows * new_cols, 0);
  for (std::size_t r = 0; r < rows_to.size(); ++r)
    for (std::size_t c = 0; c < cols_to.size(); ++c) out[rows_to[r] * new_cols + cols_to[c]] = table[r * old_cols + c];
  return out;
}

}  // namespace

namespace detail {

std::size_t pair_index(Index a, Index b, Index p) {
  return static_cast<std::size_t>(a * p - a * (a + 1) / 2 + (b - a - 1));
}

bool has_table(const Summary& s, Index a, Index b) {
  return !s.categories[static_cast<std::size_t>(a)].over_limit && !s.categories[static_cast<std::size_t>(b)].over_limit;
}

// Joins new category values into every item (dropping the counts of items that pass the limit) and
// widens the tables to match.
void join_categories(Summary& s, const std::vector<std::vector<double>>& seen, const std::vector<bool>& over) {
  const Index p = s.items();
  std::vector<std::vector<std::size_t>> where(static_cast<std::size_t>(p));
  std::vector<std::size_t> old_size(static_cast<std::size_t>(p));
  for (Index j = 0; j < p; ++j) {
    auto& cat = s.categories[static_cast<std::size_t>(j)];
    const auto uj = static_cast<std::size_t>(j);
    old_size[uj] = cat.values.size();
    if (cat.over_limit) continue;
    if (over[uj]) {
      cat = SummaryCategories{true, {}, {}};
      continue;
    }
    const std::vector<double> old = cat.values;
    where[uj] = join_values(cat.values, seen[uj]);
    if (cat.values.size() > static_cast<std::size_t>(s.options.max_categories)) {
      cat = SummaryCategories{true, {}, {}};
      continue;
    }
    std::vector<std::int64_t> counts(cat.values.size(), 0);
    for (std::size_t k = 0; k < old.size(); ++k) counts[where[uj][k]] = cat.counts[k];
    cat.counts = std::move(counts);
  }
  for (Index a = 0; a < p; ++a)
    for (Index b = a + 1; b < p; ++b) {
      auto& table = s.tables[pair_index(a, b, p)];
      const auto ua = static_cast<std::size_t>(a), ub = static_cast<std::size_t>(b);
      if (!has_table(s, a, b)) {
        table.clear();
        continue;
      }
      const std::size_t ka = s.categories[ua].values.size(), kb = s.categories[ub].values.size();
      if (table.size() == ka * kb) continue;
      // The table has the old sizes (none yet when an item had no answers).
      table = old_size[ua] * old_size[ub] == 0 ? std::vector<std::int64_t>(ka * kb, 0)
                                               : remap_table(table, old_size[ub], where[ua], where[ub], ka, kb);
    }
}

}  // namespace detail

Summary make_summary(std::vector<std::string> item_names, const SummaryOptions& options) {
  if (options.max_categories < 2 || options.max_categories > kSummaryMaxCategoriesLimit)
    throw Error(ErrorCode::invalid_argument, fmt::format("max_categories must be between 2 and {} (it is {})",
                                                         kSummaryMaxCategoriesLimit, options.max_categories));
  if (item_names.empty()) throw Error(ErrorCode::invalid_argument, "a summary needs at least one item");
  Summary s;
  const Index p = static_cast<Index>(item_names.size());
  s.item_names = std::move(item_names);
  s.options = options;
  s.n = IndexMatrix::Zero(p, p);
  s.mean = s.m2 = s.comoment = Matrix::Zero(p, p);
  s.categories.resize(static_cast<std::size_t>(p));
  s.tables.resize(static_cast<std::size_t>(p * (p - 1) / 2));
  return s;
}

void summary_add(Summary& s, const Matrix& block) {
  const Index p = s.items();
  if (block.cols() != p)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the rows have {} columns but the summary has {} items", block.cols(), p));
  for (Index j = 0; j < p; ++j)
    for (Index i = 0; i < block.rows(); ++i)
      if (std::isinf(block(i, j)))
        throw Error(ErrorCode::invalid_argument, fmt::format("{} holds an infinite value in row {} of the rows added",
                                                             item_label(s.item_names, j), i + 1));
  for (Index start = 0; start < block.rows(); start += kBlockRows) {
    const Index rows = std::min(kBlockRows, block.rows() - start);
    Matrix x = block.middleRows(start, rows);
    const Index missing = x.array().isNaN().count();
    Index complete = 0, any = 0;
    std::vector<Index> keep;
    for (Index i = 0; i < rows; ++i) {
      const Index answered = p - x.row(i).array().isNaN().count();
      if (answered == p) {
        ++complete;
        keep.push_back(i);
      }
      if (answered > 0) ++any;
    }
    s.rows_total += rows;
    s.rows_complete += complete;
    s.rows_any += any;
    s.missing_cells += missing;
    if (s.options.listwise) {
      Matrix kept(static_cast<Index>(keep.size()), p);
      for (std::size_t k = 0; k < keep.size(); ++k) kept.row(static_cast<Index>(k)) = x.row(keep[k]);
      x = std::move(kept);
    }
    if (x.rows() == 0) continue;
    const BlockMoments b = block_moments(x);
    merge_moments(s.n, s.mean, s.m2, s.comoment, b.n, b.mean, b.m2, b.comoment);

    // Categories: the values of this block joined in, then every cell's category index.
    std::vector<std::vector<double>> seen(static_cast<std::size_t>(p));
    std::vector<bool> over(static_cast<std::size_t>(p), false);
    for (Index j = 0; j < p; ++j) {
      if (s.categories[static_cast<std::size_t>(j)].over_limit) continue;
      auto& v = seen[static_cast<std::size_t>(j)];
      for (Index i = 0; i < x.rows() && !over[static_cast<std::size_t>(j)]; ++i) {
        const double value = x(i, j);
        if (std::isnan(value) || std::find(v.begin(), v.end(), value) != v.end()) continue;
        v.push_back(value);
        if (v.size() > static_cast<std::size_t>(s.options.max_categories)) over[static_cast<std::size_t>(j)] = true;
      }
      std::sort(v.begin(), v.end());
    }
    detail::join_categories(s, seen, over);
    const Index m = x.rows();
    std::vector<std::int16_t> code(static_cast<std::size_t>(m * p), -1);
    for (Index j = 0; j < p; ++j) {
      auto& cat = s.categories[static_cast<std::size_t>(j)];
      if (cat.over_limit) continue;
      for (Index i = 0; i < m; ++i) {
        const double value = x(i, j);
        if (std::isnan(value)) continue;
        const auto k = std::lower_bound(cat.values.begin(), cat.values.end(), value) - cat.values.begin();
        code[static_cast<std::size_t>(j * m + i)] = static_cast<std::int16_t>(k);
        ++cat.counts[static_cast<std::size_t>(k)];
      }
    }
    for (Index a = 0; a < p; ++a)
      for (Index b2 = a + 1; b2 < p; ++b2) {
        if (!detail::has_table(s, a, b2)) continue;
        auto& table = s.tables[detail::pair_index(a, b2, p)];
        const std::size_t kb = s.categories[static_cast<std::size_t>(b2)].values.size();
        const std::int16_t* ca = code.data() + a * m;
        const std::int16_t* cb = code.data() + b2 * m;
        for (Index i = 0; i < m; ++i)
          if (ca[i] >= 0 && cb[i] >= 0) ++table[static_cast<std::size_t>(ca[i]) * kb + static_cast<std::size_t>(cb[i])];
      }
  }
}

void summary_merge(Summary& into, const Summary& other) {
  const Index p = into.items();
  if (other.items() != p)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("these summaries cannot be merged: one has {} items, the other {}", p, other.items()));
  for (Index j = 0; j < p; ++j)
    if (into.item_names[static_cast<std::size_t>(j)] != other.item_names[static_cast<std::size_t>(j)])
      throw Error(ErrorCode::invalid_argument,
                  fmt::format("these summaries cannot be merged: item {} is '{}' in one and '{}' in the other", j + 1,
                              into.item_names[static_cast<std::size_t>(j)], other.item_names[static_cast<std::size_t>(j)]));
  if (into.options.max_categories != other.options.max_categories)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("these summaries cannot be merged: one keeps categories up to {} values, the other up to {}",
                            into.options.max_categories, other.options.max_categories));
  if (into.options.listwise != other.options.listwise)
    throw Error(ErrorCode::invalid_argument,
                "these summaries cannot be merged: one uses listwise deletion (complete rows only), the other "
                "pairwise deletion");
  if (&into == &other) {
    const Summary copy = other;
    summary_merge(into, copy);
    return;
  }
  // Categories first (so the tables line up), then counts, tables and moments.
  std::vector<std::vector<double>> seen(static_cast<std::size_t>(p));
  std::vector<bool> over(static_cast<std::size_t>(p));
  for (Index j = 0; j < p; ++j) {
    over[static_cast<std::size_t>(j)] = other.categories[static_cast<std::size_t>(j)].over_limit;
    seen[static_cast<std::size_t>(j)] = other.categories[static_cast<std::size_t>(j)].values;
  }
  detail::join_categories(into, seen, over);
  // Where each of other's categories sits among into's, item by item.
  std::vector<std::vector<std::size_t>> to(static_cast<std::size_t>(p));
  for (Index j = 0; j < p; ++j) {
    auto& cat = into.categories[static_cast<std::size_t>(j)];
    if (cat.over_limit) continue;
    const auto& oc = other.categories[static_cast<std::size_t>(j)];
    auto& map = to[static_cast<std::size_t>(j)];
    for (std::size_t k = 0; k < oc.values.size(); ++k) {
      map.push_back(static_cast<std::size_t>(std::lower_bound(cat.values.begin(), cat.values.end(), oc.values[k]) -
                                             cat.values.begin()));
      cat.counts[map.back()] += oc.counts[k];
    }
  }
  for (Index a = 0; a < p; ++a)
    for (Index b = a + 1; b < p; ++b) {
      if (!detail::has_table(into, a, b)) continue;
      const auto& src = other.tables[detail::pair_index(a, b, p)];
      if (src.empty()) continue;
      auto& dst = into.tables[detail::pair_index(a, b, p)];
      const auto& ma = to[static_cast<std::size_t>(a)];
      const auto& mb = to[static_cast<std::size_t>(b)];
      const std::size_t kb = into.categories[static_cast<std::size_t>(b)].values.size();
      for (std::size_t r = 0; r < ma.size(); ++r)
        for (std::size_t c = 0; c < mb.size(); ++c) dst[ma[r] * kb + mb[c]] += src[r * mb.size() + c];
    }
  merge_moments(into.n, into.mean, into.m2, into.comoment, other.n, other.mean, other.m2, other.comoment);
  into.rows_total += other.rows_total;
  into.rows_complete += other.rows_complete;
  into.rows_any += other.rows_any;
  into.missing_cells += other.missing_cells;
}

}  // namespace lode
