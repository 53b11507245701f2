// The restricted (confirmatory) factor model fitted by maximum likelihood: a 0/1 pattern says which
// loadings are free (1) and which are fixed at zero (0); factor variances are fixed at 1, factor
// correlations and uniquenesses are free (Joreskog 1969). The discrepancy minimised is the ML
// discrepancy F = log|Sigma| - log|R| + tr(Sigma^-1 R) - p with Sigma = L Phi L' + diag(u).
//
// Fit statistics (the Wishart-likelihood convention, Joreskog 1969; no Bartlett correction):
// chi-square (N - 1) F, df = p(p + 1)/2 - free parameters, its p value, CFI against the independence
// model (Bentler 1990), TLI (Tucker & Lewis 1973), RMSEA (Steiger & Lind 1980) with the interval of
// Browne & Cudeck (1993), SRMR on the correlation scale over the lower triangle with the diagonal, BIC
// in the chi-square form chi2 - df ln N (Raftery 1995, as in fit.hpp). Standard errors come from the
// inverse of the observed information matrix, (N - 1)/2 times the Hessian of F at the estimate. A
// correlation matrix is analysed as if it were a covariance matrix: the estimates are exact, the
// standard errors an approximation (Cudeck 1989).
#pragma once

#include "lode/common.hpp"
#include "lode/extraction.hpp"

#include <string>
#include <vector>

namespace lode {

struct RestrictedFitOptions {
  Index n_obs = 0;          // respondents behind the matrix (required: the chi-square needs it)
  int max_iterations = 500;  // Fisher scoring iterations
  // Convergence criterion: the largest component of the projected gradient of F.
  double tolerance = 1e-10;
  // Uniquenesses are kept at or above this bound; an item held there is a Heywood case (as in
  // ExtractionOptions::min_uniqueness).
  double min_uniqueness = 0.005;
  double interval_level = 0.90;          // of the RMSEA interval
  std::vector<std::string> item_names;   // optional, used in messages and Heywood reports
};

struct RestrictedFitResult {
  Matrix pattern;                  // items x factors, 0/1, as given
  Matrix loadings;                 // items x factors; zero where the pattern fixes them
  Matrix loadings_se;              // NaN where fixed
  Matrix factor_correlations;      // factors x factors, unit diagonal
  Matrix factor_correlations_se;   // NaN on the diagonal
  Vector uniquenesses;             // items
  Vector uniquenesses_se;          // NaN for a uniqueness held at its bound
  Index n_obs = 0;
  Index free_parameters = 0;
  double discrepancy = 0.0;        // F at the estimate
  double chi_square = 0.0;         // (N - 1) F
  double df = 0.0;
  double p_value = 0.0;            // NaN when df = 0
  double null_chi_square = 0.0;    // (N - 1) F of the independence model
  double null_df = 0.0;            // p (p - 1) / 2
  double cfi = 0.0;                // 1 - max(chi2 - df, 0) / max(chi2_0 - df_0, chi2 - df, 0)
  double tli = 0.0;                // (chi2_0/df_0 - chi2/df) / (chi2_0/df_0 - 1); NaN when df = 0
  double rmsea = 0.0, rmsea_lower = 0.0, rmsea_upper = 0.0;  // NaN when df = 0
  double srmr = 0.0;
  double bic = 0.0;                // chi2 - df ln N
  Convergence convergence;
  std::vector<HeywoodItem> heywood;
  bool factor_correlations_proper = true;  // false when the factor correlation matrix is not positive definite
  std::vector<std::string> notes;
};

// Checks that a pattern identifies a model for `items` items: items x factors of 0/1, every item on at
// least one factor, every factor with at least two items, non-negative degrees of freedom. Throws
// invalid_argument (too_many_factors for negative df) naming the item or factor.
void check_pattern(const Matrix& pattern, Index items, const std::vector<std::string>& item_names = {});

// Fits the restricted model to correlation matrix `r` (square, symmetric, unit diagonal, positive
// definite). Errors: a pattern that does not identify the model (check_pattern); n_obs not above the
// number of items
// (insufficient_data); r not positive definite (not_positive_definite). Non-convergence and Heywood
// cases are reported in the result, not thrown.
RestrictedFitResult fit_restricted(const Matrix& r, const Matrix& pattern, const RestrictedFitOptions& options);

// The simple structure of a solution: item i on the factor of its largest |loading| when that is at or
// above `cut`; items salient nowhere get a row of zeros (listed in `unassigned`).
struct SimpleStructure {
  Matrix pattern;                 // items x factors, 0/1
  std::vector<Index> unassigned;  // items with no loading at or above the cut
};
SimpleStructure simple_structure(const Matrix& loadings, double cut);

}  // namespace lode
