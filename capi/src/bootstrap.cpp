// Bootstrap intervals through the C ABI: lode_bootstrap_options and the lode_bootstrap handle.
#include "boundary.hpp"
#include "handles.hpp"
#include "keys.hpp"
#include "model.hpp"
#include "options.hpp"
#include "results.hpp"

#include "lode/bootstrap.hpp"

#include <cstdint>
#include <memory>

using namespace lode;
using namespace lode::capi;

struct lode_bootstrap {
  BootstrapResult result;
  Index items = 0, factors = 0;
  bool oblique = false;
  bool kept = false;
};

namespace {

// lode_bootstrap_options: field, default (from the core's BootstrapOptions).
#define LODE_BOOTSTRAP_OPTIONS_FIELDS(F)                          \
  F(replicates, static_cast<int64_t>(core.replicates))            \
  F(level, core.level)                                            \
  F(seed, core.seed)                                              \
  F(threads, core.threads)                                        \
  F(replicate_random_starts, core.replicate_random_starts)        \
  F(keep_replicates, core.keep_replicates ? 1 : 0)                \
  F(progress, nullptr)                                            \
  F(progress_user, nullptr)

LODE_OPTIONS_FUNCTIONS(lode_bootstrap_options, LODE_BOOTSTRAP_OPTIONS_FIELDS, BootstrapOptions, bootstrap_defaults,
                       merged_bootstrap_options)

BootstrapOptions read_bootstrap_options(const lode_bootstrap_options* opts, const lode_correlation* corr) {
  const lode_bootstrap_options o = merged_bootstrap_options(opts);
  if (o.replicates < 2 || o.replicates > 1000000)
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("replicates must be between 2 and 1000000; it is {}", o.replicates));
  require_open_unit(o.level, "level");
  require_threads(o.threads);
  if (o.replicate_random_starts < -1 || o.replicate_random_starts > 100000)
    fail(LODE_E_INVALID_ARGUMENT,
         fmt::format("replicate_random_starts must be -1 (as the rotation options say) or 0 to 100000; it is {}",
                     o.replicate_random_starts));
  BootstrapOptions bo;
  bo.replicates = static_cast<Index>(o.replicates);
  bo.level = o.level;
  bo.seed = o.seed;
  bo.threads = o.threads;
  bo.replicate_random_starts = o.replicate_random_starts;
  bo.keep_replicates = o.keep_replicates != 0;
  bo.progress = progress_of(o.progress, o.progress_user);
  bo.correlation = corr->options;  // as used for corr (item names included; its progress was for that call)
  bo.correlation.polychoric.progress = {};
  return bo;
}

// Kept replicates as one row each: a matrix flattened row-major (as the matrix getters write).
template <class M>
Matrix stack_rows(const std::vector<M>& reps, Index width) {
  Matrix out(static_cast<Index>(reps.size()), width);
  for (std::size_t r = 0; r < reps.size(); ++r) {
    const auto& m = reps[r];
    Index c = 0;
    for (Index i = 0; i < m.rows(); ++i)
      for (Index j = 0; j < m.cols(); ++j) out(static_cast<Index>(r), c++) = m(i, j);
  }
  return out;
}

const BootstrapResult& kept(const lode_bootstrap& b) {
  if (!b.kept)
    fail(LODE_E_INVALID_ARGUMENT,
         "this key needs the replicates, which were not kept: set keep_replicates in lode_bootstrap_options");
  return b.result;
}

using Boot = lode_bootstrap;

constexpr HandleNames bootstrap_handle{"lode_bootstrap", "lode_bootstrap", "result"};

