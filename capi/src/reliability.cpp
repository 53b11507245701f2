// Reliability through the C ABI: Cronbach's alpha, McDonald's omega per factor of a model and for a
// single scale, and the lode_reliability handle that holds either kind of result.
#include "boundary.hpp"
#include "handles.hpp"
#include "keys.hpp"
#include "model.hpp"
#include "options.hpp"
#include "results.hpp"

#include "lode/reliability.hpp"

using namespace lode;
using namespace lode::capi;

struct lode_reliability {
  bool is_alpha = true;
  AlphaResult alpha;
  OmegaResult omega;
  Index factors = 0;
  bool single = false;  // omega of a single scale (lode_reliability_compute_scale_omega)
  SingleScaleOmega single_scale;
};

namespace {

const AlphaResult& alpha_of(const lode_reliability& r) {
  if (!r.is_alpha)
    fail(LODE_E_INVALID_ARGUMENT, "this key belongs to alpha results (lode_reliability_compute_alpha); this is an omega result");
  return r.alpha;
}

const OmegaResult& omega_of(const lode_reliability& r) {
  if (r.is_alpha)
    fail(LODE_E_INVALID_ARGUMENT, "this key belongs to omega results (lode_reliability_compute_omega, "
                                  "lode_reliability_compute_scale_omega); this is an alpha result");
  return r.omega;
}

const SingleScaleOmega& single_scale_of(const lode_reliability& r) {
  omega_of(r);
  if (!r.single)
    fail(LODE_E_INVALID_ARGUMENT, "this key belongs to single-scale omega results (lode_reliability_compute_scale_omega); "
                                  "read a model's loadings from the model");
  return r.single_scale;
}

// One number per scale of an omega result, as a column.
template <class Field>
Vector per_scale(const lode_reliability& r, Field field) {
  const auto& scales = omega_of(r).scales;
  Vector v(static_cast<Index>(scales.size()));
  for (std::size_t k = 0; k < scales.size(); ++k) v(static_cast<Index>(k)) = field(scales[k]);
  return v;
}

// lode_reliability_options: field, default. Keying as scored; no assignment (largest loading) and no
// item reverse-keyed unless the caller says so.
#define LODE_RELIABILITY_OPTIONS_FIELDS(F) \
  F(assignment, nullptr)                   \
  F(assignment_count, 0)                   \
  F(keying, LODE_KEYING_AS_SCORED)         \
  F(reverse, nullptr)                      \
  F(reverse_count, 0)

LODE_OPTIONS_FUNCTIONS(lode_reliability_options, LODE_RELIABILITY_OPTIONS_FIELDS, OmegaOptions, reliability_defaults,
                       merged_reliability_options)

// Omega of `model`'s scales under options already read (both per-factor omega calls end here).
std::unique_ptr<lode_reliability> model_omega(const lode_model& model, OmegaOptions oo) {
  oo.item_names = model.item_names;
  oo.factor_correlations = model.rotation.factor_correlations;
  auto r = std::make_unique<lode_reliability>();
  r->is_alpha = false;
  r->factors = model.rotation.pattern.cols();
  r->omega = omega_from_loadings(model.rotation.pattern, model.extraction.uniquenesses, oo);
  return r;
}

Matrix reversed_of(const lode_reliability& r) {
  const auto& o = omega_of(r);
  Vector v = Vector::Zero(static_cast<Index>(o.assignment.size()));
  for (std::size_t j = 0; j < o.reversed.size() && j < o.assignment.size(); ++j)
    v(static_cast<Index>(j)) = o.reversed[j] ? 1.0 : 0.0;
  return v;
}

constexpr HandleNames reliability_handle{"lode_reliability", "lode_reliability", "reliability"};

constexpr MatrixKey<lode_reliability> reliability_matrices[] = {
    {LODE_RELIABILITY_ALPHA_IF_DELETED, [](const lode_reliability& r) -> Matrix { return alpha_of(r).alpha_if_deleted; }},
    {LODE_RELIABILITY_ALPHA_STANDARDIZED_IF_DELETED,
     [](const lode_reliability& r) -> Matrix { return alpha_of(r).alpha_standardized_if_deleted; }},
    {LODE_RELIABILITY_ALPHA_ITEM_TOTAL, [](const lode_reliability& r) -> Matrix { return alpha_of(r).item_total_correlation; }},
    {LODE_RELIABILITY_ALPHA_ITEM_MEANS, [](const lode_reliability& r) -> Matrix { return alpha_of(r).item_means; }},
    {LODE_RELIABILITY_ALPHA_ITEM_SDS, [](const lode_reliability& r) -> Matrix { return alpha_of(r).item_sds; }},
    {LODE_RELIABILITY_OMEGA, [](const lode_reliability& r) -> Matrix { return per_scale(r, [](const ScaleOmega& s) { return s.omega; }); }},
    {LODE_RELIABILITY_OMEGA_ASSIGNMENT, [](const lode_reliability& r) -> Matrix { return vector_of(omega_of(r).assignment); }},
    {LODE_RELIABILITY_OMEGA_SUM_LOADINGS,
     [](const lode_reliability& r) -> Matrix { return per_scale(r, [](const ScaleOmega& s) { return s.sum_loadings; }); }},
    {LODE_RELIABILITY_OMEGA_SUM_UNIQUENESSES,
     [](const lode_reliability& r) -> Matrix { return per_scale(r, [](const ScaleOmega& s) { return s.sum_uniquenesses; }); }},
    {LODE_RELIABILITY_OMEGA_LOADINGS, [](const lode_reliability& r) -> Matrix { return single_scale_of(r).loadings; }},
    {LODE_RELIABILITY_OMEGA_UNIQUENESSES, [](const lode_reliability& r) -> Matrix { return single_scale_of(r).uniquenesses; }},
    {LODE_RELIABILITY_OMEGA_FACTOR_SHARE,
     [](const lode_reliability& r) -> Matrix { return per_scale(r, [](const ScaleOmega& s) { return s.factor_share; }); }},
    {LODE_RELIABILITY_OMEGA_SCALE_VARIANCE,
     [](const lode_reliability& r) -> Matrix { return per_scale(r, [](const ScaleOmega& s) { return s.scale_variance; }); }},
    {LODE_RELIABILITY_REVERSED, [](const lode_reliability& r) -> Matrix { return reversed_of(r); }},
};

constexpr ValueKey<lode_reliability> reliability_values[] = {
    {LODE_RELIABILITY_ALPHA, [](const lode_reliability& r) { return alpha_of(r).alpha; }},
    {LODE_RELIABILITY_ALPHA_STANDARDIZED, [](const lode_reliability& r) { return alpha_of(r).alpha_standardized; }},
    {LODE_RELIABILITY_ALPHA_MEAN_INTER_ITEM, [](const lode_reliability& r) { return alpha_of(r).mean_inter_item_correlation; }},
    {LODE_RELIABILITY_ALPHA_ROWS_TOTAL, [](const lode_reliability& r) { return number(alpha_of(r).rows_total); }},
    {LODE_RELIABILITY_ALPHA_ROWS_USED, [](const lode_reliability& r) { return number(alpha_of(r).rows_used); }},
    {LODE_RELIABILITY_ALPHA_ITEMS, [](const lode_reliability& r) { return number(alpha_of(r).items); }},
    {LODE_RELIABILITY_OMEGA_CONVERGED,
     [](const lode_reliability& r) {
       omega_of(r);
       return flag(!r.single || r.single_scale.convergence.converged);
     }},
};

constexpr TextKey<lode_reliability> reliability_texts[] = {
    {LODE_RELIABILITY_NOTES, [](const lode_reliability& r) { return join_lines(r.is_alpha ? r.alpha.notes : r.omega.notes); }},
};

}  // namespace

