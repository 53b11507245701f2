// Steps of correlation() shared with the other correlation families inside the core (not public).
#pragma once

#include "lode/correlation.hpp"

namespace lode::detail {

// Rows are processed in fixed chunks whose partial sums are added in chunk order, so the result does
// not depend on the number of threads, and no copy of the whole data set is made (peak memory stays
// close to the size of the data). Within a chunk, blocks of kBlockRows rows stay in cache.
inline constexpr Index kChunkRows = 8192;
inline constexpr Index kBlockRows = 256;

inline Index chunk_count(Index rows) { return rows == 0 ? 0 : (rows + kChunkRows - 1) / kChunkRows; }

// Which cross-product kernel centred_cross_products uses: the one this machine's processor supports
// best (automatic), or a named one (tests compare them).
enum class CrossProductKernel { automatic, portable, avx2 };

// Whether this processor runs the AVX2 + FMA kernel.
bool avx2_cross_products_available();

// Sums of squares and cross-products about the column means of complete, finite data (the lower
// triangle is filled; the upper is not meaningful). Independent of the thread count.
Matrix centred_cross_products(const Matrix& x, int threads, CrossProductKernel kernel);

// Adds y'y for a block of rows (rows x cols, column-major, leading dimension rows; rows and cols
// multiples of 4, padding zero) into the lower triangle of s (cols x cols, or larger), with the
// kernel centred_cross_products uses (AVX2 + FMA when `avx2`, else Eigen's rank update).
void add_block_cross_products(const double* y, Index rows, Index cols, Matrix& s, bool avx2);

// Pairwise-complete Pearson correlations of data with missing values (NaN), computed in one pass from
// products of the zero-filled data, shifted by a reference value per item, and of its answer mask,
// blocked over rows (correlation_pairwise.cpp). Fills result's matrix and data report and returns
// true; returns false, having filled nothing, when the data need the general path: no value missing,
// an intake check fails (validate_data then words it), or a column needs rescaling.
bool pearson_pairwise(const Matrix& data, const CorrelationOptions& options, CorrelationResult& result);

// Fails when a pair has fewer than options.min_pair_observations rows or a non-finite correlation.
void check_pairs(const Matrix& r, const IndexMatrix& counts, const CorrelationOptions& options);

// The em rule's matrix, sample size and notes in `result` (whose pair counts and row totals are set).
void correlation_by_em(const Matrix& data, const CorrelationOptions& options, CorrelationResult& result);

// Positive-definiteness check and, when asked, smoothing to the nearest correlation matrix; both
// reported in the result's smoothing report and notes.
void finish(CorrelationResult& result, const CorrelationOptions& options);

// Correlation matrices of resamples of one data set (rows drawn with replacement, as the bootstrap
// does): resample(rows) gives what correlation(data(rows, all), options) gives (to rounding), the same
// checks and messages included. For Pearson coefficients (complete data, or pairwise deletion) it
// works from how often each row was drawn instead of copying the rows: the sums of
// pearson_pairwise are taken over the distinct rows drawn, weighted by their counts, about the whole
// data's per-item shifts. Other data go through correlation(). Safe to call from several threads at once.
class ResampleCorrelation {
 public:
  ResampleCorrelation(const Matrix& data, const CorrelationOptions& options);
  CorrelationResult resample(const std::vector<Index>& rows) const;

 private:
  const Matrix& data_;
  CorrelationOptions options_;
  bool by_counts_ = false;
  Vector mean_;  // each item's shift, near its mean (by_counts_ only)
};

}  // namespace lode::detail
