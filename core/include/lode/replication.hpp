// Does an exploratory structure hold up? Split-sample replication: the respondents split at random into
// two halves R times, the same analysis run in each half, each half's factors aligned to the full-sample
// solution (Tucker congruence, Hungarian matching and reflection, as the bootstrap does) and the halves'
// matched factors compared by their congruence, read with the bands of Lorenzo-Seva & ten Berge (2006).
// And the confirmatory check on held-out respondents: a share held out at random, the exploratory
// analysis run on the rest, its simple structure (each item on the factor of its largest loading at or
// above the salient cut) fitted by maximum likelihood to the held-out respondents (restricted_fit.hpp).
#pragma once

#include "lode/bootstrap.hpp"
#include "lode/common.hpp"
#include "lode/correlation.hpp"
#include "lode/extraction.hpp"
#include "lode/restricted_fit.hpp"
#include "lode/rotation.hpp"

#include <cstdint>
#include <string>
#include <vector>

namespace lode {

struct ReplicationOptions {
  Index splits = 100;        // R random halvings (at least 2)
  std::uint64_t seed = 1;    // split i shuffles the respondents with random_stream(seed, i)
  int threads = 0;           // 0 = all cores; results do not depend on it
  CorrelationOptions correlation;  // as for the full sample
  ProgressFn progress;             // splits done / R; returning false cancels (Error cancelled)
};

struct ReplicationResult {
  Index splits_requested = 0;
  Index splits_used = 0;    // both halves fitted and converged
  Index splits_failed = 0;
  std::vector<std::string> failures;  // "n splits: reason", commonest first
  int factors = 0;
  Matrix loadings;                    // the full-sample pattern every half is aligned to
  // Per used split (rows) and factor (columns): Tucker congruence between the two halves' factors, each
  // half aligned to the full-sample solution first.
  Matrix congruence;
  Vector congruence_median, congruence_p5;  // per factor, over the used splits (type 7 quantiles)
  Vector share_fair;   // per factor: share of used splits whose halves' congruence is at least 0.85
  Vector share_equal;  // ... at least 0.95
  // The factor count each half suggests by the empirical Kaiser criterion (Braeken & van Assen 2017):
  Index suggested_full = 0;        // of the full sample
  double share_same_count = 0.0;   // share of used splits where both halves suggest the same count
  double share_full_count = 0.0;   // ... where both suggest the full sample's count
  // Per item: share of used splits in which its largest |loading| is on the same (aligned) factor in both halves.
  Vector item_stability;
  std::vector<std::string> notes;
};

// Two halves' pattern loadings compared: each aligned to `reference` (match_factors), then per factor the
// Tucker congruence between the halves' aligned columns and per item whether its largest |loading| is on
// the same factor in both. All three matrices have the same shape.
struct HalvesComparison {
  Vector congruence;
  std::vector<bool> same_factor;
};
HalvesComparison compare_halves(const Matrix& reference, const Matrix& a, const Matrix& b);

// Split-sample replication of `factors` factors extracted and rotated as given, from raw data (rows =
// respondents, NaN = missing per options.correlation). Errors: fewer than 2 splits; halves too small
// (each needs more respondents than items); a full-sample fit that does not converge (not_converged);
// every split failing (the commonest reason).
ReplicationResult replicate_halves(const Matrix& data, int factors, const ExtractionOptions& extraction,
                                   const RotationOptions& rotation, const ReplicationOptions& options);

struct HoldoutOptions {
  double share = 0.5;        // of the respondents held out, in (0, 1)
  std::uint64_t seed = 1;    // the hold-out draw uses random_stream(seed, 0)
  double salient = 0.40;     // the strong-loading cut of the simple structure (common practice: 0.40)
  CorrelationOptions correlation;
  RestrictedFitOptions restricted;  // n_obs and item_names are filled in
};

struct HoldoutResult {
  Index n_explore = 0, n_holdout = 0;  // respondents behind each correlation matrix
  std::vector<Index> holdout_rows;     // the held-out respondents (row indices, ascending)
  FactorSolution exploratory;          // on the remaining respondents
  Matrix pattern;                      // items x factors, the simple structure taken from it
  std::vector<Index> items_fitted;     // the items in the restricted fit (salient somewhere)
  std::vector<Index> items_left_out;   // salient nowhere: left out and listed
  RestrictedFitResult confirmatory;    // on the held-out respondents, items_fitted only
  std::vector<std::string> notes;
};

// The confirmatory check. Errors: a share outside (0, 1); a share leaving either part with no more
// respondents than items (insufficient_data, naming the smallest workable share); an exploratory fit
// that does not converge (not_converged); a simple structure that does not identify the restricted
// model (a factor with fewer than two items at the cut: invalid_argument).
HoldoutResult holdout_check(const Matrix& data, int factors, const ExtractionOptions& extraction,
                            const RotationOptions& rotation, const HoldoutOptions& options);

}  // namespace lode