extern "C" {

LODE_API int lode_reliability_compute_alpha(const lode_data* data, lode_reliability** out) {
  return compute_handle(data, "data", out, [&] {
    require_rows(*data->content, "alpha is computed from each respondent's sum of the items");
    AlphaOptions ao;
    ao.item_names = data->content->item_names;
    auto r = std::make_unique<lode_reliability>();
    r->is_alpha = true;
    r->alpha = cronbach_alpha(data->content->values, ao);
    return r;
  });
}

LODE_API int lode_reliability_compute_omega(const lode_model* model, const int64_t* assignment, int64_t count,
                                            lode_reliability** out) {
  return compute_handle(model, "model", out, [&] {
    OmegaOptions oo;
    oo.assignment = assignment_of(*model, assignment, count);
    return model_omega(*model, std::move(oo));
  });
}

LODE_OPTIONS_INIT(lode_reliability_options, reliability_defaults)

LODE_API int lode_reliability_compute_keyed_omega(const lode_model* model, const lode_reliability_options* opts,
                                                  lode_reliability** out) {
  return compute_handle(model, "model", out, [&] {
    const lode_reliability_options o = merged_reliability_options(opts);
    OmegaOptions oo;
    oo.assignment = assignment_of(*model, o.assignment, o.assignment_count);
    switch (o.keying) {
      case LODE_KEYING_AS_SCORED: break;
      case LODE_KEYING_REVERSE_NEGATIVE: oo.reverse_negative_loaders = true; break;
      default: fail(LODE_E_INVALID_ARGUMENT, fmt::format("unknown keying {}", o.keying));
    }
    const Index items = model->rotation.pattern.rows();
    if (o.reverse == nullptr && o.reverse_count != 0)
      fail(LODE_E_INVALID_ARGUMENT, fmt::format("option 'reverse' is NULL but reverse_count is {}", o.reverse_count));
    if (o.reverse != nullptr) {
      if (o.reverse_count != items)
        fail(LODE_E_INVALID_ARGUMENT, fmt::format("{} reverse-keyed flags were given for {} items", o.reverse_count, items));
      for (int64_t j = 0; j < o.reverse_count; ++j) oo.reverse_keyed.push_back(o.reverse[j] != 0);
    }
    return model_omega(*model, std::move(oo));
  });
}

LODE_API int lode_reliability_compute_scale_omega(const lode_correlation* corr, const lode_model_options* opts,
                                                  lode_reliability** out) {
  return compute_handle(corr, "corr", out, [&] {
    const ExtractionOptions eo = read_extraction_options(opts, corr);
    auto r = std::make_unique<lode_reliability>();
    r->is_alpha = false;
    r->single = true;
    r->factors = 1;
    r->single_scale = omega_single_scale(corr->result.matrix, eo);
    const auto& s = r->single_scale;
    ScaleOmega scale;
    scale.factor = 0;
    for (Index j = 0; j < s.loadings.size(); ++j) {
      scale.items.push_back(j);
      r->omega.assignment.push_back(0);
    }
    scale.sum_loadings = s.loadings.sum();
    scale.sum_uniquenesses = s.uniquenesses.sum();
    scale.omega = s.omega;
    scale.factor_share = s.omega;  // one factor: omega total and the factor's share agree
    scale.scale_variance = scale.sum_loadings * scale.sum_loadings + scale.sum_uniquenesses;
    r->omega.scales.push_back(scale);
    r->omega.notes = s.notes;
    return r;
  });
}

LODE_API void lode_reliability_free(lode_reliability* reliability) { delete reliability; }

LODE_KEY_GETTERS(lode_reliability, lode_reliability, reliability_handle, reliability_matrices, reliability_values, reliability_texts)

}  // extern "C"
