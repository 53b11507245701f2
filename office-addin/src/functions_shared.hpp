// What the compute functions of several files share (functions.cpp defines them): reading the data
// and fit arguments, the cached fit, the C ABI data handle of an argument, and the helpers that wait
// for a stage within the formula's deadline. UNO-free.
#pragma once

#include "arguments.hpp"
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

// A C ABI result handle shared by the cache and the cells, freed by its lode_*_free.
template <class T, void (*Free)(T*)>
std::shared_ptr<const T> shared_handle(T* h) {
  return std::shared_ptr<const T>(h, [](const T* p) { Free(const_cast<T*>(p)); });
}

inline constexpr std::int64_t kMaxFactors = 100;
inline constexpr std::int64_t kMaxReplicates = 10000;
inline constexpr std::int64_t kMaxObservations = 1'000'000'000;
inline constexpr std::size_t kNoArg = static_cast<std::size_t>(-1);

struct CorrelationSpec {
  int kind = LODE_COEFFICIENT_PEARSON;
  int missing = LODE_MISSING_PAIRWISE;
  std::int64_t n_obs = 0;  // for a correlation matrix given as data
};

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

// The data argument plus n_obs (argument `n_obs_index`; it matters only for a correlation matrix).
struct Source {
  Input input;
  CorrelationSpec spec;
};

// What a fit-reading cell asks for: the source, the options, and the cache key of the fit.
struct FitRequest {
  Source src;
  FitSpec spec;
  std::string key;
};

// The grid's shape and values into a cache key.
KeyBuilder& add_grid(KeyBuilder& k, const Grid& g);
// The input as a C ABI data handle, with its item names.
DataHandle make_data(const Input& in, std::int64_t n_obs);
// The extraction and rotation words of a cell (left out: Lode's defaults), as the C ABI's methods.
int method_arg(const Arg& a);
int rotation_arg(const Arg& a);
// The cache key of a source (its values and n_obs).
std::string source_key(const Source& s);
// Arguments of the fit family: data; [factors]; [method]; [rotation]; then n_obs at `n_obs_index`
// (kNoArg for functions without it).
FitRequest read_fit_request(const Call& call, std::size_t n_obs_index);
// The cached fit of the request; Err:523 when it did not converge.
std::shared_ptr<const FitOutputs> converged_fit(const Call& call, const FitRequest& req);

}  // namespace lode::addin
