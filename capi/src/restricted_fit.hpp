// The restricted fit handle and the reader of lode_restricted_fit_options, shared by the restricted
// fit (restricted_fit.cpp) and the hold-out check (holdout.cpp), and the analysis that the
// split-sample replication and the hold-out check repeat. Internal to liblode.
#pragma once

#include "handles.hpp"
#include "lode.h"
#include "lode/extraction.hpp"
#include "lode/restricted_fit.hpp"
#include "lode/rotation.hpp"

struct lode_restricted_fit {
  lode::RestrictedFitResult result;
};

namespace lode::capi {

// lode_restricted_fit_options, read and checked; NULL = the defaults.
RestrictedFitOptions read_restricted_options(const lode_restricted_fit_options* opts);

// The analysis a replication or hold-out check repeats: factors, extraction and rotation from `fit`.
struct SplitAnalysis {
  int factors = 0;
  ExtractionOptions extraction;
  RotationOptions rotation;
};

// `fit` read for the respondents behind `corr` (raw data; `what` names the call in messages).
SplitAnalysis read_split_analysis(const lode_correlation* corr, const lode_model_options* fit, const char* what);

}  // namespace lode::capi
