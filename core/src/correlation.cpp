#include "lode/correlation.hpp"
#include "lode/parallel.hpp"

#include "correlation_detail.hpp"
#include "scaling.hpp"
#include "lode/polychoric.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <atomic>
#include <cmath>
#include <limits>
#include <numeric>

#include <immintrin.h>

namespace lode {

const char* to_string(MissingPolicy policy) noexcept {
  switch (policy) {
    case MissingPolicy::pairwise: return "pairwise";
    case MissingPolicy::listwise: return "listwise";
    case MissingPolicy::em: return "em";
  }
  return "unknown";
}

const char* to_string(CorrelationKind kind) noexcept {
  switch (kind) {
    case CorrelationKind::pearson: return "pearson";
    case CorrelationKind::spearman: return "spearman";
    case CorrelationKind::polychoric: return "polychoric";
  }
  return "unknown";
}

Vector average_ranks(const Vector& x) {
  const Index n = x.size();
  std::vector<Index> order(static_cast<std::size_t>(n));
  std::iota(order.begin(), order.end(), Index{0});
  std::stable_sort(order.begin(), order.end(), [&](Index a, Index b) { return x(a) < x(b); });
  Vector ranks(n);
  Index i = 0;
  while (i < n) {
    Index j = i;
    while (j + 1 < n && x(order[static_cast<std::size_t>(j + 1)]) == x(order[static_cast<std::size_t>(i)])) ++j;
    const double r = 0.5 * static_cast<double>(i + j) + 1.0;
    for (Index k = i; k <= j; ++k) ranks(order[static_cast<std::size_t>(k)]) = r;
    i = j + 1;
  }
  return ranks;
}

std::string item_label(const std::vector<std::string>& names, Index j) {
  if (j >= 0 && static_cast<std::size_t>(j) < names.size() && !names[static_cast<std::size_t>(j)].empty())
    return fmt::format("item '{}'", names[static_cast<std::size_t>(j)]);
  return fmt::format("column {}", j + 1);
}

namespace {

using Mask = Eigen::Array<bool, Eigen::Dynamic, Eigen::Dynamic>;

Mask present_mask(const Matrix& data) { return data.array().isNaN() == false; }

std::vector<Index> complete_rows(const Mask& present) {
  std::vector<Index> rows;
  for (Index i = 0; i < present.rows(); ++i)
    if (present.row(i).all()) rows.push_back(i);
  return rows;
}


double pearson_of(const Vector& x, const Vector& y) {
  if (x.size() < 2 || y.size() != x.size()) return std::numeric_limits<double>::quiet_NaN();  // (mean of none is undefined)
  const double mx = x.mean(), my = y.mean();
  const Vector dx = x.array() - mx, dy = y.array() - my;
  const double sxx = dx.squaredNorm(), syy = dy.squaredNorm();
  if (sxx <= 0.0 || syy <= 0.0) return std::numeric_limits<double>::quiet_NaN();
  return dx.dot(dy) / std::sqrt(sxx * syy);
}

using detail::chunk_count;
using detail::kBlockRows;
using detail::kChunkRows;

// What one pass over complete data learns about each column besides its sums: where the first
// infinite value is, whether a value is missing, and whether every value equals the column's first.
struct ColumnChecks {
  std::vector<Index> first_infinite;  // row index, or -1
  std::vector<char> constant;
  bool any_missing = false;  // or finite values whose sum overflows: either way the general path decides
};

// Centred cross-products of a block of rows (rows x cols, column-major, leading dimension ld, rows
// a multiple of 4 and cols a multiple of 4, padding zero) added into the lower triangle of s
// (cols x cols). Portable version: Eigen's rank update.
void add_cross_products_portable(const double* y, Index rows, Index cols, Matrix& s) {
  const Eigen::Map<const Matrix> block(y, rows, cols);
  s.selfadjointView<Eigen::Lower>().rankUpdate(block.transpose());
}

// AVX2 + FMA version of the same sums, written with intrinsics and selected at run time (so the
// library's Eigen code is compiled with one instruction set only). Tiles of 4 x 2 columns keep eight
// four-lane accumulators in registers; each lane sums every fourth row, and the lanes are added at
// the end of the block. It rounds differently from the portable version (agreement ~1e-15 relative,
// checked by the tests), never differently between threads or runs.
[[gnu::target("avx2,fma")]] inline double hsum(__m256d v) {
  const __m128d lo = _mm256_castpd256_pd128(v), hi = _mm256_extractf128_pd(v, 1);
  const __m128d pair = _mm_add_pd(lo, hi);
  return _mm_cvtsd_f64(_mm_add_sd(pair, _mm_unpackhi_pd(pair, pair)));
}

[[gnu::target("avx2,fma")]] void add_cross_products_avx2(const double* y, Index rows, Index cols, Matrix& s) {
  for (Index a = 0; a < cols; a += 4) {
    const double* a0 = y + a * rows;
    for (Index b = 0; b <= a + 2; b += 2) {  // tiles reaching the diagonal compute a few upper entries too
      const double* b0 = y + b * rows;
      __m256d c00 = _mm256_setzero_pd(), c01 = c00, c10 = c00, c11 = c00, c20 = c00, c21 = c00, c30 = c00, c31 = c00;
      for (Index i = 0; i < rows; i += 4) {
        const __m256d y0 = _mm256_loadu_pd(b0 + i), y1 = _mm256_loadu_pd(b0 + rows + i);
        __m256d x = _mm256_loadu_pd(a0 + i);
        c00 = _mm256_fmadd_pd(x, y0, c00);
        c01 = _mm256_fmadd_pd(x, y1, c01);
        x = _mm256_loadu_pd(a0 + rows + i);
        c10 = _mm256_fmadd_pd(x, y0, c10);
        c11 = _mm256_fmadd_pd(x, y1, c11);
        x = _mm256_loadu_pd(a0 + 2 * rows + i);
        c20 = _mm256_fmadd_pd(x, y0, c20);
        c21 = _mm256_fmadd_pd(x, y1, c21);
        x = _mm256_loadu_pd(a0 + 3 * rows + i);
        c30 = _mm256_fmadd_pd(x, y0, c30);
        c31 = _mm256_fmadd_pd(x, y1, c31);
      }
      s(a, b) += hsum(c00);
      s(a, b + 1) += hsum(c01);
      s(a + 1, b) += hsum(c10);
      s(a + 1, b + 1) += hsum(c11);
      s(a + 2, b) += hsum(c20);
      s(a + 2, b + 1) += hsum(c21);
      s(a + 3, b) += hsum(c30);
      s(a + 3, b + 1) += hsum(c31);
    }
  }
}

bool use_avx2_cross_products() {
  static const bool avx2 = __builtin_cpu_supports("avx2") && __builtin_cpu_supports("fma");  // a fact of the machine
  return avx2;
}

// Sum of squares and cross-products about the mean, one pass over the data. Each fixed chunk of rows is
// read once from memory: its column sums (and, when asked, the intake checks) first, then it is centred
// by its own mean in cache-sized blocks whose cross-products are added up. Chunks are combined in chunk
// order with the exact pairwise update of Chan, Golub & LeVeque (1979, "Updating formulae and a pairwise
// algorithm for computing sample variances"): M = M_A + M_B + d d' n_A n_B / n, d = mean_B - mean_A,
// so neither the thread count nor a large common offset in a column changes the result materially.
// A chunk holding a missing or infinite value is only checked, and once a value is missing the chunks
// not yet started are skipped (the caller takes the general path then).
Matrix centred_cross_products(const Matrix& x, int threads, ColumnChecks* checks, detail::CrossProductKernel kernel) {
  const Index n = x.rows(), p = x.cols(), chunks = chunk_count(n);
  const Index pp = (p + 3) / 4 * 4;
  using detail::CrossProductKernel;
  const bool avx2 = kernel == CrossProductKernel::automatic ? use_avx2_cross_products() : kernel == CrossProductKernel::avx2;
  struct Part {
    Matrix m;
    Vector mean;
    Index rows = 0;
    std::vector<Index> first_infinite;
    std::vector<char> constant;
    bool missing = false, nonfinite = false;
  };
  std::vector<Part> parts(static_cast<std::size_t>(chunks));
  // Once a chunk has found a missing value the caller takes the general path: later chunks skip their work.
  std::atomic<bool> missing_seen{false};
  parallel_for(chunks, threads, [&](Index c) {
    if (checks && missing_seen.load(std::memory_order_relaxed)) return;
    Part& part = parts[static_cast<std::size_t>(c)];
    const Index begin = c * kChunkRows, rows = std::min(kChunkRows, n - begin);
    part.rows = rows;
    part.mean = Vector::Zero(p);
    if (checks) {
      part.first_infinite.assign(static_cast<std::size_t>(p), -1);
      part.constant.assign(static_cast<std::size_t>(p), 1);
    }
    for (Index j = 0; j < p; ++j) {
      const double* col = x.col(j).data() + begin;
      double sum = 0.0;
      for (Index i = 0; i < rows; ++i) sum += col[i];
      if (!std::isfinite(sum)) part.nonfinite = true;
      if (checks) {
        const double first = x(0, j);
        bool same = true;
        for (Index i = 0; i < rows; ++i) same &= col[i] == first;
        part.constant[static_cast<std::size_t>(j)] = same;
        if (!std::isfinite(sum)) {
          bool found = false;
          for (Index i = 0; i < rows; ++i) {
            if (std::isnan(col[i])) part.missing = found = true;
            else if (std::isinf(col[i])) {
              found = true;
              if (part.first_infinite[static_cast<std::size_t>(j)] < 0) part.first_infinite[static_cast<std::size_t>(j)] = begin + i;
            }
          }
          if (!found) part.missing = true;  // finite values whose sum overflows: leave them to the general path
          if (part.missing) missing_seen.store(true, std::memory_order_relaxed);
        }
      }
      part.mean(j) = sum / static_cast<double>(rows);
    }
    part.m = Matrix::Zero(pp, pp);
    if (checks && part.nonfinite) return;
    Vector residual = Vector::Zero(p);  // sums of the centred values: rounding left in the chunk's mean
    Matrix block = Matrix::Zero(kBlockRows, pp);
    for (Index start = 0; start < rows; start += kBlockRows) {
      const Index r = std::min(kBlockRows, rows - start), padded = (r + 3) / 4 * 4;
      for (Index j = 0; j < p; ++j) {
        const double* col = x.col(j).data() + begin + start;
        double* out = block.col(j).data();
        const double m = part.mean(j);
        double left = 0.0;
        for (Index i = 0; i < r; ++i) left += out[i] = col[i] - m;
        residual(j) += left;
        for (Index i = r; i < padded; ++i) out[i] = 0.0;
      }
      // The block is used with leading dimension `padded`: repack when the last block is short.
      if (padded != kBlockRows)
        for (Index j = 1; j < pp; ++j)
          std::copy(block.col(j).data(), block.col(j).data() + padded, block.data() + j * padded);
      if (avx2) add_cross_products_avx2(block.data(), padded, pp, part.m);
      else add_cross_products_portable(block.data(), padded, pp, part.m);
    }
    // Corrected two-pass step (Chan, Golub & LeVeque 1983, "Algorithms for computing the sample variance"):
    // the products were taken about a mean that is off by residual / rows through rounding; take that out.
    part.m.topLeftCorner(p, p).selfadjointView<Eigen::Lower>().rankUpdate(residual, -1.0 / static_cast<double>(rows));
    part.mean += residual / static_cast<double>(rows);
  });
  if (checks && missing_seen.load()) {
    checks->any_missing = true;
    return Matrix();
  }
  Matrix total = Matrix::Zero(pp, pp);
  Vector mean = Vector::Zero(p);
  double count = 0.0;
  if (checks) {
    checks->first_infinite.assign(static_cast<std::size_t>(p), -1);
    checks->constant.assign(static_cast<std::size_t>(p), 1);
    checks->any_missing = false;
  }
  for (const Part& part : parts) {
    if (checks) {
      checks->any_missing |= part.missing;
      for (std::size_t j = 0; j < static_cast<std::size_t>(p); ++j) {
        if (checks->first_infinite[j] < 0) checks->first_infinite[j] = part.first_infinite[j];
        checks->constant[j] = checks->constant[j] && part.constant[j];
      }
    }
    const double rows = static_cast<double>(part.rows), after = count + rows;
    const Vector d = part.mean - mean;
    total += part.m;
    total.topLeftCorner(p, p).selfadjointView<Eigen::Lower>().rankUpdate(d, count * rows / after);
    mean += d * (rows / after);
    count = after;
  }
  return total.topLeftCorner(p, p);
}

Matrix correlation_from_cross_products(const Matrix& lower) {
  const Matrix s = lower.selfadjointView<Eigen::Lower>();
  const Vector inv_sd = s.diagonal().cwiseSqrt().cwiseInverse();
  Matrix r = inv_sd.asDiagonal() * s * inv_sd.asDiagonal();
  r.diagonal().setOnes();
  return r;
}

// Pearson correlations of complete data: centre, cross-product, scale.
Matrix pearson_complete(const Matrix& x, int threads) {
  return correlation_from_cross_products(centred_cross_products(x, threads, nullptr, detail::CrossProductKernel::automatic));
}

Matrix spearman(const Matrix& data, const Mask& present, MissingPolicy missing, const std::vector<Index>& complete) {
  const Index p = data.cols();
  if (missing == MissingPolicy::listwise || complete.size() == static_cast<std::size_t>(data.rows())) {
    Matrix ranks(static_cast<Index>(complete.size()), p);
    for (Index j = 0; j < p; ++j) {
      Vector col(ranks.rows());
      for (Index k = 0; k < ranks.rows(); ++k) col(k) = data(complete[static_cast<std::size_t>(k)], j);
      ranks.col(j) = average_ranks(col);
    }
    return pearson_complete(ranks, 1);
  }
  // Pairwise: each pair is ranked within the rows where both items are present. A pair answered
  // together in fewer than 2 rows has no coefficient (NaN); check_pairs then names it by its count.
  Matrix r = Matrix::Identity(p, p);
  for (Index a = 0; a < p; ++a)
    for (Index b = a + 1; b < p; ++b) {
      std::vector<Index> rows;
      for (Index i = 0; i < data.rows(); ++i)
        if (present(i, a) && present(i, b)) rows.push_back(i);
      if (rows.size() < 2) {
        r(a, b) = r(b, a) = std::numeric_limits<double>::quiet_NaN();
        continue;
      }
      Vector x(static_cast<Index>(rows.size())), y(static_cast<Index>(rows.size()));
      for (std::size_t k = 0; k < rows.size(); ++k) {
        x(static_cast<Index>(k)) = data(rows[k], a);
        y(static_cast<Index>(k)) = data(rows[k], b);
      }
      r(a, b) = r(b, a) = pearson_of(average_ranks(x), average_ranks(y));
    }
  return r;
}

}  // namespace

namespace detail {

bool avx2_cross_products_available() { return use_avx2_cross_products(); }

void add_block_cross_products(const double* y, Index rows, Index cols, Matrix& s, bool avx2) {
  if (avx2) add_cross_products_avx2(y, rows, cols, s);
  else add_cross_products_portable(y, rows, cols, s);
}

Matrix centred_cross_products(const Matrix& x, int threads, CrossProductKernel kernel) {
  return lode::centred_cross_products(x, threads, nullptr, kernel);
}

void check_pairs(const Matrix& r, const IndexMatrix& counts, const CorrelationOptions& options) {
  const Index p = r.cols();
  const Index needed = std::max<Index>(options.min_pair_observations, 2);  // no coefficient from fewer than 2 rows
  for (Index j = 0; j < p; ++j)
    for (Index i = j + 1; i < p; ++i) {
      if (counts(i, j) < needed)
        throw Error(ErrorCode::insufficient_data,
                    fmt::format("{} and {} are both answered in only {} rows; at least {} are needed "
                                "for their correlation (try listwise deletion or drop one of them)",
                                item_label(options.item_names, j), item_label(options.item_names, i), counts(i, j),
                                needed));
      if (!std::isfinite(r(i, j)))
        throw Error(ErrorCode::insufficient_data,
                    fmt::format("{} and {} have no variation in the rows where both are answered, so "
                                "their correlation is undefined",
                                item_label(options.item_names, j), item_label(options.item_names, i)));
    }
}

void finish(CorrelationResult& result, const CorrelationOptions& options) {
  result.positive_definite = is_positive_definite(result.matrix);
  if (!result.positive_definite) {
    const Vector ev = eigenvalues_descending(result.matrix);
    result.smoothing.smallest_eigenvalue_before = ev(ev.size() - 1);
    if (options.smooth_if_not_positive_definite) {
      result.matrix = nearest_correlation(result.matrix, options.min_eigenvalue, &result.smoothing);
      result.positive_definite = is_positive_definite(result.matrix);
      result.notes.push_back(fmt::format(
          "the correlation matrix was not positive definite (smallest eigenvalue {:.3g}); it was replaced by the "
          "nearest correlation matrix (largest change {:.3g})",
          result.smoothing.smallest_eigenvalue_before, result.smoothing.max_abs_change));
    } else {
      result.notes.push_back(fmt::format(
          "the correlation matrix is not positive definite (smallest eigenvalue {:.3g}); maximum likelihood "
          "cannot use it until it is smoothed",
          result.smoothing.smallest_eigenvalue_before));
    }
  }
}

}  // namespace detail

using detail::check_pairs;
using detail::finish;

void validate_data(const Matrix& data, const CorrelationOptions& options) {
  const Index n = data.rows(), p = data.cols();
  if (options.missing == MissingPolicy::em && options.kind != CorrelationKind::pearson)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the em rule estimates the means and covariances of normally distributed answers and works "
                            "with Pearson correlations only; for {} correlations use pairwise or listwise deletion",
                            to_string(options.kind)));
  if (p < 3)
    throw Error(ErrorCode::insufficient_data,
                fmt::format("factor analysis needs at least 3 items (columns); the data have {}", p));
  if (n < 3)
    throw Error(ErrorCode::insufficient_data, fmt::format("the data have {} rows; at least 3 are needed", n));
  const Index needed = std::max<Index>(options.min_pair_observations, 2);  // no coefficient from fewer than 2 rows
  for (Index j = 0; j < p; ++j) {
    Index answered = 0;
    double first = std::numeric_limits<double>::quiet_NaN();
    bool constant = true;
    for (Index i = 0; i < n; ++i) {
      const double v = data(i, j);
      if (std::isnan(v)) continue;
      if (!std::isfinite(v))
        throw Error(ErrorCode::invalid_argument,
                    fmt::format("{} holds an infinite value in row {}", item_label(options.item_names, j), i + 1));
      if (answered == 0) first = v;
      else if (v != first) constant = false;
      ++answered;
    }
    if (answered < needed)
      throw Error(ErrorCode::insufficient_data,
                  fmt::format("{} is answered in only {} of {} rows; at least {} are needed",
                              item_label(options.item_names, j), answered, n, needed));
    if (constant)
      throw Error(ErrorCode::insufficient_data,
                  fmt::format("{} is constant (every answer is {}); remove it, it carries no information",
                              item_label(options.item_names, j), first));
  }
  if (options.missing == MissingPolicy::listwise) {
    const Index complete = static_cast<Index>(complete_rows(present_mask(data)).size());
    if (complete < needed)
      throw Error(ErrorCode::insufficient_data,
                  fmt::format("only {} of {} rows survive listwise deletion (rows with every item answered); at "
                              "least {} are needed: use pairwise deletion or fewer items",
                              complete, n, needed));
  }
}

