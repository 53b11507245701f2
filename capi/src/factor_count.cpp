// Factor count through the C ABI: parallel analysis, MAP, eigenvalue rules, the consensus.
#include "boundary.hpp"
#include "factor_count.hpp"
#include "handles.hpp"
#include "keys.hpp"
#include "options.hpp"
#include "results.hpp"

using namespace lode;
using namespace lode::capi;

struct lode_factor_count {
  FactorCountResult result;
};

namespace {

constexpr Code<RandomThreshold> threshold_codes[] = {
    {LODE_THRESHOLD_PERCENTILE, RandomThreshold::percentile},
    {LODE_THRESHOLD_MEAN, RandomThreshold::mean},
};

constexpr Code<RandomDataSource> source_codes[] = {
    {LODE_RANDOM_SOURCE_NORMAL, RandomDataSource::normal_theory},
    {LODE_RANDOM_SOURCE_PERMUTATION, RandomDataSource::permutation},
};

// lode_factor_count_options: field, default (from the core's ParallelAnalysisOptions).
#define LODE_FACTOR_COUNT_OPTIONS_FIELDS(F)                   \
  F(replicates, static_cast<int64_t>(core.replicates))        \
  F(threshold, c_code(threshold_codes, core.threshold))       \
  F(percentile, core.percentile)                              \
  F(source, c_code(source_codes, core.source))                \
  F(seed, core.seed)                                          \
  F(threads, core.threads)                                    \
  F(progress, nullptr)                                        \
  F(progress_user, nullptr)

LODE_OPTIONS_FUNCTIONS(lode_factor_count_options, LODE_FACTOR_COUNT_OPTIONS_FIELDS, ParallelAnalysisOptions,
                       factor_count_defaults, merged_factor_count_options)

std::string rule_table(const FactorCountResult& r) {
  std::vector<std::string> lines;
  for (const auto& s : r.table) lines.push_back(fmt::format("{}\t{}\t{}\t{}", s.rule, s.factors, s.primary ? 1 : 0, s.basis));
  return join_lines(lines);
}

constexpr HandleNames count_handle{"lode_factor_count", "lode_factor_count", "count"};

constexpr MatrixKey<lode_factor_count> count_matrices[] = {
    {LODE_FACTOR_COUNT_OBSERVED_PC, [](const lode_factor_count& c) -> Matrix { return c.result.parallel.observed_pc; }},
    {LODE_FACTOR_COUNT_OBSERVED_FACTOR,
     [](const lode_factor_count& c) -> Matrix { return c.result.parallel.observed_factor; }},
    {LODE_FACTOR_COUNT_RANDOM_PC_MEAN, [](const lode_factor_count& c) -> Matrix { return c.result.parallel.random_pc_mean; }},
    {LODE_FACTOR_COUNT_RANDOM_PC_PERCENTILE,
     [](const lode_factor_count& c) -> Matrix { return c.result.parallel.random_pc_percentile; }},
    {LODE_FACTOR_COUNT_RANDOM_FACTOR_MEAN,
     [](const lode_factor_count& c) -> Matrix { return c.result.parallel.random_factor_mean; }},
    {LODE_FACTOR_COUNT_RANDOM_FACTOR_PERCENTILE,
     [](const lode_factor_count& c) -> Matrix { return c.result.parallel.random_factor_percentile; }},
    {LODE_FACTOR_COUNT_MAP_SQUARED, [](const lode_factor_count& c) -> Matrix { return c.result.map.average_squared; }},
    {LODE_FACTOR_COUNT_MAP_FOURTH, [](const lode_factor_count& c) -> Matrix { return c.result.map.average_fourth; }},
    {LODE_FACTOR_COUNT_EKC_REFERENCE, [](const lode_factor_count& c) -> Matrix { return c.result.eigen.ekc_reference; }},
};

constexpr ValueKey<lode_factor_count> count_values[] = {
    {LODE_FACTOR_COUNT_SUGGESTED, [](const lode_factor_count& c) { return number(c.result.suggested); }},
    {LODE_FACTOR_COUNT_PARALLEL_PC, [](const lode_factor_count& c) { return number(c.result.parallel.suggested_pc); }},
    {LODE_FACTOR_COUNT_PARALLEL_FACTOR, [](const lode_factor_count& c) { return number(c.result.parallel.suggested_factor); }},
    {LODE_FACTOR_COUNT_MAP_SQUARED_SUGGESTED, [](const lode_factor_count& c) { return number(c.result.map.suggested_squared); }},
    {LODE_FACTOR_COUNT_MAP_FOURTH_SUGGESTED, [](const lode_factor_count& c) { return number(c.result.map.suggested_fourth); }},
    {LODE_FACTOR_COUNT_KAISER, [](const lode_factor_count& c) { return number(c.result.eigen.kaiser); }},
    {LODE_FACTOR_COUNT_EMPIRICAL_KAISER, [](const lode_factor_count& c) { return number(c.result.eigen.empirical_kaiser); }},
    {LODE_FACTOR_COUNT_REPLICATES, [](const lode_factor_count& c) { return number(c.result.parallel.replicates); }},
    {LODE_FACTOR_COUNT_N_OBS, [](const lode_factor_count& c) { return number(c.result.n_obs); }},
    {LODE_FACTOR_COUNT_PERCENTILE, [](const lode_factor_count& c) { return c.result.parallel.percentile; }},
};

constexpr TextKey<lode_factor_count> count_texts[] = {
    {LODE_FACTOR_COUNT_REASON, [](const lode_factor_count& c) { return c.result.reason; }},
    {LODE_FACTOR_COUNT_TABLE, [](const lode_factor_count& c) { return rule_table(c.result); }},
    {LODE_FACTOR_COUNT_NOTES, [](const lode_factor_count& c) { return join_lines(c.result.notes); }},
};

}  // namespace

