// Data intake and correlation matrices: missing values, Pearson and Spearman coefficients, matrices
// given directly, positive-definiteness checks and smoothing, eigenvalues and squared multiple
// correlations.
#pragma once

#include "lode/common.hpp"
#include "lode/missing_em.hpp"

#include <string>
#include <vector>

namespace lode {

using IndexMatrix = Eigen::Matrix<Index, Eigen::Dynamic, Eigen::Dynamic>;

// pairwise: each correlation from the rows answering both items; listwise: only rows answering every
// item; em: maximum likelihood means and covariances under missing at random (missing_em.hpp), Pearson
// only, from every row with at least one answer.
enum class MissingPolicy { pairwise, listwise, em };
enum class CorrelationKind { pearson, spearman, polychoric };

const char* to_string(MissingPolicy policy) noexcept;
const char* to_string(CorrelationKind kind) noexcept;

// How a correlation matrix was turned into a positive-definite one (Higham 2002).
struct SmoothingReport {
  bool applied = false;
  double smallest_eigenvalue_before = 0.0;
  double max_abs_change = 0.0;  // largest change of any correlation
  double rms_change = 0.0;      // root mean square change over the off-diagonal entries
  Convergence convergence;
};

// What the data contributed.
struct DataReport {
  Index rows_total = 0;     // rows in the input
  Index rows_complete = 0;  // rows with no missing item
  Index rows_used = 0;      // listwise: rows_complete; pairwise: rows with at least one answered item
  IndexMatrix pair_counts;  // observations behind each correlation (items x items)
  Index min_pair_count = 0;
  double missing_fraction = 0.0;  // share of missing cells in the input
};

// What to do with empty cells of a pair's contingency table in the polychoric estimate. Adding a
// small count (0.5) to empty cells is common practice; Lode's default applies it only where the
// uncorrected estimate runs to the bound |rho| = max_abs_correlation (an empty cell that makes the
// likelihood largest at a perfect correlation), and reports every pair where it did.
enum class ZeroCellPolicy { none, at_bound, always };

// Options of the ordinal path (polychoric.hpp): category checks, zero cells, the 1-D maximisation.
struct PolychoricOptions {
  int max_categories = 10;  // an item with more distinct codes is refused (use Pearson for it); 2..100
  ZeroCellPolicy zero_cells = ZeroCellPolicy::at_bound;
  // Added to each empty cell for the estimate of rho and its standard error only; the thresholds
  // stay the normal quantiles of the observed margins.
  double zero_cell_add = 0.5;
  double max_abs_correlation = 0.9999;   // estimates are kept inside [-bound, bound]
  double tolerance = 1e-10;              // on the change of rho between Newton steps
  int max_iterations = 100;              // per pair
  ProgressFn progress;                   // pairs done / pairs in all; return false to cancel
};

struct CorrelationOptions {
  CorrelationKind kind = CorrelationKind::pearson;
  MissingPolicy missing = MissingPolicy::pairwise;
  // Replace a matrix that is not positive definite by the nearest correlation matrix whose
  // eigenvalues are at least `min_eigenvalue` (reported in CorrelationResult::smoothing). When off,
  // such a matrix is returned as it is and flagged.
  bool smooth_if_not_positive_definite = false;
  double min_eigenvalue = 1e-6;
  Index min_pair_observations = 3;  // fewer behind any correlation is an error
  std::vector<std::string> item_names;  // optional, used in messages; else "column 1", "column 2", ...
  int threads = 0;                      // 0 = all hardware threads
  PolychoricOptions polychoric;         // used when kind == polychoric
  EmOptions em;                         // used when missing == em (its threads field is ignored: `threads` applies)
};

struct CorrelationResult {
  Matrix matrix;  // items x items
  // Sample size for tests and fit indices: listwise, the rows used; pairwise, the smallest pair
  // count (the conservative choice; common practice varies); em, the rows with at least one answer.
  Index n_obs = 0;
  CorrelationKind kind = CorrelationKind::pearson;
  MissingPolicy missing = MissingPolicy::pairwise;
  DataReport report;
  bool positive_definite = true;
  SmoothingReport smoothing;
  EmEstimate em;  // missing == em only: the means, covariance and convergence behind `matrix`
  std::vector<std::string> notes;  // plain-language remarks for the report (e.g. smoothing applied)
};

// The label of item j in messages: "item 'name'" when its name is known, else "column j+1".
std::string item_label(const std::vector<std::string>& names, Index j);

// Checks raw data (rows = respondents, columns = items, NaN = missing) and fails with a message that
// names the problem: fewer than 3 items, an infinite value, an item with too few answers, a constant
// item, too few complete rows for listwise deletion.
void validate_data(const Matrix& data, const CorrelationOptions& options);

// The correlation matrix of raw data. Pearson and Spearman (average ranks for ties, ranked within
// the rows each pair uses) are computed here; polychoric is delegated to polychoric.hpp.
CorrelationResult correlation(const Matrix& data, const CorrelationOptions& options = {});

// A correlation matrix computed elsewhere, with its sample size (0 = unknown: tests and fit indices
// then refuse). Checks symmetry, unit diagonal, entries in [-1, 1], finiteness.
CorrelationResult correlation_from_matrix(const Matrix& r, Index n_obs, const CorrelationOptions& options = {});

// A covariance matrix computed elsewhere, turned into correlations (variances must be positive).
CorrelationResult correlation_from_covariance(const Matrix& s, Index n_obs, const CorrelationOptions& options = {});

// Nearest correlation matrix with eigenvalues >= min_eigenvalue, by alternating projections with
// Dykstra's correction (Higham 2002, "Computing the nearest correlation matrix").
Matrix nearest_correlation(const Matrix& r, double min_eigenvalue, SmoothingReport* report = nullptr,
                           int max_iterations = 1000, double tolerance = 1e-10);

// Average ranks of x (ties share the mean of their positions), 1-based, as Spearman uses them.
Vector average_ranks(const Vector& x);

// Eigenvalues of a symmetric matrix, largest first.
Vector eigenvalues_descending(const Matrix& symmetric);

// Squared multiple correlation of each item with all the others: 1 - 1 / diag(R^-1).
// Throws not_positive_definite (naming the smallest eigenvalue) when R cannot be inverted.
Vector squared_multiple_correlations(const Matrix& r);

// Eigenvalues of the reduced correlation matrix (SMCs on the diagonal), largest first.
Vector reduced_eigenvalues(const Matrix& r);

bool is_positive_definite(const Matrix& symmetric);

}  // namespace lode
