// The fitted model handle and the readers of lode_model_options and lode_rotation_options, shared by
// lode_model_compute, the scores, reliability, item flags and the bootstrap. Internal to liblode.
#pragma once

#include "handles.hpp"
#include "results.hpp"
#include "lode.h"
#include "lode/extraction.hpp"
#include "lode/fit.hpp"
#include "lode/rotation.hpp"

#include <memory>
#include <optional>
#include <string>
#include <vector>

namespace lode::capi {

// lode_model_options, read (older struct sizes included) and checked.
struct FitSetup {
  int factors = 0;  // 0 = suggested by the factor count
  ExtractionOptions extraction;          // with corr's n_obs and item names
  std::optional<RotationOptions> rotation;  // empty when the caller gave none
  double interval_level = 0.90;
  const lode_factor_count_options* factor_count = nullptr;
  lode_progress_fn progress = nullptr;
  void* progress_user = nullptr;
};

FitSetup read_fit_options(const lode_model_options* opts, const lode_correlation* corr);

// lode_rotation_options, read (older struct sizes included) and checked; NULL = the defaults. `names`
// name the items in messages.
RotationOptions read_rotation_options(const lode_rotation_options* opts, const std::vector<std::string>& names);

// enum lode_extraction -> ExtractionMethod (unknown values fail with the number).
ExtractionMethod extraction_method_of(int method);

// enum lode_criterion -> RotationMethod (unknown values fail with the number).
RotationMethod rotation_method_of(int method);

// Only the extraction fields of lode_model_options (method, max_iterations, tolerance, min_uniqueness), read
// and checked, with the defaults of lode_model_options_init for the rest.
ExtractionOptions read_extraction_options(const lode_model_options* opts, const lode_correlation* corr);

// An item-to-factor assignment for `model` (count entries, one per item: a 0-based factor or -1 for
// none), checked; NULL with count 0 = none given (empty: each item on its factor of largest loading).
std::vector<Index> assignment_of(const lode_model& model, const int64_t* assignment, int64_t count);

}  // namespace lode::capi

struct lode_model {
  lode::Matrix correlation;  // the matrix the model was fitted to
  std::vector<std::string> item_names;
  std::shared_ptr<const lode::capi::DataContent> data;  // what the correlation came from (raw data for scores)
  lode::MissingPolicy missing = lode::MissingPolicy::pairwise;  // how `correlation` treated missing answers
  // The fit's standardisation of raw data (empty for a model fitted to a matrix): the means and
  // standard deviations (n - 1) behind `correlation`, over the complete rows under listwise deletion,
  // the EM estimate's under em, else over each item's answered values. Every respondent scored is standardised with these, so a
  // respondent's scores do not depend on who else is scored in the same call.
  lode::Vector means, sds;
  lode::ExtractionResult extraction;
  lode::RotationResult rotation;  // method none and identity matrices when unrotated
  bool rotated = false;
  lode::ResidualFit residual;
  std::optional<lode::FitResult> fit;
  lode::capi::Unavailable fit_missing;
  lode::Index n_obs = 0;
  int suggested_factors = 0;
  std::vector<std::string> notes;
};