namespace lode::capi {

FactorCountOptions read_factor_count_options(const lode_factor_count_options* opts) {
  const lode_factor_count_options o = merged_factor_count_options(opts);
  FactorCountOptions f;
  auto& p = f.parallel;
  if (o.replicates < 1 || o.replicates > 1000000)
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("replicates must be between 1 and 1000000; it is {}", o.replicates));
  p.replicates = static_cast<Index>(o.replicates);
  p.threshold = core_value(threshold_codes, o.threshold, "threshold");
  if (!(o.percentile > 0.0 && o.percentile < 100.0))
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("percentile must lie strictly between 0 and 100; it is {}", o.percentile));
  p.percentile = o.percentile;
  p.source = core_value(source_codes, o.source, "random data source");
  p.seed = o.seed;
  require_threads(o.threads);
  p.threads = o.threads;
  p.progress = progress_of(o.progress, o.progress_user);
  return f;
}

FactorCountResult count_for(const lode_correlation* corr, const FactorCountOptions& options) {
  const auto& data = *corr->data;
  if (data.source == DataSource::raw) return count_factors(data.values, corr->options, options);
  if (options.parallel.source == RandomDataSource::permutation)
    require_rows(data, "permutation parallel analysis shuffles each item's answers");
  return count_factors_from_correlation(corr->result.matrix, corr->result.n_obs, options);
}

}  // namespace lode::capi

extern "C" {

LODE_OPTIONS_INIT(lode_factor_count_options, factor_count_defaults)

LODE_API int lode_factor_count_compute(const lode_correlation* corr, const lode_factor_count_options* opts,
                                       lode_factor_count** out) {
  return compute_handle(corr, "corr", out, [&] {
    const FactorCountOptions options = read_factor_count_options(opts);
    auto c = std::make_unique<lode_factor_count>();
    c->result = count_for(corr, options);
    return c;
  });
}

LODE_API void lode_factor_count_free(lode_factor_count* count) { delete count; }

LODE_KEY_GETTERS(lode_factor_count, lode_factor_count, count_handle, count_matrices, count_values, count_texts)

}  // extern "C"