namespace {

// Rows answering both items, for every pair.
IndexMatrix pair_counts_of(const Mask& present) {
  const Index p = present.cols();
  IndexMatrix counts(p, p);
  for (Index a = 0; a < p; ++a)
    for (Index b = a; b < p; ++b) counts(a, b) = counts(b, a) = (present.col(a) && present.col(b)).count();
  return counts;
}

Index n_obs_of(const CorrelationResult& result, const CorrelationOptions& options) {
  if (options.missing == MissingPolicy::em) return result.report.rows_used;
  return options.missing == MissingPolicy::listwise ? result.report.rows_used : result.report.min_pair_count;
}

// Pearson correlations of data that turn out to be complete, with the intake checks of validate_data
// (same order, same messages) folded into the one pass that sums the data. Returns false, having
// computed nothing usable, when a value is missing: such data take the general path.
bool pearson_if_complete(const Matrix& data, const CorrelationOptions& options, CorrelationResult& result) {
  const Index n = data.rows(), p = data.cols();
  if (p < 3 || n < 3) return false;  // validate_data words these
  ColumnChecks checks;
  Matrix s = centred_cross_products(data, options.threads, &checks, detail::CrossProductKernel::automatic);
  if (checks.any_missing) return false;
  for (Index j = 0; j < p; ++j) {
    const std::size_t k = static_cast<std::size_t>(j);
    if (checks.first_infinite[k] >= 0)
      throw Error(ErrorCode::invalid_argument, fmt::format("{} holds an infinite value in row {}",
                                                           item_label(options.item_names, j), checks.first_infinite[k] + 1));
    if (n < options.min_pair_observations)
      throw Error(ErrorCode::insufficient_data,
                  fmt::format("{} is answered in only {} of {} rows; at least {} are needed",
                              item_label(options.item_names, j), n, n, options.min_pair_observations));
    if (checks.constant[k])
      throw Error(ErrorCode::insufficient_data,
                  fmt::format("{} is constant (every answer is {}); remove it, it carries no information",
                              item_label(options.item_names, j), data(0, j)));
  }
  // Sums of squares near the ends of double precision (values of 1e150 and more, or 1e-100 and
  // less): the general path rescales the columns first.
  for (Index j = 0; j < p; ++j)
    if (!(s(j, j) < 1e200 && s(j, j) > 1e-200)) return false;
  // Listwise deletion keeps every row of complete data, so its check (n < min_pair_observations) has
  // already failed above if it would.
  result.kind = options.kind;
  result.missing = options.missing;
  result.report.rows_total = n;
  result.report.rows_complete = n;
  result.report.missing_fraction = 0.0;
  result.report.rows_used = n;
  result.report.pair_counts = IndexMatrix::Constant(p, p, n);
  result.matrix = correlation_from_cross_products(s);
  return true;
}

}  // namespace

