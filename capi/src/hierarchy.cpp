// The Schmid-Leiman transformation and the omegas of a general factor through the C ABI: its options
// (one field list), the lode_schmid_leiman handle and its key tables read by the generic getters.
#include "boundary.hpp"
#include "handles.hpp"
#include "keys.hpp"
#include "model.hpp"
#include "options.hpp"
#include "results.hpp"

#include "lode/schmid_leiman.hpp"

using namespace lode;
using namespace lode::capi;

struct lode_schmid_leiman {
  SchmidLeimanResult result;
};

namespace {

// lode_schmid_leiman_options: field, default. The second-order fit is minimum residual (the core's
// default); its cap and tolerance are the core's.
#define LODE_SCHMID_LEIMAN_OPTIONS_FIELDS(F) \
  F(second_order, LODE_EXTRACTION_MINRES)    \
  F(max_iterations, core.max_iterations)     \
  F(tolerance, core.tolerance)

LODE_OPTIONS_FUNCTIONS(lode_schmid_leiman_options, LODE_SCHMID_LEIMAN_OPTIONS_FIELDS, SchmidLeimanOptions,
                       schmid_leiman_defaults, merged_schmid_leiman_options)

SchmidLeimanOptions read_schmid_leiman_options(const lode_schmid_leiman_options* opts) {
  const lode_schmid_leiman_options o = merged_schmid_leiman_options(opts);
  SchmidLeimanOptions so;
  so.second_order = extraction_method_of(o.second_order);
  if (so.second_order == ExtractionMethod::principal_components)
    fail(LODE_E_INVALID_ARGUMENT, "the second-order fit must be a factor analysis (ML, principal axis or minimum residual)");
  if (o.max_iterations < 1)
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("max_iterations must be at least 1; it is {}", o.max_iterations));
  if (!(o.tolerance > 0.0 && o.tolerance < 1.0))
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("tolerance must be above 0 and below 1; it is {}", o.tolerance));
  so.max_iterations = o.max_iterations;
  so.tolerance = o.tolerance;
  return so;
}

constexpr HandleNames schmid_leiman_handle{"lode_schmid_leiman", "lode_schmid_leiman", "result"};

using SL = lode_schmid_leiman;
constexpr MatrixKey<SL> schmid_leiman_matrices[] = {
    {LODE_SCHMID_LEIMAN_GENERAL, [](const SL& s) -> Matrix { return s.result.general; }},
    {LODE_SCHMID_LEIMAN_GROUP, [](const SL& s) -> Matrix { return s.result.group; }},
    {LODE_SCHMID_LEIMAN_UNIQUENESSES, [](const SL& s) -> Matrix { return s.result.uniquenesses; }},
    {LODE_SCHMID_LEIMAN_SECOND_ORDER_LOADINGS, [](const SL& s) -> Matrix { return s.result.second_order_loadings; }},
    {LODE_SCHMID_LEIMAN_OMEGA_SUBSCALES, [](const SL& s) -> Matrix { return s.result.omega_subscales; }},
    {LODE_SCHMID_LEIMAN_SUBSCALE_OMEGA_TOTAL, [](const SL& s) -> Matrix { return s.result.subscale_omega_total; }},
    {LODE_SCHMID_LEIMAN_ASSIGNMENT, [](const SL& s) -> Matrix { return vector_of(s.result.assignment); }},
};

constexpr ValueKey<SL> schmid_leiman_values[] = {
    {LODE_SCHMID_LEIMAN_OMEGA_TOTAL, [](const SL& s) { return s.result.omega_total; }},
    {LODE_SCHMID_LEIMAN_OMEGA_HIERARCHICAL, [](const SL& s) { return s.result.omega_hierarchical; }},
    {LODE_SCHMID_LEIMAN_ECV, [](const SL& s) { return s.result.ecv; }},
    {LODE_SCHMID_LEIMAN_SECOND_ORDER_MAX_RESIDUAL, [](const SL& s) { return s.result.second_order_max_residual; }},
    {LODE_SCHMID_LEIMAN_SECOND_ORDER_CONVERGED, [](const SL& s) { return flag(s.result.second_order_convergence.converged); }},
    {LODE_SCHMID_LEIMAN_SECOND_ORDER_ITERATIONS,
     [](const SL& s) { return number(s.result.second_order_convergence.iterations); }},
};

constexpr TextKey<SL> schmid_leiman_texts[] = {
    {LODE_SCHMID_LEIMAN_NOTES, [](const SL& s) { return join_lines(s.result.notes); }},
};

}  // namespace

extern "C" {

LODE_OPTIONS_INIT(lode_schmid_leiman_options, schmid_leiman_defaults)

LODE_API int lode_schmid_leiman_compute(const lode_model* model, const lode_schmid_leiman_options* opts,
                                        const int64_t* assignment, int64_t count, lode_schmid_leiman** out) {
  return compute_handle(model, "model", out, [&] {
    SchmidLeimanOptions so = read_schmid_leiman_options(opts);
    so.item_names = model->item_names;
    so.assignment = assignment_of(*model, assignment, count);
    auto r = std::make_unique<lode_schmid_leiman>();
    r->result = schmid_leiman(model->rotation.pattern, model->rotation.factor_correlations, so);
    return r;
  });
}

LODE_API void lode_schmid_leiman_free(lode_schmid_leiman* result) { delete result; }

LODE_KEY_GETTERS(lode_schmid_leiman, lode_schmid_leiman, schmid_leiman_handle, schmid_leiman_matrices,
                 schmid_leiman_values, schmid_leiman_texts)

}  // extern "C"
