// What the files of compute functions share (functions.cpp defines them; functions_confirm.cpp and
// functions_structure.cpp use them): reading the data argument into a cached correlation, the fit
// family's arguments, cache key and cached fit, the C ABI data handle of an argument, the model options
// of a fit, and the wait for stages the C ABI cannot interrupt. UNO-free.
#pragma once

#include "arguments.hpp"
#include "cache.hpp"
#include "capi.hpp"
#include "table.hpp"

#include <cstddef>
#include <cstdint>
#include <functional>
#include <memory>
#include <string>
#include <utility>
#include <vector>

namespace lode::addin {

inline constexpr std::int64_t kMaxFactors = 100;
inline constexpr std::int64_t kMaxReplicates = 10000;
inline constexpr std::int64_t kMaxObservations = 1'000'000'000;
inline constexpr std::size_t kNoArg = static_cast<std::size_t>(-1);

// The cached result of `work` for `key`, computed on a thread of its own and waited for until the
// formula's deadline (ResultCache::get_or_compute_until): for stages the C ABI cannot interrupt. A
// recalculation while the work still runs joins it, and once it has finished takes its result.
template <class T>
std::shared_ptr<const T> cached_in_time(const Call& call, const std::string& key, const char* what,
                                        std::function<std::shared_ptr<const T>()> work, std::size_t bytes) {
  auto value = call.cache.get_or_compute_until<T>(key, std::move(work), bytes, call.deadline.until);
  if (!value) time_limit_passed(what);
  return value;
}

// A C ABI handle shared by cached values, freed by its lode_*_free.
template <class T, void (*Free)(T*)>
std::shared_ptr<const T> shared_handle(T* h) {
  return std::shared_ptr<const T>(h, [](const T* p) { Free(const_cast<T*>(p)); });
}

KeyBuilder& add_grid(KeyBuilder& k, const Grid& g);

struct CorrelationSpec {
  int kind = LODE_COEFFICIENT_PEARSON;
  int missing = LODE_MISSING_PAIRWISE;
  std::int64_t n_obs = 0;  // for a correlation matrix given as data
};

// The correlation of the input with these options, computed once per distinct input.
std::shared_ptr<const lode_correlation> correlation(const Call& call, const Input& in, const CorrelationSpec& spec);

// The data argument plus n_obs (argument `n_obs_index`; it matters only for a correlation matrix).
struct Source {
  Input input;
  CorrelationSpec spec;
};
Source read_source(const Call& call, std::size_t n_obs_index);
std::string source_key(const Source& s);

struct FitSpec {
  int factors = 0;                        // 0 = the count parallel analysis suggests
  int method = LODE_EXTRACTION_ML;        // the C ABI's extraction method (method_arg)
  int rotation = LODE_CRITERION_OBLIMIN;  // the C ABI's rotation method (rotation_arg)
};

// What every fit-reading cell needs, computed once per distinct (data, options).
struct FitOutputs {
  int factors = 0;
  bool converged = true;
  std::string convergence_note;  // why not, shown by LODE.FIT; the other cells show Err:523
  Matrix pattern, structure, phi, uniquenesses, communalities, residuals;
  std::vector<std::pair<std::string, double>> statistics;  // LODE.FIT's rows
  std::string statistics_error;  // when the statistics could not be computed (e.g. n_obs unknown)
  std::int64_t heywood = 0;      // items with an improper solution
  std::shared_ptr<const lode_model> model;  // kept for LODE.SCORES (the handle holds the raw data it was fitted to)
};

// The input as a C ABI data handle, with its item names.
DataHandle make_data(const Input& in, std::int64_t n_obs);
// The extraction and rotation words of a cell (left out: Lode's defaults), as the C ABI's methods.
int method_arg(const Arg& a);
int rotation_arg(const Arg& a);

// What a fit-reading cell asks for: the source, the options, and the cache key of the fit.
struct FitRequest {
  Source src;
  FitSpec spec;
  std::string key;
};

// Arguments of the fit family: data; [factors]; [method]; [rotation]; then n_obs at `n_obs_index`
// (kNoArg for functions without it). factors 0 or left out: the suggested count.
FitRequest read_fit_request(const Call& call, std::size_t n_obs_index);
// The cached fit of the request; Err:523 when it did not converge.
std::shared_ptr<const FitOutputs> converged_fit(const Call& call, const FitRequest& req);

// The options of lode_model_compute (and of the calls that refit the same way) for a fit spec; not
// copyable: fo.rotation points into the same object.
struct ModelSetup {
  lode_model_options fo;
  lode_rotation_options ro;
  explicit ModelSetup(const FitSpec& spec);
  ModelSetup(const ModelSetup&) = delete;
  ModelSetup& operator=(const ModelSetup&) = delete;
};

// The label/value rows of LODE.FIT and LODE.PATTERNFIT: a statistic that is not defined shows as text,
// and a failure as the one row `error` with the reason (these cells say why instead of an error value).
using LabelRows = std::vector<std::pair<std::string, OutCell>>;
OutCell statistic_cell(double value);
Output label_value_table(const LabelRows& rows);
Output error_row(const CellError& e);

// The seed argument: a whole number in [0, 2^52], or -1 (the library's default) when left out.
std::int64_t seed_arg(const Arg& a);

}  // namespace lode::addin
