// Factor count pieces the fit needs too. Internal to liblode.
#pragma once

#include "handles.hpp"
#include "lode.h"
#include "lode/factor_count.hpp"

namespace lode::capi {

// lode_factor_count_options, read (older struct sizes included) and checked; NULL = the defaults.
FactorCountOptions read_factor_count_options(const lode_factor_count_options* opts);
// The factor count of a correlation handle: from its raw data when it has them, else from the matrix.
FactorCountResult count_for(const lode_correlation* corr, const FactorCountOptions& options);

}  // namespace lode::capi