CorrelationResult correlation(const Matrix& data, const CorrelationOptions& options) {
  if (options.kind == CorrelationKind::polychoric) return polychoric_correlation(data, options).correlation;
  if (options.kind == CorrelationKind::pearson && options.missing != MissingPolicy::em) {
    // Complete data, then pairwise deletion over missing values; either returns false for data that
    // need the general path (checks that fail and are worded below, columns that need rescaling).
    CorrelationResult fast;
    if (pearson_if_complete(data, options, fast) || detail::pearson_pairwise(data, options, fast)) {
      fast.report.min_pair_count = fast.report.pair_counts.minCoeff();
      check_pairs(fast.matrix, fast.report.pair_counts, options);
      fast.n_obs = n_obs_of(fast, options);
      finish(fast, options);
      return fast;
    }
  }
  validate_data(data, options);
  // Correlations are free of each column's scale: columns near the ends of double precision are
  // brought to a largest magnitude in [1, 2) by a power of two (exact) so that no sum overflows.
  if (detail::needs_column_scaling(data)) return correlation(detail::columns_scaled(data), options);
  const Index n = data.rows(), p = data.cols();
  const Mask present = present_mask(data);
  const std::vector<Index> complete = complete_rows(present);

  CorrelationResult result;
  result.kind = options.kind;
  result.missing = options.missing;
  result.report.rows_total = n;
  result.report.rows_complete = static_cast<Index>(complete.size());
  result.report.missing_fraction = 1.0 - static_cast<double>(present.count()) / static_cast<double>(n * p);

  const bool all_complete = complete.size() == static_cast<std::size_t>(n);
  if (options.missing == MissingPolicy::em) {
    result.report.pair_counts = pair_counts_of(present);
    detail::correlation_by_em(data, options, result);
  } else if (options.missing == MissingPolicy::listwise || all_complete) {
    result.report.rows_used = static_cast<Index>(complete.size());
    result.report.pair_counts = IndexMatrix::Constant(p, p, result.report.rows_used);
    if (options.kind == CorrelationKind::pearson) {
      if (all_complete) {
        result.matrix = pearson_complete(data, options.threads);
      } else {
        Matrix kept(static_cast<Index>(complete.size()), p);
        for (std::size_t k = 0; k < complete.size(); ++k) kept.row(static_cast<Index>(k)) = data.row(complete[k]);
        // Listwise deletion can leave an item constant.
        CorrelationOptions check = options;
        check.missing = MissingPolicy::pairwise;
        validate_data(kept, check);
        result.matrix = pearson_complete(kept, options.threads);
      }
    } else {
      result.matrix = spearman(data, present, MissingPolicy::listwise, complete);
    }
  } else {
    // Pairwise Pearson data that pass validate_data and need no rescaling took the path above.
    if (options.kind == CorrelationKind::pearson)
      throw Error(ErrorCode::internal, "pairwise Pearson correlations reached the general path");
    Index used = 0;
    for (Index i = 0; i < n; ++i)
      if (present.row(i).any()) ++used;
    result.report.rows_used = used;
    result.report.pair_counts = pair_counts_of(present);
    result.matrix = spearman(data, present, MissingPolicy::pairwise, complete);
  }
  result.report.min_pair_count = result.report.pair_counts.minCoeff();
  check_pairs(result.matrix, result.report.pair_counts, options);
  result.n_obs = n_obs_of(result, options);
  finish(result, options);
  return result;
}

