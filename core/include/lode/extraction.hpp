// Extraction of k common factors from a correlation matrix: principal axis factoring, minimum
// residual (unweighted least squares), maximum likelihood, and principal components for comparison.
// Loadings are unrotated; rotation lives elsewhere.
#pragma once

#include "lode/common.hpp"

#include <string>
#include <vector>

namespace lode {

enum class ExtractionMethod {
  principal_axis,        // iterated principal axis factoring from SMC communalities
  minimum_residual,      // minimum residual = unweighted least squares (Harman & Jones 1966; Joreskog 1977)
  maximum_likelihood,    // maximum likelihood (Joreskog 1967; Lawley & Maxwell 1971)
  principal_components,  // principal components, a comparison method (no uniquenesses are estimated)
};

const char* to_string(ExtractionMethod method) noexcept;

struct ExtractionOptions {
  ExtractionMethod method = ExtractionMethod::maximum_likelihood;
  // Iteration cap and convergence criterion. Principal axis: largest change of any communality
  // between iterations. Minimum residual and maximum likelihood: largest component of the projected
  // gradient of the fitting function with respect to the uniquenesses.
  int max_iterations = 1000;
  double tolerance = 1e-9;
  // Minimum residual and maximum likelihood keep every uniqueness in [min_uniqueness, 1]; an item
  // held at the lower bound is reported as a Heywood case. (0.005 is also the lower bound of R's
  // stats::factanal, which keeps the two comparable.)
  double min_uniqueness = 0.005;
  // Number of observations behind the matrix (0 = unknown). When known it must exceed the number of
  // items, since a matrix from fewer rows is singular.
  Index n_obs = 0;
  std::vector<std::string> item_names;  // optional, used in messages and Heywood reports
  // Minimum residual and maximum likelihood: the uniquenesses the search starts from (one per item,
  // moved into [min_uniqueness, 1]); empty = the method's usual start (1 - SMC for minimum residual,
  // Joreskog's (1967) start for maximum likelihood). A start near the optimum, such as the full-sample
  // uniquenesses when a bootstrap resample is refitted, saves iterations; the search stops at the same
  // convergence criterion wherever it starts.
  Vector start_uniquenesses;
};

// An item whose solution is improper: communality at or above 1, or uniqueness held at the bound.
struct HeywoodItem {
  Index item = 0;
  std::string label;  // item_label(options.item_names, item)
  double communality = 0.0;
  double uniqueness = 0.0;
  bool at_bound = false;  // uniqueness held at min_uniqueness
};

struct ExtractionResult {
  ExtractionMethod method = ExtractionMethod::maximum_likelihood;
  int factors = 0;
  Matrix loadings;        // items x factors, unrotated; columns by decreasing sum of squares, each column's sum >= 0
  Vector uniquenesses;    // items (principal components: 1 - communality)
  Vector communalities;   // items: row sums of squared loadings
  Vector factor_variance; // factors: column sums of squared loadings
  // The final value of the method's fitting function: maximum likelihood, the discrepancy
  // log|Sigma| - log|R| + tr(Sigma^-1 R) - p; minimum residual, half the sum of squared residuals
  // (off-diagonal counted twice); principal axis and components, the same least-squares value.
  double objective = 0.0;
  Convergence convergence;
  std::vector<HeywoodItem> heywood;
  std::vector<std::string> notes;  // plain-language remarks (Heywood cases, non-convergence, starts)
};

// Extracts `factors` factors from correlation matrix `r` (square, symmetric, unit diagonal).
// Errors: factors < 1 (invalid_argument); factors >= items (too_many_factors); maximum likelihood
// with negative degrees of freedom, naming the most factors the items can identify
// (too_many_factors); maximum likelihood or principal axis on a matrix that is not positive definite,
// advising smoothing (not_positive_definite); n_obs known but not above the number of items
// (insufficient_data).
ExtractionResult extract_factors(const Matrix& r, int factors, const ExtractionOptions& options = {});

// Degrees of freedom of the k-factor model for p items: ((p - k)^2 - (p + k)) / 2.
double factor_model_df(Index items, int factors);

// The largest number of factors with non-negative degrees of freedom for p items.
int max_identified_factors(Index items);

// The model-implied correlation matrix L L' + diag(u).
Matrix implied_correlation(const Matrix& loadings, const Vector& uniquenesses);

}  // namespace lode
