// Does the factor structure hold in every group? The same analysis in each group of respondents, its
// factors turned towards the pooled solution by a Procrustes rotation, Tucker's congruence per factor,
// alpha and omega per group and scale, and items whose loadings differ from the pooled ones.
// Congruence is a descriptive check, not a formal test of measurement invariance.
#pragma once

#include "lode/correlation.hpp"
#include "lode/extraction.hpp"
#include "lode/rotation.hpp"

#include <cstdint>
#include <string>
#include <vector>

namespace lode {

struct GroupComparisonOptions {
  int factors = 0;                 // at least 1 (the pooled solution's count)
  CorrelationOptions correlation;  // for the pooled data and each group
  ExtractionOptions extraction;    // its n_obs and item names are set per analysis
  RotationOptions rotation;        // of the pooled solution; oblique methods give oblique Procrustes in groups
  // Groups with fewer respondents are listed and skipped. Common practice asks for at least about 100
  // respondents for stable loadings, more with low communalities (MacCallum, Widaman, Zhang & Hong 1999,
  // from memory); a group also needs more respondents than items for its correlation matrix to be
  // positive definite, so the rule is max(min_group, items + 1).
  Index min_group = 100;
  // An item's loading in a group that differs from the pooled loading by more than this is flagged
  // (0.2: common practice for a difference worth a look).
  double difference_threshold = 0.2;
  int threads = 0;      // groups in parallel; results do not depend on it
  ProgressFn progress;  // groups done / groups analysed
};

struct GroupSolution {
  std::int64_t code = 0;      // the group's code as given
  Index rows = 0;             // respondents in the group
  Index n_obs = 0;            // the group's sample size for the correlations
  Matrix pattern;             // items x factors, rotated towards the pooled pattern
  Matrix factor_correlations; // factors x factors (identity for orthogonal Procrustes)
  Vector uniquenesses;        // items
  Vector congruence;          // factors: Tucker's congruence with the pooled factor
  Vector alpha;               // factors: raw alpha of the scale in this group (NaN: fewer than 2 items)
  Vector omega;               // factors: omega total of the scale in this group (NaN: no items)
  Convergence convergence;    // of the group's extraction
  std::vector<std::string> notes;
};

struct SkippedGroup {
  std::int64_t code = 0;
  Index rows = 0;
  std::string reason;
};

struct ItemDifference {
  std::int64_t code = 0;  // group
  Index item = 0;
  Index factor = 0;
  double group_loading = 0.0;
  double pooled_loading = 0.0;
  std::string text;  // plain words
};

struct GroupComparison {
  Matrix pooled_pattern;              // items x factors
  Matrix pooled_factor_correlations;  // factors x factors
  Index pooled_n_obs = 0;
  std::vector<Index> assignment;      // items: the scale (pooled factor of the largest |loading|)
  std::vector<bool> reversed;         // items: loading negatively on their scale's factor (reversed in alpha, omega)
  bool oblique = false;               // Procrustes kind used in the groups
  std::vector<GroupSolution> groups;  // analysed groups, by ascending code
  std::vector<SkippedGroup> skipped;  // by ascending code
  std::vector<ItemDifference> differences;  // by group, then item, then factor
  std::vector<std::string> notes;
};

// `data`: rows = respondents, columns = items (NaN = missing); `groups`: one code per row. Fails when
// fewer than 2 groups can be analysed, naming the counts.
GroupComparison compare_groups(const Matrix& data, const std::vector<std::int64_t>& groups,
                               const GroupComparisonOptions& options);

}  // namespace lode