constexpr MatrixKey<Boot> bootstrap_matrices[] = {
    {LODE_BOOTSTRAP_LOADINGS, [](const Boot& b) -> Matrix { return b.result.loadings; }},
    {LODE_BOOTSTRAP_LOADINGS_LOWER, [](const Boot& b) -> Matrix { return b.result.loadings_lower; }},
    {LODE_BOOTSTRAP_LOADINGS_UPPER, [](const Boot& b) -> Matrix { return b.result.loadings_upper; }},
    {LODE_BOOTSTRAP_LOADINGS_SE, [](const Boot& b) -> Matrix { return b.result.loadings_se; }},
    {LODE_BOOTSTRAP_UNIQUENESSES, [](const Boot& b) -> Matrix { return b.result.uniquenesses; }},
    {LODE_BOOTSTRAP_UNIQUENESSES_LOWER, [](const Boot& b) -> Matrix { return b.result.uniquenesses_lower; }},
    {LODE_BOOTSTRAP_UNIQUENESSES_UPPER, [](const Boot& b) -> Matrix { return b.result.uniquenesses_upper; }},
    {LODE_BOOTSTRAP_UNIQUENESSES_SE, [](const Boot& b) -> Matrix { return b.result.uniquenesses_se; }},
    {LODE_BOOTSTRAP_FACTOR_CORRELATIONS, [](const Boot& b) -> Matrix { return b.result.factor_correlations; }},
    {LODE_BOOTSTRAP_FACTOR_CORRELATIONS_LOWER, [](const Boot& b) -> Matrix { return b.result.factor_correlations_lower; }},
    {LODE_BOOTSTRAP_FACTOR_CORRELATIONS_UPPER, [](const Boot& b) -> Matrix { return b.result.factor_correlations_upper; }},
    {LODE_BOOTSTRAP_FACTOR_CORRELATIONS_SE, [](const Boot& b) -> Matrix { return b.result.factor_correlations_se; }},
    {LODE_BOOTSTRAP_MIN_CONGRUENCE, [](const Boot& b) -> Matrix { return b.result.min_matched_congruence; }},
    {LODE_BOOTSTRAP_REPLICATE_LOADINGS,
     [](const Boot& b) -> Matrix { return stack_rows(kept(b).replicate_loadings, b.items * b.factors); }},
    {LODE_BOOTSTRAP_REPLICATE_UNIQUENESSES,
     [](const Boot& b) -> Matrix { return stack_rows(kept(b).replicate_uniquenesses, b.items); }},
    {LODE_BOOTSTRAP_REPLICATE_FACTOR_CORRELATIONS,
     [](const Boot& b) -> Matrix { return stack_rows(kept(b).replicate_factor_correlations, b.factors * b.factors); }},
};

constexpr ValueKey<Boot> bootstrap_values[] = {
    {LODE_BOOTSTRAP_REPLICATES, [](const Boot& b) { return number(b.result.replicates_requested); }},
    {LODE_BOOTSTRAP_USED, [](const Boot& b) { return number(b.result.replicates_used); }},
    {LODE_BOOTSTRAP_FAILED, [](const Boot& b) { return number(b.result.replicates_failed); }},
    {LODE_BOOTSTRAP_POORLY_MATCHED, [](const Boot& b) { return number(b.result.replicates_poorly_matched); }},
    {LODE_BOOTSTRAP_LEVEL, [](const Boot& b) { return b.result.level; }},
    {LODE_BOOTSTRAP_ITEMS, [](const Boot& b) { return number(b.items); }},
    {LODE_BOOTSTRAP_FACTORS, [](const Boot& b) { return number(b.factors); }},
    {LODE_BOOTSTRAP_OBLIQUE, [](const Boot& b) { return flag(b.oblique); }},
};

constexpr TextKey<Boot> bootstrap_texts[] = {
    {LODE_BOOTSTRAP_ALIGNMENT, [](const Boot& b) { return b.result.alignment; }},
    {LODE_BOOTSTRAP_FAILURES, [](const Boot& b) { return join_lines(b.result.failures); }},
    {LODE_BOOTSTRAP_NOTES, [](const Boot& b) { return join_lines(b.result.notes); }},
};

}  // namespace

extern "C" {

LODE_OPTIONS_INIT(lode_bootstrap_options, bootstrap_defaults)

LODE_API int lode_bootstrap_compute(const lode_correlation* corr, const lode_model_options* fit,
                                    const lode_bootstrap_options* opts, lode_bootstrap** out) {
  return compute_handle(corr, "corr", out, [&] {
    // Every option is read and checked before any long work.
    FitSetup setup = read_fit_options(fit, corr);
    if (setup.factors < 1)
      fail(LODE_E_INVALID_ARGUMENT,
           fmt::format("the bootstrap needs the number of factors (lode_model_options.factors); it is {}", setup.factors));
    const BootstrapOptions bo = read_bootstrap_options(opts, corr);
    const DataContent& data = *corr->data;
    require_rows(data, "the bootstrap resamples respondents");
    ExtractionOptions eo = setup.extraction;
    eo.n_obs = 0;  // each computation takes the sample size behind its own correlations
    RotationOptions ro;
    ro.method = RotationMethod::none;
    if (setup.rotation) ro = *setup.rotation;
    ro.item_names = corr->options.item_names;

    auto b = std::make_unique<lode_bootstrap>();
    b->result = bootstrap_factor_solution(data.values, setup.factors, eo, ro, bo);
    b->items = b->result.loadings.rows();
    b->factors = b->result.loadings.cols();
    b->oblique = setup.factors >= 2 && is_oblique(ro.method);
    b->kept = bo.keep_replicates;
    return b;
  });
}

LODE_API void lode_bootstrap_free(lode_bootstrap* result) { delete result; }

LODE_KEY_GETTERS(lode_bootstrap, lode_bootstrap, bootstrap_handle, bootstrap_matrices, bootstrap_values, bootstrap_texts)

}  // extern "C"
