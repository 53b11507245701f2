// Split-sample replication through the C ABI: its options (one field list), the lode_replication
// handle and its key tables read by the generic getters.
#include "boundary.hpp"
#include "handles.hpp"
#include "keys.hpp"
#include "options.hpp"
#include "restricted_fit.hpp"
#include "results.hpp"

#include "lode/replication.hpp"

#include <memory>

using namespace lode;
using namespace lode::capi;

struct lode_replication {
  ReplicationResult result;
};

namespace {

// lode_replication_options: field, default (the core's).
#define LODE_REPLICATION_OPTIONS_FIELDS(F) \
  F(splits, core.splits)                   \
  F(seed, core.seed)                       \
  F(threads, core.threads)                 \
  F(progress, nullptr)                     \
  F(progress_user, nullptr)

LODE_OPTIONS_FUNCTIONS(lode_replication_options, LODE_REPLICATION_OPTIONS_FIELDS, ReplicationOptions,
                       replication_defaults, merged_replication_options)

ReplicationOptions read_replication_options(const lode_replication_options* opts, const lode_correlation& corr) {
  const lode_replication_options o = merged_replication_options(opts);
  if (o.splits < 2 || o.splits > 100000)
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("splits must be between 2 and 100000; it is {}", o.splits));
  require_threads(o.threads);
  ReplicationOptions ro;
  ro.splits = static_cast<Index>(o.splits);
  ro.seed = o.seed;
  ro.threads = o.threads;
  ro.progress = progress_of(o.progress, o.progress_user);
  ro.correlation = corr.options;
  ro.correlation.polychoric.progress = {};
  return ro;
}

constexpr HandleNames replication_handle{"lode_replication", "lode_replication", "replication"};

using Rep = lode_replication;
constexpr MatrixKey<Rep> replication_matrices[] = {
    {LODE_REPLICATION_CONGRUENCE_MEDIAN, [](const Rep& r) -> Matrix { return r.result.congruence_median; }},
    {LODE_REPLICATION_CONGRUENCE_P5, [](const Rep& r) -> Matrix { return r.result.congruence_p5; }},
    {LODE_REPLICATION_SHARE_FAIR, [](const Rep& r) -> Matrix { return r.result.share_fair; }},
    {LODE_REPLICATION_SHARE_EQUAL, [](const Rep& r) -> Matrix { return r.result.share_equal; }},
    {LODE_REPLICATION_ITEM_STABILITY, [](const Rep& r) -> Matrix { return r.result.item_stability; }},
    {LODE_REPLICATION_CONGRUENCE, [](const Rep& r) -> Matrix { return r.result.congruence; }},
    {LODE_REPLICATION_LOADINGS, [](const Rep& r) -> Matrix { return r.result.loadings; }},
};

constexpr ValueKey<Rep> replication_values[] = {
    {LODE_REPLICATION_SPLITS, [](const Rep& r) { return number(r.result.splits_requested); }},
    {LODE_REPLICATION_USED, [](const Rep& r) { return number(r.result.splits_used); }},
    {LODE_REPLICATION_FAILED, [](const Rep& r) { return number(r.result.splits_failed); }},
    {LODE_REPLICATION_FACTORS, [](const Rep& r) { return static_cast<double>(r.result.factors); }},
    {LODE_REPLICATION_ITEMS, [](const Rep& r) { return number(r.result.loadings.rows()); }},
    {LODE_REPLICATION_SUGGESTED_FULL, [](const Rep& r) { return number(r.result.suggested_full); }},
    {LODE_REPLICATION_SHARE_SAME_COUNT, [](const Rep& r) { return r.result.share_same_count; }},
    {LODE_REPLICATION_SHARE_FULL_COUNT, [](const Rep& r) { return r.result.share_full_count; }},
};

constexpr TextKey<Rep> replication_texts[] = {
    {LODE_REPLICATION_FAILURES, [](const Rep& r) { return join_lines(r.result.failures); }},
    {LODE_REPLICATION_NOTES, [](const Rep& r) { return join_lines(r.result.notes); }},
};

}  // namespace

extern "C" {

LODE_OPTIONS_INIT(lode_replication_options, replication_defaults)

LODE_API int lode_replication_compute(const lode_correlation* corr, const lode_model_options* fit,
                                      const lode_replication_options* opts, lode_replication** out) {
  return compute_handle(corr, "corr", out, [&] {
    const SplitAnalysis a = read_split_analysis(corr, fit, "replication");
    const ReplicationOptions ro = read_replication_options(opts, *corr);
    auto r = std::make_unique<lode_replication>();
    r->result = replicate_halves(corr->data->values, a.factors, a.extraction, a.rotation, ro);
    return r;
  });
}

LODE_API void lode_replication_free(lode_replication* replication) { delete replication; }

LODE_KEY_GETTERS(lode_replication, lode_replication, replication_handle, replication_matrices, replication_values,
                 replication_texts)

}  // extern "C"
