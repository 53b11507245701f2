// Factor scores, reliability (alpha, omega) and the comparison of two solutions through the C ABI.
#include "boundary.hpp"
#include "handles.hpp"
#include "results.hpp"
#include "model.hpp"

#include "lode/congruence.hpp"
#include "lode/reliability.hpp"
#include "lode/scores.hpp"

#include <cmath>
#include <limits>

using namespace lode;
using namespace lode::capi;

// ---- scores, reliability, comparison ---------------------------------------------------------------

struct lode_scores {
  FactorScores result;
};

struct lode_reliability {
  bool is_alpha = true;
  AlphaResult alpha;
  OmegaResult omega;
  Index factors = 0;
  bool single = false;       // omega of a single scale (lode_reliability_compute_scale_omega)
  SingleScaleOmega single_scale;
};

struct lode_comparison {
  FactorMatch match;
};

namespace {

lode_scores_options score_defaults() {
  lode_scores_options d{};
  d.struct_size = sizeof d;
  d.method = LODE_ESTIMATOR_REGRESSION;
  d.missing = LODE_GAPS_FROM_ANSWERED;
  d.min_answered_share = 0.5;
  d.low_determinacy = 0.80;
  return d;
}

Vector of_indices(const std::vector<Index>& v) {
  Vector out(static_cast<Index>(v.size()));
  for (std::size_t k = 0; k < v.size(); ++k) out(static_cast<Index>(k)) = static_cast<double>(v[k]);
  return out;
}

// Omega of `model`'s scales under options already read (both omega calls end here).
lode_reliability* model_omega(const lode_model* model, const int64_t* assignment, int64_t count, OmegaOptions oo) {
  const Index items = model->rotation.pattern.rows(), factors = model->rotation.pattern.cols();
  oo.item_names = model->item_names;
  if (assignment == nullptr && count != 0)
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("argument 'assignment' is NULL but count is {}", count));
  if (assignment != nullptr) {
    if (count != items) fail(LODE_E_INVALID_ARGUMENT, fmt::format("{} assignments were given for {} items", count, items));
    for (int64_t j = 0; j < count; ++j) {
      if (assignment[j] < -1 || assignment[j] >= factors)
        fail(LODE_E_INVALID_ARGUMENT, fmt::format("{} is assigned to factor {}; factors are 0 to {} (or -1 for none)",
                                                  item_label(model->item_names, static_cast<Index>(j)), assignment[j],
                                                  factors - 1));
      oo.assignment.push_back(static_cast<Index>(assignment[j]));
    }
  }
  auto r = std::make_unique<lode_reliability>();
  r->is_alpha = false;
  r->factors = factors;
  oo.factor_correlations = model->rotation.factor_correlations;
  r->omega = omega_from_loadings(model->rotation.pattern, model->extraction.uniquenesses, oo);
  return r.release();
}

lode_reliability_options reliability_defaults() {
  lode_reliability_options d{};
  d.struct_size = sizeof d;
  d.keying = LODE_KEYING_AS_SCORED;
  return d;
}

}  // namespace