CorrelationResult correlation_from_matrix(const Matrix& r, Index n_obs, const CorrelationOptions& options) {
  const Index p = r.rows();
  if (r.rows() != r.cols())
    throw Error(ErrorCode::invalid_argument,
                fmt::format("a correlation matrix must be square; this one is {} x {}", r.rows(), r.cols()));
  if (p < 3)
    throw Error(ErrorCode::insufficient_data,
                fmt::format("factor analysis needs at least 3 items; the matrix has {}", p));
  if (n_obs < 0) throw Error(ErrorCode::invalid_argument, fmt::format("the number of observations is negative ({})", n_obs));
  for (Index j = 0; j < p; ++j)
    for (Index i = 0; i < p; ++i) {
      if (!std::isfinite(r(i, j)))
        throw Error(ErrorCode::invalid_argument,
                    fmt::format("the correlation matrix holds a missing or infinite value at row {}, column {}", i + 1, j + 1));
      if (std::abs(r(i, j) - r(j, i)) > 1e-8)
        throw Error(ErrorCode::invalid_argument,
                    fmt::format("the correlation matrix is not symmetric: entry ({}, {}) is {} but ({}, {}) is {}", i + 1,
                                j + 1, r(i, j), j + 1, i + 1, r(j, i)));
      if (i == j && std::abs(r(i, i) - 1.0) > 1e-8)
        throw Error(ErrorCode::invalid_argument,
                    fmt::format("the diagonal of a correlation matrix must be 1; {} has {}",
                                item_label(options.item_names, i), r(i, i)));
      if (std::abs(r(i, j)) > 1.0 + 1e-8)
        throw Error(ErrorCode::invalid_argument,
                    fmt::format("correlation ({}, {}) is {}, outside [-1, 1]", i + 1, j + 1, r(i, j)));
    }
  CorrelationResult result;
  result.matrix = 0.5 * (r + r.transpose());
  result.matrix.diagonal().setOnes();
  result.n_obs = n_obs;
  result.kind = options.kind;
  result.missing = options.missing;
  result.report.rows_total = result.report.rows_used = result.report.rows_complete = n_obs;
  result.report.pair_counts = IndexMatrix::Constant(p, p, n_obs);
  result.report.min_pair_count = n_obs;
  finish(result, options);
  return result;
}

CorrelationResult correlation_from_covariance(const Matrix& s, Index n_obs, const CorrelationOptions& options) {
  if (s.rows() != s.cols())
    throw Error(ErrorCode::invalid_argument,
                fmt::format("a covariance matrix must be square; this one is {} x {}", s.rows(), s.cols()));
  for (Index j = 0; j < s.cols(); ++j)
    if (!(s(j, j) > 0.0) || !std::isfinite(s(j, j)))
      throw Error(ErrorCode::invalid_argument,
                  fmt::format("{} has variance {} in the covariance matrix; variances must be positive",
                              item_label(options.item_names, j), s(j, j)));
  const Vector inv_sd = s.diagonal().cwiseSqrt().cwiseInverse();
  Matrix r = inv_sd.asDiagonal() * s * inv_sd.asDiagonal();
  r.diagonal().setOnes();
  return correlation_from_matrix(r, n_obs, options);
}

}  // namespace lode
