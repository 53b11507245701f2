// The restricted (confirmatory) factor model through the C ABI: its options (one field list), the
// lode_restricted_fit handle and its key tables read by the generic getters; and the analysis that
// the split-sample replication and the hold-out check repeat.
#include "restricted_fit.hpp"

#include "boundary.hpp"
#include "keys.hpp"
#include "model.hpp"
#include "options.hpp"
#include "results.hpp"

#include <memory>

using namespace lode;
using namespace lode::capi;

namespace {

// lode_restricted_fit_options: field, default (all the core's).
#define LODE_RESTRICTED_FIT_OPTIONS_FIELDS(F) \
  F(max_iterations, core.max_iterations)      \
  F(tolerance, core.tolerance)                \
  F(min_uniqueness, core.min_uniqueness)      \
  F(interval_level, core.interval_level)

LODE_OPTIONS_FUNCTIONS(lode_restricted_fit_options, LODE_RESTRICTED_FIT_OPTIONS_FIELDS, RestrictedFitOptions,
                       restricted_defaults, merged_restricted_options)

Matrix heywood_of(const RestrictedFitResult& r) {
  Matrix h = Matrix::Zero(r.uniquenesses.size(), 1);
  for (const auto& item : r.heywood) h(item.item, 0) = 1.0;
  return h;
}

constexpr HandleNames restricted_fit_handle{"lode_restricted_fit", "lode_restricted_fit", "fit"};

using RF = lode_restricted_fit;
constexpr MatrixKey<RF> restricted_fit_matrices[] = {
    {LODE_RESTRICTED_FIT_LOADINGS, [](const RF& f) -> Matrix { return f.result.loadings; }},
    {LODE_RESTRICTED_FIT_LOADINGS_SE, [](const RF& f) -> Matrix { return f.result.loadings_se; }},
    {LODE_RESTRICTED_FIT_FACTOR_CORRELATIONS, [](const RF& f) -> Matrix { return f.result.factor_correlations; }},
    {LODE_RESTRICTED_FIT_FACTOR_CORRELATIONS_SE, [](const RF& f) -> Matrix { return f.result.factor_correlations_se; }},
    {LODE_RESTRICTED_FIT_UNIQUENESSES, [](const RF& f) -> Matrix { return f.result.uniquenesses; }},
    {LODE_RESTRICTED_FIT_UNIQUENESSES_SE, [](const RF& f) -> Matrix { return f.result.uniquenesses_se; }},
    {LODE_RESTRICTED_FIT_HEYWOOD, [](const RF& f) { return heywood_of(f.result); }},
    {LODE_RESTRICTED_FIT_PATTERN, [](const RF& f) -> Matrix { return f.result.pattern; }},
};

constexpr ValueKey<RF> restricted_fit_values[] = {
    {LODE_RESTRICTED_FIT_ITEMS, [](const RF& f) { return number(f.result.loadings.rows()); }},
    {LODE_RESTRICTED_FIT_FACTORS, [](const RF& f) { return number(f.result.loadings.cols()); }},
    {LODE_RESTRICTED_FIT_N_OBS, [](const RF& f) { return number(f.result.n_obs); }},
    {LODE_RESTRICTED_FIT_CONVERGED, [](const RF& f) { return flag(f.result.convergence.converged); }},
    {LODE_RESTRICTED_FIT_ITERATIONS, [](const RF& f) { return static_cast<double>(f.result.convergence.iterations); }},
    {LODE_RESTRICTED_FIT_FINAL_CHANGE, [](const RF& f) { return f.result.convergence.final_change; }},
    {LODE_RESTRICTED_FIT_TOLERANCE, [](const RF& f) { return f.result.convergence.tolerance; }},
    {LODE_RESTRICTED_FIT_HEYWOOD_COUNT, [](const RF& f) { return number(static_cast<Index>(f.result.heywood.size())); }},
    {LODE_RESTRICTED_FIT_FREE_PARAMETERS, [](const RF& f) { return static_cast<double>(f.result.free_parameters); }},
    {LODE_RESTRICTED_FIT_DISCREPANCY, [](const RF& f) { return f.result.discrepancy; }},
    {LODE_RESTRICTED_FIT_CHI_SQUARE, [](const RF& f) { return f.result.chi_square; }},
    {LODE_RESTRICTED_FIT_DF, [](const RF& f) { return static_cast<double>(f.result.df); }},
    {LODE_RESTRICTED_FIT_P_VALUE, [](const RF& f) { return f.result.p_value; }},
    {LODE_RESTRICTED_FIT_CFI, [](const RF& f) { return f.result.cfi; }},
    {LODE_RESTRICTED_FIT_TLI, [](const RF& f) { return f.result.tli; }},
    {LODE_RESTRICTED_FIT_RMSEA, [](const RF& f) { return f.result.rmsea; }},
    {LODE_RESTRICTED_FIT_RMSEA_LOWER, [](const RF& f) { return f.result.rmsea_lower; }},
    {LODE_RESTRICTED_FIT_RMSEA_UPPER, [](const RF& f) { return f.result.rmsea_upper; }},
    {LODE_RESTRICTED_FIT_SRMR, [](const RF& f) { return f.result.srmr; }},
    {LODE_RESTRICTED_FIT_BIC, [](const RF& f) { return f.result.bic; }},
    {LODE_RESTRICTED_FIT_NULL_CHI_SQUARE, [](const RF& f) { return f.result.null_chi_square; }},
    {LODE_RESTRICTED_FIT_NULL_DF, [](const RF& f) { return static_cast<double>(f.result.null_df); }},
    {LODE_RESTRICTED_FIT_PROPER_CORRELATIONS, [](const RF& f) { return flag(f.result.factor_correlations_proper); }},
};

constexpr TextKey<RF> restricted_fit_texts[] = {
    {LODE_RESTRICTED_FIT_NOTES, [](const RF& f) { return join_lines(f.result.notes); }},
};

}  // namespace

