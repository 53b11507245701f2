// The structs behind the opaque handles of lode.h. Internal to liblode.
#pragma once

#include "lode.h"
#include "lode/correlation.hpp"
#include "lode/polychoric.hpp"
#include "lode/summary.hpp"

#include <memory>
#include <string>
#include <vector>

namespace lode::capi {

enum class DataSource { raw, correlation, covariance, summary };

// What a lode_data holds. Shared (immutable) with the results computed from it, so the caller may
// free the data handle while results live on.
struct DataContent {
  DataSource source = DataSource::raw;
  Matrix values;      // raw: rows x items; matrix input: items x items
  Index n_obs = 0;    // raw: rows; matrix input: as given
  std::vector<std::string> item_names;
  std::shared_ptr<const Summary> summary;  // summary: what the correlations come from (values is 0 x items)
};

// Refuses data that hold no respondents' rows: `what` needs them ("the bootstrap resamples
// respondents"), and the message names what was given instead, so a summary's user learns that a
// summary keeps no rows rather than that it is "a matrix".
void require_rows(const DataContent& content, const char* what);

}  // namespace lode::capi

struct lode_data {
  std::shared_ptr<const lode::capi::DataContent> content;
};

struct lode_correlation {
  std::shared_ptr<const lode::capi::DataContent> data;
  lode::CorrelationOptions options;  // as used (with the item names)
  lode::CorrelationResult result;
  lode::Vector eigenvalues;
  lode::Vector smc;                  // empty when undefined (smc_error says why)
  lode::Vector reduced_eigenvalues;  // empty when undefined
  std::string smc_error;
  bool polychoric = false;           // the next members are set for polychoric correlations of raw data
  lode::Matrix standard_errors;
  lode::Matrix thresholds;           // items x most thresholds, NaN-padded
  lode::Index pairs_not_converged = 0, pairs_at_bound = 0, pairs_zero_cell_corrected = 0;
};

struct lode_summary {
  lode::Summary summary;
};

namespace lode::capi {

// lode_correlation_options (older sizes included, NULL for the defaults), checked, as the core's options;
// its progress callback goes into the polychoric and EM options.
CorrelationOptions read_correlation_options(const lode_correlation_options* opts);

// Keeps a polychoric result in a correlation handle (matrix, standard errors, thresholds, counters).
void keep_polychoric(lode_correlation& c, PolychoricResult&& pr);

}  // namespace lode::capi
