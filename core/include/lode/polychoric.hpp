// Polychoric and tetrachoric correlations of ordinal items (Olsson 1979, "Maximum likelihood
// estimation of the polychoric correlation coefficient", Psychometrika 44, 443-460), by the two-step
// method: each pair's thresholds are normal quantiles of its cumulative margins, then rho maximises
// the multinomial likelihood of the pair's contingency table with those thresholds held fixed.
// Tetrachoric is the 2 x 2 case. Also category checks and resampling of categories for ordinal
// parallel analysis.
#pragma once

#include "lode/common.hpp"
#include "lode/correlation.hpp"
#include "lode/random.hpp"

#include <string>
#include <vector>

namespace lode {

// The estimate of one pair (or of one table).
struct PolychoricPair {
  Index item_a = 0, item_b = 0;  // columns of the data (a < b); 0, 1 for a table given directly
  double rho = 0.0;
  // 1 / sqrt(observed information), the second derivative of the log-likelihood in rho at the
  // estimate with the thresholds taken as known (as in the two-step method), so it leaves out the
  // thresholds' sampling error and runs smaller than the full maximum likelihood standard error
  // (Olsson 1979). NaN at the bound.
  double standard_error = 0.0;
  Index n = 0;                     // observations in the table (before any zero-cell addition)
  Index rows = 0, cols = 0;        // categories of a and b present in the table (empty ones dropped)
  Index empty_cells = 0;           // zero cells of the table
  bool zero_cell_corrected = false;  // zero_cell_add was added to the empty cells for the estimate
  bool at_bound = false;           // the estimate is +-max_abs_correlation
  Vector thresholds_a, thresholds_b;  // the thresholds the estimate used (rows - 1, cols - 1)
  Convergence convergence;         // Newton steps on rho (tolerance on the change of rho)
};

struct PolychoricResult {
  CorrelationResult correlation;  // matrix (smoothed if asked), n_obs, data report, notes
  Matrix estimates;               // the pairwise estimates before any smoothing
  Matrix standard_errors;         // of `estimates`; 0 on the diagonal, NaN for pairs at the bound
  std::vector<Vector> categories;  // per item: its distinct codes, ascending
  // Per item: normal quantiles of its cumulative category proportions over the rows it contributes
  // (listwise: the complete rows; pairwise: every row where it is answered). One fewer than its
  // categories. With pairwise deletion and missing data, each pair uses its own table's margins
  // (PolychoricPair::thresholds_*), which can differ slightly from these.
  std::vector<Vector> thresholds;
  std::vector<PolychoricPair> pairs;  // a < b, in the order (0,1), (0,2), ..., (1,2), ...
  Index pairs_not_converged = 0;
  Index pairs_at_bound = 0;
  Index pairs_zero_cell_corrected = 0;
};

// Distinct codes of each item, ascending, after checking that the item's answers are integers with
// at least 2 and at most options.polychoric.max_categories distinct values (errors name the item).
std::vector<Vector> detect_categories(const Matrix& data, const CorrelationOptions& options = {});

// The polychoric correlation of one contingency table (rows: categories of the first item in order,
// columns: the second's; nonnegative counts). Empty rows and columns are dropped; fewer than 2 left
// is an error.
PolychoricPair polychoric_from_table(const Matrix& counts, const PolychoricOptions& options = {});

// The polychoric (tetrachoric for binary items) correlation matrix of raw ordinal data (rows =
// respondents, NaN = missing), pairs computed in parallel (options.threads), with the missing-value
// policy, the pair-count checks and the positive-definite check / smoothing of correlation().
// correlation(data, options) with kind == polychoric returns the `correlation` member of this.
PolychoricResult polychoric_correlation(const Matrix& data, const CorrelationOptions& options = {});

// Random data for ordinal parallel analysis: every item keeps its observed category frequencies,
// items independent of each other. rows < 0 or rows == data.rows(): each column is a random
// permutation of itself (frequencies and missing count exactly kept). Otherwise `rows` rows drawn
// with replacement from each item's answered values (no missing values). Items are drawn in column
// order from `engine`, so the result is determined by the engine's state.
Matrix resample_categories(const Matrix& data, RandomEngine& engine, Index rows = -1);

}  // namespace lode
