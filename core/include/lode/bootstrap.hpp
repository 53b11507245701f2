// Bootstrap confidence intervals for a rotated factor solution: rows resampled with replacement
// (Efron 1979), the correlation matrix recomputed and the solution refitted in every replicate, each
// replicate aligned to the full-sample solution, and percentile intervals (Efron & Tibshirani 1993,
// ch. 13) formed for the pattern loadings, uniquenesses and factor correlations.
//
// Alignment (stated in every result): the replicate's factors are matched one-to-one to the full-sample
// factors by the largest total |Tucker congruence| of their pattern loadings (Hungarian assignment) and
// reflected where the matched congruence is negative (congruence.hpp); the factor correlations follow
// the same permutation and reflections. No further rotation toward the full-sample solution is applied,
// so each replicate keeps the rotation criterion's own solution.
#pragma once

#include "lode/common.hpp"
#include "lode/correlation.hpp"
#include "lode/extraction.hpp"
#include "lode/rotation.hpp"

#include <cstdint>
#include <functional>
#include <string>
#include <vector>

namespace lode {

// A fitted solution as the bootstrap sees it.
struct FactorSolution {
  Matrix loadings;             // items x factors: pattern loadings after rotation
  Matrix factor_correlations;  // factors x factors; empty = orthogonal (identity)
  Vector uniquenesses;         // items
  bool converged = true;       // false excludes the replicate (and counts it as failed)
  std::string problem;         // why it did not converge, for the failure summary
};

// Fits a solution to a correlation matrix. Called concurrently from several threads: it must not touch
// shared mutable state. Throwing lode::Error marks the replicate as failed with the error's message.
using SolutionFitter = std::function<FactorSolution(const Matrix& correlation)>;

struct BootstrapOptions {
  Index replicates = 1000;   // B, chosen by the caller (at least 2)
  double level = 0.95;       // two-sided coverage of the percentile intervals
  std::uint64_t seed = 1;    // replicate i resamples with random_stream(seed, i)
  int threads = 0;           // 0 = all cores; results do not depend on it
  // How each replicate's correlations are computed: use the options behind the full-sample matrix.
  CorrelationOptions correlation;
  bool keep_replicates = false;  // keep every aligned replicate in the result (memory: B x items x factors)
  ProgressFn progress;           // replicates done / B; returning false cancels (Error cancelled)
  // bootstrap_factor_solution only: random starts of the rotation in each replicate, besides the first
  // start (see replicate_warm_start). 0 = the first start only (fast; the alignment to the full-sample
  // solution follows); -1 = as in the rotation options. The full-sample rotation always uses the
  // rotation options as given.
  int replicate_random_starts = 0;
  // bootstrap_factor_solution only: start each replicate's iterative fits from the full-sample
  // solution. Minimum residual and maximum likelihood start from the full-sample uniquenesses; the
  // rotation's first start is the full-sample rotation carried over to the replicate's unrotated
  // loadings (T = Q T_full, Q the orthogonal Procrustes rotation of the replicate's unrotated loadings
  // toward the full-sample ones; Schoenemann 1966). Each fit still stops at the same convergence
  // criterion, so the replicate's solution is the same to within the tolerances; where the rotation
  // criterion has several local optima, the one nearest the full-sample solution is found, which is the
  // solution the intervals are about. false = extraction from its usual start and rotation from the
  // unrotated loadings.
  bool replicate_warm_start = true;
};

struct BootstrapResult {
  Index replicates_requested = 0;
  Index replicates_used = 0;    // converged and aligned: the intervals come from these only
  Index replicates_failed = 0;  // did not converge or could not be fitted: excluded
  // Failure reasons with their counts, most frequent first, e.g. "7 replicates: <message>".
  std::vector<std::string> failures;
  double level = 0.95;
  std::string alignment;  // the alignment method, in words
  // Full-sample estimates and percentile intervals (type 7 quantiles of the used replicates, the default
  // of R's quantile and numpy's percentile); standard errors are the replicates' standard deviations.
  Matrix loadings, loadings_lower, loadings_upper, loadings_se;  // items x factors
  Vector uniquenesses, uniquenesses_lower, uniquenesses_upper, uniquenesses_se;
  // Factor correlations (factors x factors); for an orthogonal solution the identity with zero-width
  // intervals.
  Matrix factor_correlations, factor_correlations_lower, factor_correlations_upper, factor_correlations_se;
  // Per used replicate: the smallest matched congruence with the full-sample factors, and how many
  // replicates had some factor matched with congruence below 0.85 (Lorenzo-Seva & ten Berge 2006: not the
  // same factor), where the intervals for that factor mix different factors.
  Vector min_matched_congruence;
  Index replicates_poorly_matched = 0;
  // Kept when keep_replicates: aligned loadings, uniquenesses and factor correlations of each used replicate.
  std::vector<Matrix> replicate_loadings;
  std::vector<Vector> replicate_uniquenesses;
  std::vector<Matrix> replicate_factor_correlations;
  std::vector<std::string> notes;
};

// The percentile bootstrap for any fitting procedure: `full` is the full-sample solution of `data`
// (rows = respondents, columns = items, NaN = missing, handled by options.correlation) and `fit` refits a
// resampled correlation matrix. Errors: fewer than 2 replicates, a level outside (0, 1), a full solution
// whose shapes disagree with the data, every replicate failing (the message gives the commonest reason).
BootstrapResult bootstrap_solution(const Matrix& data, const FactorSolution& full, const SolutionFitter& fit,
                                   const BootstrapOptions& options);

// Extraction followed (two or more factors, a method other than none) by rotation, as one FactorSolution:
// the rotated pattern, the factor correlations (identity when orthogonal) and the uniquenesses. Converged
// only when both the extraction and the rotation converged; `problem` says which did not.
FactorSolution fit_factor_solution(const Matrix& correlation, int factors, const ExtractionOptions& extraction,
                                   const RotationOptions& rotation);

// The bootstrap of an exploratory factor analysis: the full-sample correlations (options.correlation),
// extraction and rotation, then `options.replicates` resamples fitted the same way (rotation threads 1,
// random starts per options.replicate_random_starts, starts per options.replicate_warm_start). A
// full-sample fit that does not converge is an error (not_converged): intervals around it would mean
// nothing.
BootstrapResult bootstrap_factor_solution(const Matrix& data, int factors, const ExtractionOptions& extraction,
                                          const RotationOptions& rotation, const BootstrapOptions& options);


}  // namespace lode
