// The confirmatory check on held-out respondents through the C ABI: its options (one field list),
// the lode_holdout handle and its key tables read by the generic getters.
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

struct lode_holdout {
  HoldoutResult result;
  double share = 0.0, salient = 0.0;
};

namespace {

// lode_holdout_options: field, default (the core's; NULL restricted = its defaults).
#define LODE_HOLDOUT_OPTIONS_FIELDS(F) \
  F(share, core.share)                 \
  F(seed, core.seed)                   \
  F(salient, core.salient)             \
  F(restricted, nullptr)

LODE_OPTIONS_FUNCTIONS(lode_holdout_options, LODE_HOLDOUT_OPTIONS_FIELDS, HoldoutOptions, holdout_defaults,
                       merged_holdout_options)

HoldoutOptions read_holdout_options(const lode_holdout_options* opts, const lode_correlation& corr) {
  const lode_holdout_options o = merged_holdout_options(opts);
  require_open_unit(o.salient, "salient");
  HoldoutOptions ho;
  ho.share = o.share;
  ho.seed = o.seed;
  ho.salient = o.salient;
  ho.correlation = corr.options;
  ho.correlation.polychoric.progress = {};
  ho.restricted = read_restricted_options(o.restricted);
  return ho;
}

// The exploratory factor correlations (the identity when the rotation was orthogonal).
Matrix exploratory_phi(const HoldoutResult& r) {
  const Index k = r.exploratory.loadings.cols();
  return r.exploratory.factor_correlations.size() == 0 ? Matrix::Identity(k, k) : r.exploratory.factor_correlations;
}

constexpr HandleNames holdout_handle{"lode_holdout", "lode_holdout", "holdout"};

using HO = lode_holdout;
constexpr MatrixKey<HO> holdout_matrices[] = {
    {LODE_HOLDOUT_EXPLORATORY_LOADINGS, [](const HO& h) -> Matrix { return h.result.exploratory.loadings; }},
    {LODE_HOLDOUT_EXPLORATORY_FACTOR_CORRELATIONS, [](const HO& h) { return exploratory_phi(h.result); }},
    {LODE_HOLDOUT_PATTERN, [](const HO& h) -> Matrix { return h.result.pattern; }},
    {LODE_HOLDOUT_ITEMS_FITTED, [](const HO& h) -> Matrix { return vector_of(h.result.items_fitted); }},
    {LODE_HOLDOUT_ITEMS_LEFT_OUT, [](const HO& h) -> Matrix { return vector_of(h.result.items_left_out); }},
    {LODE_HOLDOUT_ROWS, [](const HO& h) -> Matrix { return vector_of(h.result.holdout_rows); }},
};

constexpr ValueKey<HO> holdout_values[] = {
    {LODE_HOLDOUT_N_EXPLORE, [](const HO& h) { return number(h.result.n_explore); }},
    {LODE_HOLDOUT_N_HOLDOUT, [](const HO& h) { return number(h.result.n_holdout); }},
    {LODE_HOLDOUT_SHARE, [](const HO& h) { return h.share; }},
    {LODE_HOLDOUT_SALIENT, [](const HO& h) { return h.salient; }},
};

constexpr TextKey<HO> holdout_texts[] = {
    {LODE_HOLDOUT_NOTES, [](const HO& h) { return join_lines(h.result.notes); }},
};

}  // namespace

extern "C" {

LODE_OPTIONS_INIT(lode_holdout_options, holdout_defaults)

LODE_API int lode_holdout_compute(const lode_correlation* corr, const lode_model_options* fit,
                                  const lode_holdout_options* opts, lode_holdout** out) {
  return compute_handle(corr, "corr", out, [&] {
    const SplitAnalysis a = read_split_analysis(corr, fit, "the hold-out check");
    const HoldoutOptions ho = read_holdout_options(opts, *corr);
    auto h = std::make_unique<lode_holdout>();
    h->result = holdout_check(corr->data->values, a.factors, a.extraction, a.rotation, ho);
    h->share = ho.share;
    h->salient = ho.salient;
    return h;
  });
}

LODE_API int lode_restricted_fit_from_holdout(const lode_holdout* holdout, lode_restricted_fit** out) {
  return compute_handle(holdout, "holdout", out, [&] {
    auto f = std::make_unique<lode_restricted_fit>();
    f->result = holdout->result.confirmatory;
    return f;
  });
}

LODE_API void lode_holdout_free(lode_holdout* holdout) { delete holdout; }

LODE_KEY_GETTERS(lode_holdout, lode_holdout, holdout_handle, holdout_matrices, holdout_values, holdout_texts)

}  // extern "C"