RestrictedFitOptions lode::capi::read_restricted_options(const lode_restricted_fit_options* opts) {
  const lode_restricted_fit_options o = merged_restricted_options(opts);
  if (o.max_iterations < 1 || o.max_iterations > 1000000)
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("max_iterations must be between 1 and 1000000; it is {}", o.max_iterations));
  require_open_unit(o.tolerance, "tolerance");
  if (!(o.min_uniqueness >= 0.0 && o.min_uniqueness < 1.0))
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("min_uniqueness must lie in [0, 1); it is {}", o.min_uniqueness));
  require_open_unit(o.interval_level, "interval_level");
  RestrictedFitOptions r;
  r.max_iterations = o.max_iterations;
  r.tolerance = o.tolerance;
  r.min_uniqueness = o.min_uniqueness;
  r.interval_level = o.interval_level;
  return r;
}

SplitAnalysis lode::capi::read_split_analysis(const lode_correlation* corr, const lode_model_options* fit,
                                              const char* what) {
  FitSetup setup = read_fit_options(fit, corr);
  if (setup.factors < 1)
    fail(LODE_E_INVALID_ARGUMENT,
         fmt::format("{} needs the number of factors (lode_model_options.factors); it is {}", what, setup.factors));
  require_rows(*corr->data, fmt::format("{} splits the respondents", what).c_str());
  SplitAnalysis a;
  a.factors = setup.factors;
  a.extraction = setup.extraction;
  a.extraction.n_obs = 0;  // each part takes the sample size behind its own correlations
  a.rotation.method = RotationMethod::none;
  if (setup.rotation) a.rotation = *setup.rotation;
  a.rotation.item_names = corr->options.item_names;
  return a;
}

extern "C" {

LODE_OPTIONS_INIT(lode_restricted_fit_options, restricted_defaults)

LODE_API int lode_restricted_fit_compute(const lode_correlation* corr, const double* pattern, int64_t items,
                                         int64_t factors, int64_t row_stride, int64_t col_stride,
                                         const lode_restricted_fit_options* opts, lode_restricted_fit** out) {
  return compute_handle(corr, "corr", out, [&] {
    const Matrix p = read_matrix(pattern, items, factors, row_stride, col_stride, "pattern");
    RestrictedFitOptions o = read_restricted_options(opts);
    o.n_obs = corr->result.n_obs;
    o.item_names = corr->options.item_names;
    if (o.n_obs < 2)
      fail(LODE_E_INSUFFICIENT_DATA,
           "the restricted fit needs the number of respondents behind the correlations; give n_obs with the matrix");
    auto f = std::make_unique<lode_restricted_fit>();
    f->result = fit_restricted(corr->result.matrix, p, o);
    return f;
  });
}

LODE_API void lode_restricted_fit_free(lode_restricted_fit* fit) { delete fit; }

LODE_KEY_GETTERS(lode_restricted_fit, lode_restricted_fit, restricted_fit_handle, restricted_fit_matrices,
                 restricted_fit_values, restricted_fit_texts)

}  // extern "C"
