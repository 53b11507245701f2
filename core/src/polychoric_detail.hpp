// Steps of the polychoric path shared with correlations from summaries (summary.cpp). Internal.
#pragma once

#include "lode/polychoric.hpp"

#include <functional>

namespace lode::detail {

// Fails with a message naming the option when PolychoricOptions are out of range.
void check_polychoric_options(const PolychoricOptions& options);

// Normal quantiles of the cumulative proportions of category counts (all but the last).
Vector polychoric_thresholds(const Vector& counts);

// Estimates every pair a < b from its contingency table (table_of(a, b): counts, rows the categories
// of a, columns those of b; empty rows and columns allowed) and completes `result`: pairs,
// estimates, standard errors, the counters, notes, n_obs and the positive-definite check. Expects
// result.correlation.report (rows and pair counts, already checked), categories and thresholds set.
void estimate_polychoric_pairs(PolychoricResult& result, const std::function<Matrix(Index, Index)>& table_of,
                               const CorrelationOptions& options);

}  // namespace lode::detail
