// Pairwise-complete Pearson correlations at the speed of complete data.
//
// With Z the data shifted by a reference value c_i per item (its answered mean over the first chunk of
// rows) and set to 0 where missing, and M its answer mask (1 = answered), the sums each pair (i, j)
// needs over the rows where both are answered are
//   n_ij = (M'M)_ij,  sx_ij = (M'Z)_ji (sum of item i),  sxx_ij = (M'(Z o Z))_ji,  sxy_ij = (Z'Z)_ij.
// Z'Z is taken with the same blocked kernel as complete data. The three mask products are written
// through the gaps G = 1 - M instead: M'Z = 1'Z - G'Z and the like, where G'Z touches only the rows of
// the missing cells, so with few blanks they cost a small fraction of Z'Z. One pass: the rows are read
// in fixed chunks (partial sums added in chunk order: the result does not depend on the thread count),
// within a chunk in blocks that stay in cache, and validate_data's checks ride along; nothing the size
// of the data is copied.
//
// Accuracy (the bound stated): every sum of n terms is within gamma_n = n u / (1 - n u) times the sum
// of its absolute terms of its exact value, in any order (Higham 2002, Lemma 3.1). About the pair
// means the co-moment is sxy - sx_i sx_j / n_ij; shifting by c_i rather than 0 keeps the absolute sums
// at S_ii + n_ij d_i^2 with d_i = pair mean - c_i (a difference of two means of the same item, a
// fraction of its standard deviation), so the correlations are within about
// 2 gamma_n sqrt((1 + n d_i^2 / S_ii)(1 + n d_j^2 / S_jj)) of exact, and of the former algorithm's
// (the same sums about the whole answered means, through Eigen's general product): ~1e-14 for
// n = 10^6 and survey-like data.
#include "correlation_detail.hpp"
#include "lode/parallel.hpp"
#include "scaling.hpp"

#include <algorithm>
#include <cmath>
#include <immintrin.h>
#include <limits>
#include <vector>

