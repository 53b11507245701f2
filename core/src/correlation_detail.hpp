// Steps of correlation() shared with the other correlation families inside the core (not public).
#pragma once

#include "lode/correlation.hpp"

namespace lode::detail {

// Which cross-product kernel centred_cross_products uses: the one this machine's processor supports
// best (automatic), or a named one (tests compare them).
enum class CrossProductKernel { automatic, portable, avx2 };

// Whether this processor runs the AVX2 + FMA kernel.
bool avx2_cross_products_available();

// Sums of squares and cross-products about the column means of complete, finite data (the lower
// triangle is filled; the upper is not meaningful). Independent of the thread count.
Matrix centred_cross_products(const Matrix& x, int threads, CrossProductKernel kernel);

// Fails when a pair has fewer than options.min_pair_observations rows or a non-finite correlation.
void check_pairs(const Matrix& r, const IndexMatrix& counts, const CorrelationOptions& options);

// The em rule's matrix, sample size and notes in `result` (whose pair counts and row totals are set).
void correlation_by_em(const Matrix& data, const CorrelationOptions& options, CorrelationResult& result);

// Positive-definiteness check and, when asked, smoothing to the nearest correlation matrix; both
// reported in the result's smoothing report and notes.
void finish(CorrelationResult& result, const CorrelationOptions& options);

// Correlation matrices of resamples of one data set (rows drawn with replacement, as the bootstrap
// does): resample(rows) gives what correlation(data(rows, all), options) gives, the same checks and
// messages included. For complete data and Pearson coefficients it works from how often each row was
// drawn instead of copying the rows: the columns are centred once, and each resample's cross-products
// are taken over the distinct rows drawn, weighted by their counts. Other data go through correlation().
// Safe to call from several threads at once.
class ResampleCorrelation {
 public:
  ResampleCorrelation(const Matrix& data, const CorrelationOptions& options);
  CorrelationResult resample(const std::vector<Index>& rows) const;

 private:
  const Matrix& data_;
  CorrelationOptions options_;
  bool by_counts_ = false;
  Matrix centred_;  // data minus the column means (by_counts_ only)
};

}  // namespace lode::detail
