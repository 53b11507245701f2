// Steps of correlation() shared with the other correlation families inside the core (not public).
#pragma once

#include "lode/correlation.hpp"

namespace lode::detail {

// Fails when a pair has fewer than options.min_pair_observations rows or a non-finite correlation.
void check_pairs(const Matrix& r, const IndexMatrix& counts, const CorrelationOptions& options);

// Positive-definiteness check and, when asked, smoothing to the nearest correlation matrix; both
// reported in the result's smoothing report and notes.
void finish(CorrelationResult& result, const CorrelationOptions& options);

}  // namespace lode::detail