extern "C" {

LODE_API int lode_scores_options_init(lode_scores_options* opts, size_t struct_size) {
  return guarded([&] { init_options(opts, struct_size, score_defaults(), "lode_scores_options"); });
}

LODE_API int lode_scores_compute(const lode_model* model, const lode_data* data, const lode_scores_options* opts,
                        lode_scores** out) {
  return guarded([&] {
    require_pointer(model, "model");
    require_pointer(out, "out");
    *out = nullptr;
    lode_scores_options o = score_defaults();
    if (opts) {
      check_options_size(opts, "lode_scores_options");
      LODE_OPTION_FIELD(o, opts, method);
      LODE_OPTION_FIELD(o, opts, missing);
      LODE_OPTION_FIELD(o, opts, min_answered_share);
      LODE_OPTION_FIELD(o, opts, low_determinacy);
    }
    ScoreOptions so;
    switch (o.method) {
      case LODE_ESTIMATOR_REGRESSION: so.method = ScoreMethod::regression; break;
      case LODE_ESTIMATOR_BARTLETT: so.method = ScoreMethod::bartlett; break;
      case LODE_ESTIMATOR_CORRELATION_PRESERVING: so.method = ScoreMethod::correlation_preserving; break;
      default: fail(LODE_E_INVALID_ARGUMENT, fmt::format("unknown score method {}", o.method));
    }
    switch (o.missing) {
      case LODE_GAPS_FROM_ANSWERED: so.missing = MissingItemRule::score_from_answered; break;
      case LODE_GAPS_LEAVE_MISSING: so.missing = MissingItemRule::leave_missing; break;
      default: fail(LODE_E_INVALID_ARGUMENT, fmt::format("unknown missing-item rule {}", o.missing));
    }
    if (!(o.min_answered_share > 0.0 && o.min_answered_share <= 1.0))
      fail(LODE_E_INVALID_ARGUMENT,
           fmt::format("min_answered_share must be above 0 and at most 1; it is {}", o.min_answered_share));
    so.min_answered_share = o.min_answered_share;
    if (!(o.low_determinacy >= 0.0 && o.low_determinacy <= 1.0))
      fail(LODE_E_INVALID_ARGUMENT, fmt::format("low_determinacy must lie in [0, 1]; it is {}", o.low_determinacy));
    so.low_determinacy = o.low_determinacy;
    so.item_names = model->item_names;
    const DataContent* content = data ? data->content.get() : model->data.get();
    if (content == nullptr || content->source != DataSource::raw)
      fail(LODE_E_INVALID_ARGUMENT,
           data ? "scores need raw data (respondents in rows), not a correlation or covariance matrix"
                : "this model was fitted to a matrix, not to raw data: pass the respondents' data to score");
    if (content->values.cols() != model->correlation.cols())
      fail(LODE_E_INVALID_ARGUMENT, fmt::format("the data have {} items but the model has {}",
                                                content->values.cols(), model->correlation.cols()));
    // Every respondent, the fit's own or new, is standardised with the fit's means and standard
    // deviations (a model fitted to a matrix has none: then the data scored give their own).
    so.means = model->means;
    so.sds = model->sds;
    const Matrix phi = model->rotation.oblique ? model->rotation.factor_correlations : Matrix();
    auto s = std::make_unique<lode_scores>();
    s->result = factor_scores(content->values, model->correlation, model->rotation.pattern, phi,
                              model->extraction.uniquenesses, so);
    *out = s.release();
  });
}

LODE_API void lode_scores_free(lode_scores* scores) { delete scores; }

LODE_API int lode_scores_matrix(const lode_scores* scores, int key, double* out, size_t capacity, int64_t* rows,
                                int64_t* cols) {
  return guarded([&] {
    require_pointer(scores, "scores");
    const auto& r = scores->result;
    switch (key) {
      case LODE_SCORES_VALUES: write_matrix(r.scores, out, capacity, rows, cols); break;
      case LODE_SCORES_WEIGHTS: write_matrix(r.weights, out, capacity, rows, cols); break;
      case LODE_SCORES_DETERMINACY: write_matrix(r.determinacy, out, capacity, rows, cols); break;
      case LODE_SCORES_VALIDITY: write_matrix(r.validity, out, capacity, rows, cols); break;
      case LODE_SCORES_CORRELATIONS: write_matrix(r.score_correlations, out, capacity, rows, cols); break;
      case LODE_SCORES_LOW_DETERMINACY: {
        Vector v(static_cast<Index>(r.low_determinacy.size()));
        for (std::size_t k = 0; k < r.low_determinacy.size(); ++k) v(static_cast<Index>(k)) = r.low_determinacy[k];
        write_matrix(v, out, capacity, rows, cols);
        break;
      }
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_scores matrix (lode_scores_matrix)"));
    }
  });
}

LODE_API int lode_scores_value(const lode_scores* scores, int key, double* value) {
  return guarded([&] {
    require_pointer(scores, "scores");
    require_pointer(value, "value");
    const auto& r = scores->result;
    switch (key) {
      case LODE_SCORES_ROWS_TOTAL: *value = static_cast<double>(r.rows_total); break;
      case LODE_SCORES_ROWS_COMPLETE: *value = static_cast<double>(r.rows_complete); break;
      case LODE_SCORES_ROWS_PARTIAL: *value = static_cast<double>(r.rows_partial); break;
      case LODE_SCORES_ROWS_MISSING: *value = static_cast<double>(r.rows_missing); break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_scores number (lode_scores_value)"));
    }
  });
}

LODE_API int lode_scores_text(const lode_scores* scores, int key, char* out, size_t capacity, size_t* length) {
  return guarded([&] {
    require_pointer(scores, "scores");
    switch (key) {
      case LODE_SCORES_NOTES: write_text(join_lines(scores->result.notes), out, capacity, length); break;
      case LODE_SCORES_CAUTIONS: write_text(score_cautions, out, capacity, length); break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_scores text (lode_scores_text)"));
    }
  });
}

LODE_API int lode_reliability_compute_alpha(const lode_data* data, lode_reliability** out) {
  return guarded([&] {
    require_pointer(data, "data");
    require_pointer(out, "out");
    *out = nullptr;
    if (data->content->source != DataSource::raw)
      fail(LODE_E_INVALID_ARGUMENT, "alpha needs raw data (respondents in rows), not a correlation or covariance matrix");
    AlphaOptions ao;
    ao.item_names = data->content->item_names;
    auto r = std::make_unique<lode_reliability>();
    r->is_alpha = true;
    r->alpha = cronbach_alpha(data->content->values, ao);
    *out = r.release();
  });
}

LODE_API int lode_reliability_compute_omega(const lode_model* model, const int64_t* assignment, int64_t count,
                                 lode_reliability** out) {
  return guarded([&] {
    require_pointer(model, "model");
    require_pointer(out, "out");
    *out = nullptr;
    *out = model_omega(model, assignment, count, OmegaOptions{});
  });
}

LODE_API int lode_reliability_options_init(lode_reliability_options* opts, size_t struct_size) {
  return guarded([&] { init_options(opts, struct_size, reliability_defaults(), "lode_reliability_options"); });
}

LODE_API int lode_reliability_compute_keyed_omega(const lode_model* model, const lode_reliability_options* opts,
                                                  lode_reliability** out) {
  return guarded([&] {
    require_pointer(model, "model");
    require_pointer(out, "out");
    *out = nullptr;
    lode_reliability_options o = reliability_defaults();
    if (opts) {
      check_options_size(opts, "lode_reliability_options");
      LODE_OPTION_FIELD(o, opts, assignment);
      LODE_OPTION_FIELD(o, opts, assignment_count);
      LODE_OPTION_FIELD(o, opts, keying);
      LODE_OPTION_FIELD(o, opts, reverse);
      LODE_OPTION_FIELD(o, opts, reverse_count);
    }
    OmegaOptions oo;
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
    *out = model_omega(model, o.assignment, o.assignment_count, std::move(oo));
  });
}

LODE_API int lode_reliability_compute_scale_omega(const lode_correlation* corr, const lode_model_options* opts,
                                     lode_reliability** out) {
  return guarded([&] {
    require_pointer(corr, "corr");
    require_pointer(out, "out");
    *out = nullptr;
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
    *out = r.release();
  });
}

LODE_API void lode_reliability_free(lode_reliability* reliability) { delete reliability; }

LODE_API int lode_reliability_matrix(const lode_reliability* rel, int key, double* out, size_t capacity,
                                     int64_t* rows, int64_t* cols) {
  return guarded([&] {
    require_pointer(rel, "reliability");
    const bool alpha_key = key >= LODE_ALPHA_IF_DELETED && key <= LODE_ALPHA_ITEM_SDS;
    const bool omega_key = (key >= LODE_OMEGA && key <= LODE_OMEGA_UNIQUENESSES) ||
                           key == LODE_RELIABILITY_OMEGA_FACTOR_SHARE || key == LODE_RELIABILITY_OMEGA_SCALE_VARIANCE ||
                           key == LODE_RELIABILITY_REVERSED;
    if ((alpha_key && !rel->is_alpha) || (omega_key && rel->is_alpha))
      fail(LODE_E_INVALID_ARGUMENT, fmt::format("key {} belongs to {} results; this is {} result", key,
                                                alpha_key ? "alpha" : "omega", rel->is_alpha ? "an alpha" : "an omega"));
    const auto& a = rel->alpha;
    auto per_scale = [&](auto field) {
      Vector v(static_cast<Index>(rel->omega.scales.size()));
      for (std::size_t k = 0; k < rel->omega.scales.size(); ++k) v(static_cast<Index>(k)) = field(rel->omega.scales[k]);
      return v;
    };
    switch (key) {
      case LODE_ALPHA_IF_DELETED: write_matrix(a.alpha_if_deleted, out, capacity, rows, cols); break;
      case LODE_ALPHA_STANDARDIZED_IF_DELETED: write_matrix(a.alpha_standardized_if_deleted, out, capacity, rows, cols); break;
      case LODE_ALPHA_ITEM_TOTAL: write_matrix(a.item_total_correlation, out, capacity, rows, cols); break;
      case LODE_ALPHA_ITEM_MEANS: write_matrix(a.item_means, out, capacity, rows, cols); break;
      case LODE_ALPHA_ITEM_SDS: write_matrix(a.item_sds, out, capacity, rows, cols); break;
      case LODE_OMEGA: write_matrix(per_scale([](const ScaleOmega& s) { return s.omega; }), out, capacity, rows, cols); break;
      case LODE_OMEGA_ASSIGNMENT: write_matrix(of_indices(rel->omega.assignment), out, capacity, rows, cols); break;
      case LODE_RELIABILITY_REVERSED: {
        Vector v = Vector::Zero(static_cast<Index>(rel->omega.assignment.size()));
        for (std::size_t j = 0; j < rel->omega.reversed.size(); ++j) v(static_cast<Index>(j)) = rel->omega.reversed[j] ? 1.0 : 0.0;
        write_matrix(v, out, capacity, rows, cols);
        break;
      }
      case LODE_OMEGA_SUM_LOADINGS:
        write_matrix(per_scale([](const ScaleOmega& s) { return s.sum_loadings; }), out, capacity, rows, cols);
        break;
      case LODE_OMEGA_SUM_UNIQUENESSES:
        write_matrix(per_scale([](const ScaleOmega& s) { return s.sum_uniquenesses; }), out, capacity, rows, cols);
        break;
      case LODE_RELIABILITY_OMEGA_FACTOR_SHARE:
        write_matrix(per_scale([](const ScaleOmega& s) { return s.factor_share; }), out, capacity, rows, cols);
        break;
      case LODE_RELIABILITY_OMEGA_SCALE_VARIANCE:
        write_matrix(per_scale([](const ScaleOmega& s) { return s.scale_variance; }), out, capacity, rows, cols);
        break;
      case LODE_OMEGA_LOADINGS:
      case LODE_OMEGA_UNIQUENESSES:
        if (!rel->single)
          fail(LODE_E_INVALID_ARGUMENT, fmt::format("key {} belongs to single-scale omega results "
                                                    "(lode_reliability_compute_scale_omega); read a model's loadings from the model", key));
        write_matrix(key == LODE_OMEGA_LOADINGS ? rel->single_scale.loadings : rel->single_scale.uniquenesses, out,
                     capacity, rows, cols);
        break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_reliability matrix (lode_reliability_matrix)"));
    }
  });
}

LODE_API int lode_reliability_value(const lode_reliability* rel, int key, double* value) {
  return guarded([&] {
    require_pointer(rel, "reliability");
    require_pointer(value, "value");
    if (key >= LODE_ALPHA && key <= LODE_ALPHA_ITEMS && !rel->is_alpha)
      fail(LODE_E_INVALID_ARGUMENT, fmt::format("key {} belongs to alpha results; this is an omega result", key));
    if (key == LODE_OMEGA_CONVERGED && rel->is_alpha)
      fail(LODE_E_INVALID_ARGUMENT, fmt::format("key {} belongs to omega results; this is an alpha result", key));
    const auto& a = rel->alpha;
    switch (key) {
      case LODE_ALPHA: *value = a.alpha; break;
      case LODE_ALPHA_STANDARDIZED: *value = a.alpha_standardized; break;
      case LODE_ALPHA_MEAN_INTER_ITEM: *value = a.mean_inter_item_correlation; break;
      case LODE_ALPHA_ROWS_TOTAL: *value = static_cast<double>(a.rows_total); break;
      case LODE_ALPHA_ROWS_USED: *value = static_cast<double>(a.rows_used); break;
      case LODE_ALPHA_ITEMS: *value = static_cast<double>(a.items); break;
      case LODE_OMEGA_CONVERGED: *value = (!rel->single || rel->single_scale.convergence.converged) ? 1.0 : 0.0; break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_reliability number (lode_reliability_value)"));
    }
  });
}

LODE_API int lode_reliability_text(const lode_reliability* rel, int key, char* out, size_t capacity, size_t* length) {
  return guarded([&] {
    require_pointer(rel, "reliability");
    if (key != LODE_RELIABILITY_NOTES)
      fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_reliability text (lode_reliability_text)"));
    write_text(join_lines(rel->is_alpha ? rel->alpha.notes : rel->omega.notes), out, capacity, length);
  });
}

LODE_API int lode_comparison_compute(const double* a, const double* b, int64_t items, int64_t factors,
                                   int64_t a_row_stride, int64_t a_col_stride, int64_t b_row_stride,
                                   int64_t b_col_stride, lode_comparison** out) {
  return guarded([&] {
    require_pointer(out, "out");
    *out = nullptr;
    const Matrix ma = read_matrix(a, items, factors, a_row_stride, a_col_stride, "first loading matrix");
    const Matrix mb = read_matrix(b, items, factors, b_row_stride, b_col_stride, "second loading matrix");
    for (const Matrix* m : {&ma, &mb})
      for (Index j = 0; j < m->cols(); ++j)
        for (Index i = 0; i < m->rows(); ++i)
          if (!std::isfinite((*m)(i, j)))
            fail(LODE_E_INVALID_ARGUMENT, fmt::format("the {} loading matrix holds a missing or infinite value at row {}, "
                                                      "column {}", m == &ma ? "first" : "second", i + 1, j + 1));
    auto c = std::make_unique<lode_comparison>();
    c->match = match_factors(ma, mb);
    *out = c.release();
  });
}

LODE_API void lode_comparison_free(lode_comparison* comparison) { delete comparison; }

LODE_API int lode_comparison_matrix(const lode_comparison* comparison, int key, double* out, size_t capacity,
                                    int64_t* rows, int64_t* cols) {
  return guarded([&] {
    require_pointer(comparison, "comparison");
    const auto& m = comparison->match;
    switch (key) {
      case LODE_COMPARISON_CONGRUENCE: write_matrix(m.congruence, out, capacity, rows, cols); break;
      case LODE_COMPARISON_ORDER: write_matrix(of_indices(m.order), out, capacity, rows, cols); break;
      case LODE_COMPARISON_SIGNS: write_matrix(m.signs, out, capacity, rows, cols); break;
      case LODE_COMPARISON_MATCHED_CONGRUENCE: write_matrix(m.matched_congruence, out, capacity, rows, cols); break;
      case LODE_COMPARISON_ALIGNED: write_matrix(m.aligned, out, capacity, rows, cols); break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_comparison matrix (lode_comparison_matrix)"));
    }
  });
}

LODE_API int lode_comparison_text(const lode_comparison* comparison, int key, char* out, size_t capacity,
                                  size_t* length) {
  return guarded([&] {
    require_pointer(comparison, "comparison");
    if (key != LODE_COMPARISON_NOTES)
      fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_comparison text (lode_comparison_text)"));
    write_text(join_lines(comparison->match.notes), out, capacity, length);
  });
}

}  // extern "C"