namespace lode::detail {

namespace {

// Each item's shift: the mean of its answered values in the first chunk of rows (the first answered
// value further down when that chunk has none; 0 for an item never answered, which the checks refuse).
// Any value near the item's mean keeps the sums about the pair means free of cancellation (see the top).
Vector reference_values(const Matrix& data) {
  const Index n = data.rows(), p = data.cols(), first = std::min(n, kChunkRows);
  Vector shift = Vector::Zero(p);
  for (Index j = 0; j < p; ++j) {
    const double* col = data.col(j).data();
    double sum = 0.0;
    Index count = 0;
    for (Index i = 0; i < first; ++i) {
      const bool answered = col[i] == col[i];
      sum += answered ? col[i] : 0.0;
      count += answered;
    }
    if (count > 0 && std::isfinite(sum)) {
      shift(j) = sum / static_cast<double>(count);
    } else {
      for (Index i = 0; i < n; ++i)
        if (std::isfinite(col[i])) {
          shift(j) = col[i];
          break;
        }
    }
  }
  return shift;
}

// The rows one unit of work sums: a range of the data (rows == nullptr, every weight 1) or, for a
// resample, positions [begin, begin + count) of a list of distinct rows with how often each was drawn.
struct RowSet {
  const Index* rows = nullptr;
  const double* weights = nullptr;
  Index begin = 0, count = 0;
};

// Sums of one chunk: Z'WZ (lower triangle, padded to a multiple of 4), the gap corrections G'WZ,
// G'W(Z o Z) and G'WG, Z's weighted column sums, the weight of the rows with every / no item answered,
// and the extremes of each item's answered values (W = the row weights, the identity for the data).
struct ChunkSums {
  Matrix zz, gap_sum, gap_square, gap_count;  // gap_*(i, j): over the rows where j is missing
  Vector column_sum, low, high, largest;
  double rows_complete = 0.0, rows_empty = 0.0;
};

// Adds a row's centred values z and their squares z2 (length pp, padded with zeros) to the columns
// gaps[0..k) of sum and square (pp rows each): the gap corrections G'Z and G'(Z o Z) of one row.
// Element by element additions, so the AVX2 and the portable version give the same bits.
[[gnu::target("avx2")]] void add_to_gap_columns_avx2(const double* z, const double* z2, Index pp, const Index* gaps,
                                                     Index k, double* sum, double* square) {
  for (Index t = 0; t < k; ++t) {
    double* s = sum + gaps[t] * pp;
    double* q = square + gaps[t] * pp;
    for (Index i = 0; i < pp; i += 4) {
      _mm256_storeu_pd(s + i, _mm256_add_pd(_mm256_loadu_pd(s + i), _mm256_loadu_pd(z + i)));
      _mm256_storeu_pd(q + i, _mm256_add_pd(_mm256_loadu_pd(q + i), _mm256_loadu_pd(z2 + i)));
    }
  }
}

void add_to_gap_columns_portable(const double* z, const double* z2, Index pp, const Index* gaps, Index k, double* sum,
                                 double* square) {
  for (Index t = 0; t < k; ++t) {
    double* s = sum + gaps[t] * pp;
    double* q = square + gaps[t] * pp;
    for (Index i = 0; i < pp; ++i) {
      s[i] += z[i];
      q[i] += z2[i];
    }
  }
}

// One column of a block of the data: z = v - shift where answered, 0 where blank (counted in gaps),
// with the column's sum of z and the extremes of its answered values carried along.
struct ColumnPass {
  double sum, low, high, largest;
};

void fill_column_portable(const double* col, Index r, double shift, double* to, double* gaps, ColumnPass& pass) {
  const double inf = std::numeric_limits<double>::infinity();
  for (Index i = 0; i < r; ++i) {
    const double v = col[i];
    const bool answered = v == v;  // NaN = blank
    to[i] = answered ? v - shift : 0.0;
    pass.sum += to[i];
    pass.low = std::min(pass.low, answered ? v : inf);
    pass.high = std::max(pass.high, answered ? v : -inf);
    pass.largest = std::max(pass.largest, answered ? std::abs(v) : 0.0);
    gaps[i] += answered ? 0.0 : 1.0;
  }
}

[[gnu::target("avx2")]] void fill_column_avx2(const double* col, Index r, double shift, double* to, double* gaps,
                                              ColumnPass& pass) {
  const __m256d m = _mm256_set1_pd(shift), one = _mm256_set1_pd(1.0), inf = _mm256_set1_pd(std::numeric_limits<double>::infinity());
  const __m256d sign = _mm256_set1_pd(-0.0);
  __m256d sum = _mm256_setzero_pd(), low = _mm256_set1_pd(pass.low), high = _mm256_set1_pd(pass.high),
          most = _mm256_set1_pd(pass.largest);
  Index i = 0;
  for (; i + 4 <= r; i += 4) {
    const __m256d v = _mm256_loadu_pd(col + i);
    const __m256d answered = _mm256_cmp_pd(v, v, _CMP_ORD_Q);
    const __m256d z = _mm256_and_pd(answered, _mm256_sub_pd(v, m));
    _mm256_storeu_pd(to + i, z);
    sum = _mm256_add_pd(sum, z);
    low = _mm256_min_pd(low, _mm256_blendv_pd(inf, v, answered));
    high = _mm256_max_pd(high, _mm256_blendv_pd(_mm256_xor_pd(inf, sign), v, answered));
    most = _mm256_max_pd(most, _mm256_and_pd(answered, _mm256_andnot_pd(sign, v)));
    _mm256_storeu_pd(gaps + i, _mm256_add_pd(_mm256_loadu_pd(gaps + i), _mm256_andnot_pd(answered, one)));
  }
  alignas(32) double lanes[4][4];
  _mm256_store_pd(lanes[0], sum);
  _mm256_store_pd(lanes[1], low);
  _mm256_store_pd(lanes[2], high);
  _mm256_store_pd(lanes[3], most);
  pass.sum += (lanes[0][0] + lanes[0][1]) + (lanes[0][2] + lanes[0][3]);
  for (int k = 0; k < 4; ++k) {
    pass.low = std::min(pass.low, lanes[1][k]);
    pass.high = std::max(pass.high, lanes[2][k]);
    pass.largest = std::max(pass.largest, lanes[3][k]);
  }
  ColumnPass tail{0.0, pass.low, pass.high, pass.largest};
  fill_column_portable(col + i, r - i, shift, to + i, gaps + i, tail);
  pass = ColumnPass{pass.sum + tail.sum, tail.low, tail.high, tail.largest};
}

template <bool weighted>
void chunk_sums(const Matrix& data, const Vector& mean, const RowSet& set, bool avx2, ChunkSums& out) {
  const Index p = data.cols(), pp = (p + 3) / 4 * 4;
  const double inf = std::numeric_limits<double>::infinity();
  out.zz = Matrix::Zero(pp, pp);
  out.gap_sum = out.gap_square = Matrix::Zero(pp, p);  // rows padded for the 4-wide additions
  out.gap_count = Matrix::Zero(p, p);
  out.column_sum = Vector::Zero(p);
  out.low = Vector::Constant(p, inf);
  out.high = Vector::Constant(p, -inf);
  out.largest = Vector::Zero(p);
  Matrix block = Matrix::Zero(kBlockRows, pp);
  std::vector<double> gaps_in_row(static_cast<std::size_t>(kBlockRows));  // blanks per row of the block
  std::vector<Index> row(static_cast<std::size_t>(kBlockRows)), gaps(static_cast<std::size_t>(p));
  Vector root = Vector::Ones(kBlockRows), z = Vector::Zero(pp), z2 = Vector::Zero(pp);
  for (Index start = 0; start < set.count; start += kBlockRows) {
    const Index r = std::min(kBlockRows, set.count - start), padded = (r + 3) / 4 * 4;
    std::fill(gaps_in_row.begin(), gaps_in_row.end(), 0.0);
    for (Index i = 0; i < r; ++i) {
      const Index at = set.begin + start + i;
      row[static_cast<std::size_t>(i)] = weighted ? set.rows[at] : at;
      if constexpr (weighted) root(i) = std::sqrt(set.weights[at]);
    }
    for (Index j = 0; j < p; ++j) {
      double* to = block.col(j).data();
      const double m = mean(j);
      double sum = 0.0;
      if constexpr (weighted) {
        // A resample: weight w enters Z'WZ as sqrt(w) on both sides, the sums as w; the extremes of
        // the answered values tell a constant item.
        double low = out.low(j), high = out.high(j);
        for (Index i = 0; i < r; ++i) {
          const double v = data(row[static_cast<std::size_t>(i)], j);
          const bool answered = v == v;
          to[i] = answered ? root(i) * (v - m) : 0.0;
          sum += root(i) * to[i];
          low = std::min(low, answered ? v : inf);
          high = std::max(high, answered ? v : -inf);
          gaps_in_row[static_cast<std::size_t>(i)] += answered ? 0.0 : 1.0;
        }
        out.low(j) = low;
        out.high(j) = high;
      } else {
        // The data: validate_data's checks ride along (extremes for a constant item, the largest
        // magnitude for infinite values and columns that need rescaling).
        ColumnPass pass{sum, out.low(j), out.high(j), out.largest(j)};
        const double* col = data.col(j).data() + set.begin + start;
        if (avx2) fill_column_avx2(col, r, m, to, gaps_in_row.data(), pass);
        else fill_column_portable(col, r, m, to, gaps_in_row.data(), pass);
        sum = pass.sum;
        out.low(j) = pass.low;
        out.high(j) = pass.high;
        out.largest(j) = pass.largest;
      }
      out.column_sum(j) += sum;
      for (Index i = r; i < padded; ++i) to[i] = 0.0;
    }
    // The block is used with leading dimension `padded`: repack when the last block is short.
    if (padded != kBlockRows)
      for (Index j = 1; j < pp; ++j) std::copy(block.col(j).data(), block.col(j).data() + padded, block.data() + j * padded);
    add_block_cross_products(block.data(), padded, pp, out.zz, avx2);
    // The gap corrections, from the rows (still in cache) that have a missing item.
    for (Index i = 0; i < r; ++i) {
      const auto missing = static_cast<Index>(gaps_in_row[static_cast<std::size_t>(i)]);
      const double w = weighted ? set.weights[set.begin + start + i] : 1.0;
      if (missing == 0) {
        out.rows_complete += w;
        continue;
      }
      if (missing == p) out.rows_empty += w;
      const Index at = row[static_cast<std::size_t>(i)];
      Index k = 0;
      for (Index j = 0; j < p; ++j) {  // without branches: a blank is rare and unpredictable
        const double v = data(at, j);
        const bool answered = v == v;
        const double d = answered ? v - mean(j) : 0.0;
        z(j) = w * d;
        z2(j) = w * (d * d);
        gaps[static_cast<std::size_t>(k)] = j;
        k += !answered;
      }
      if (avx2) add_to_gap_columns_avx2(z.data(), z2.data(), pp, gaps.data(), k, out.gap_sum.data(), out.gap_square.data());
      else add_to_gap_columns_portable(z.data(), z2.data(), pp, gaps.data(), k, out.gap_sum.data(), out.gap_square.data());
      for (Index a = 0; a < k; ++a)
        for (Index b = 0; b < k; ++b) out.gap_count(gaps[static_cast<std::size_t>(a)], gaps[static_cast<std::size_t>(b)]) += w;
    }
  }
}

// Sums over a row set cut into fixed chunks, added in chunk order.
ChunkSums sums_over(const Matrix& data, const Vector& mean, const Index* rows, const double* weights, Index count,
                    int threads) {
  const bool avx2 = avx2_cross_products_available();
  const Index chunks = chunk_count(count);
  std::vector<ChunkSums> sums(static_cast<std::size_t>(chunks));
  parallel_for(chunks, threads, [&](Index c) {
    const Index begin = c * kChunkRows;
    const RowSet set{rows, weights, begin, std::min(kChunkRows, count - begin)};
    if (rows) chunk_sums<true>(data, mean, set, avx2, sums[static_cast<std::size_t>(c)]);
    else chunk_sums<false>(data, mean, set, avx2, sums[static_cast<std::size_t>(c)]);
  });
  ChunkSums total = std::move(sums.front());
  for (std::size_t c = 1; c < sums.size(); ++c) {
    total.zz += sums[c].zz;
    total.gap_sum += sums[c].gap_sum;
    total.gap_square += sums[c].gap_square;
    total.gap_count += sums[c].gap_count;
    total.column_sum += sums[c].column_sum;
    total.low = total.low.cwiseMin(sums[c].low);
    total.high = total.high.cwiseMax(sums[c].high);
    total.largest = total.largest.cwiseMax(sums[c].largest);
    total.rows_complete += sums[c].rows_complete;
    total.rows_empty += sums[c].rows_empty;
  }
  return total;
}

// The correlations and the data report from the sums over rows of total weight `rows` (integers).
// Per pair: n_ij = count_i - missing_j + (rows where both are missing); sx(i, j) = sum of z_i over the
// rows where j (and i) is answered; sxx(i, j) the same for z_i^2. As the former algorithm, whose
// results these are to rounding.
void assemble(const ChunkSums& total, double rows, const CorrelationOptions& options, CorrelationResult& result) {
  const Index p = total.column_sum.size();
  Vector count(p);
  for (Index j = 0; j < p; ++j) count(j) = rows - total.gap_count(j, j);
  IndexMatrix pairs(p, p);
  Matrix r = Matrix::Identity(p, p);
  for (Index j = 0; j < p; ++j) {
    pairs(j, j) = static_cast<Index>(count(j));
    for (Index i = j + 1; i < p; ++i) {
      const double nij = count(i) - (rows - count(j)) + total.gap_count(i, j);
      pairs(i, j) = pairs(j, i) = static_cast<Index>(nij);
      const double sx_i = total.column_sum(i) - total.gap_sum(i, j), sx_j = total.column_sum(j) - total.gap_sum(j, i);
      const double sxx_i = total.zz(i, i) - total.gap_square(i, j), sxx_j = total.zz(j, j) - total.gap_square(j, i);
      const double cov = total.zz(i, j) - sx_i * sx_j / nij;
      const double vi = sxx_i - sx_i * sx_i / nij, vj = sxx_j - sx_j * sx_j / nij;
      const double v = (vi > 0.0 && vj > 0.0) ? cov / std::sqrt(vi * vj) : std::numeric_limits<double>::quiet_NaN();
      r(i, j) = r(j, i) = std::clamp(v, -1.0, 1.0);
    }
  }
  result.kind = options.kind;
  result.missing = options.missing;
  result.report.rows_total = static_cast<Index>(rows);
  result.report.rows_complete = static_cast<Index>(total.rows_complete);
  result.report.rows_used = static_cast<Index>(rows - total.rows_empty);
  result.report.missing_fraction = count.sum() == rows * static_cast<double>(p)
                                       ? 0.0
                                       : 1.0 - count.sum() / (rows * static_cast<double>(p));
  result.report.pair_counts = std::move(pairs);
  result.matrix = std::move(r);
}

// Whether the sums' items pass validate_data's checks (enough answers, not constant).
bool items_pass(const ChunkSums& total, double rows, const CorrelationOptions& options) {
  const double needed = static_cast<double>(std::max<Index>(options.min_pair_observations, 2));
  for (Index j = 0; j < total.column_sum.size(); ++j)
    if (rows - total.gap_count(j, j) < needed || !(total.low(j) < total.high(j))) return false;
  return true;
}

}  // namespace

bool pearson_pairwise(const Matrix& data, const CorrelationOptions& options, CorrelationResult& result) {
  const Index n = data.rows(), p = data.cols();
  if (options.kind != CorrelationKind::pearson || options.missing != MissingPolicy::pairwise || n < 3 || p < 3)
    return false;
  const ChunkSums sums = sums_over(data, reference_values(data), nullptr, nullptr, n, options.threads);
  // Any doubt (an infinite value, a column needing rescaling, too few answers, a constant item, or no
  // value missing at all) goes to the general path, which words it or takes its own route.
  const double rows = static_cast<double>(n);
  for (Index j = 0; j < p; ++j)
    if (!(sums.largest(j) <= 1e100) || (sums.largest(j) > 0.0 && sums.largest(j) < 1e-100)) return false;
  if (!items_pass(sums, rows, options) || sums.gap_count.trace() == 0.0) return false;
  assemble(sums, rows, options, result);
  return true;
}

ResampleCorrelation::ResampleCorrelation(const Matrix& data, const CorrelationOptions& options)
    : data_(data), options_(options) {
  if (options.kind != CorrelationKind::pearson) return;
  // Listwise deletion of data with missing values keeps whole rows: resamples go through correlation().
  if (options.missing == MissingPolicy::listwise && data.array().isNaN().any()) return;
  try {
    validate_data(data, options);  // data that fail here fail in every resample too: leave them to correlation()
  } catch (const Error&) {
    return;
  }
  if (needs_column_scaling(data)) return;
  by_counts_ = true;
  mean_ = reference_values(data);
}

CorrelationResult ResampleCorrelation::resample(const std::vector<Index>& rows) const {
  if (!by_counts_) return correlation(data_(rows, Eigen::all), options_);
  const Index n = data_.rows();
  std::vector<Index> count(static_cast<std::size_t>(n), 0);
  for (Index i : rows) ++count[static_cast<std::size_t>(i)];
  std::vector<Index> drawn;
  std::vector<double> weight;
  for (Index i = 0; i < n; ++i)
    if (count[static_cast<std::size_t>(i)] > 0) {
      drawn.push_back(i);
      weight.push_back(static_cast<double>(count[static_cast<std::size_t>(i)]));
    }
  const auto total = static_cast<double>(rows.size());
  const ChunkSums sums =
      sums_over(data_, mean_, drawn.data(), weight.data(), static_cast<Index>(drawn.size()), options_.threads);
  // A resample can leave an item with one value only, or too few answers: correlation() of the drawn
  // rows words the problem exactly as for any data.
  if (!items_pass(sums, total, options_)) return correlation(data_(rows, Eigen::all), options_);
  CorrelationResult result;
  assemble(sums, total, options_, result);
  if (options_.missing == MissingPolicy::listwise) result.report.rows_used = result.report.rows_complete;
  result.report.min_pair_count = result.report.pair_counts.minCoeff();
  check_pairs(result.matrix, result.report.pair_counts, options_);
  result.n_obs = options_.missing == MissingPolicy::listwise ? result.report.rows_used : result.report.min_pair_count;
  finish(result, options_);
  return result;
}

}  // namespace lode::detail
