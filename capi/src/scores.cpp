// Factor scores through the C ABI: lode_scores_options and the lode_scores handle.
#include "boundary.hpp"
#include "handles.hpp"
#include "keys.hpp"
#include "model.hpp"
#include "options.hpp"
#include "results.hpp"

#include "lode/scores.hpp"

using namespace lode;
using namespace lode::capi;

struct lode_scores {
  FactorScores result;
};

namespace {

constexpr Code<ScoreMethod> estimator_codes[] = {
    {LODE_ESTIMATOR_REGRESSION, ScoreMethod::regression},
    {LODE_ESTIMATOR_BARTLETT, ScoreMethod::bartlett},
    {LODE_ESTIMATOR_CORRELATION_PRESERVING, ScoreMethod::correlation_preserving},
};

constexpr Code<MissingItemRule> gaps_codes[] = {
    {LODE_GAPS_FROM_ANSWERED, MissingItemRule::score_from_answered},
    {LODE_GAPS_LEAVE_MISSING, MissingItemRule::leave_missing},
};

// lode_scores_options: field, default (from the core's ScoreOptions).
#define LODE_SCORES_OPTIONS_FIELDS(F)                 \
  F(method, c_code(estimator_codes, core.method))     \
  F(missing, c_code(gaps_codes, core.missing))        \
  F(min_answered_share, core.min_answered_share)      \
  F(low_determinacy, core.low_determinacy)

LODE_OPTIONS_FUNCTIONS(lode_scores_options, LODE_SCORES_OPTIONS_FIELDS, ScoreOptions, scores_defaults,
                       merged_scores_options)

ScoreOptions read_scores_options(const lode_scores_options* opts) {
  const lode_scores_options o = merged_scores_options(opts);
  ScoreOptions so;
  so.method = core_value(estimator_codes, o.method, "score method");
  so.missing = core_value(gaps_codes, o.missing, "missing-item rule");
  if (!(o.min_answered_share > 0.0 && o.min_answered_share <= 1.0))
    fail(LODE_E_INVALID_ARGUMENT,
         fmt::format("min_answered_share must be above 0 and at most 1; it is {}", o.min_answered_share));
  so.min_answered_share = o.min_answered_share;
  if (!(o.low_determinacy >= 0.0 && o.low_determinacy <= 1.0))
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("low_determinacy must lie in [0, 1]; it is {}", o.low_determinacy));
  so.low_determinacy = o.low_determinacy;
  return so;
}

constexpr HandleNames scores_handle{"lode_scores", "lode_scores", "scores"};

constexpr MatrixKey<lode_scores> scores_matrices[] = {
    {LODE_SCORES_VALUES, [](const lode_scores& s) -> Matrix { return s.result.scores; }},
    {LODE_SCORES_WEIGHTS, [](const lode_scores& s) -> Matrix { return s.result.weights; }},
    {LODE_SCORES_DETERMINACY, [](const lode_scores& s) -> Matrix { return s.result.determinacy; }},
    {LODE_SCORES_VALIDITY, [](const lode_scores& s) -> Matrix { return s.result.validity; }},
    {LODE_SCORES_CORRELATIONS, [](const lode_scores& s) -> Matrix { return s.result.score_correlations; }},
    {LODE_SCORES_LOW_DETERMINACY, [](const lode_scores& s) -> Matrix { return vector_of(s.result.low_determinacy); }},
};

constexpr ValueKey<lode_scores> scores_values[] = {
    {LODE_SCORES_ROWS_TOTAL, [](const lode_scores& s) { return number(s.result.rows_total); }},
    {LODE_SCORES_ROWS_COMPLETE, [](const lode_scores& s) { return number(s.result.rows_complete); }},
    {LODE_SCORES_ROWS_PARTIAL, [](const lode_scores& s) { return number(s.result.rows_partial); }},
    {LODE_SCORES_ROWS_MISSING, [](const lode_scores& s) { return number(s.result.rows_missing); }},
};

constexpr TextKey<lode_scores> scores_texts[] = {
    {LODE_SCORES_NOTES, [](const lode_scores& s) { return join_lines(s.result.notes); }},
    {LODE_SCORES_CAUTIONS, [](const lode_scores&) { return std::string(score_cautions); }},
};

}  // namespace

extern "C" {

LODE_OPTIONS_INIT(lode_scores_options, scores_defaults)

LODE_API int lode_scores_compute(const lode_model* model, const lode_data* data, const lode_scores_options* opts,
                                 lode_scores** out) {
  return compute_handle(model, "model", out, [&] {
    ScoreOptions so = read_scores_options(opts);
    so.item_names = model->item_names;
    const DataContent* content = data ? data->content.get() : model->data.get();
    if (content == nullptr)
      fail(LODE_E_INVALID_ARGUMENT, "this model was fitted to a matrix, not to raw data: pass the respondents' data to score");
    if (data) require_rows(*content, "scores are computed for each respondent");
    else if (content->source != DataSource::raw)
      fail(LODE_E_INVALID_ARGUMENT, content->source == DataSource::summary
                                        ? "this model was fitted to a summary, which keeps no respondent's answers: "
                                          "pass the respondents' data to score"
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
    return s;
  });
}

LODE_API void lode_scores_free(lode_scores* scores) { delete scores; }

LODE_KEY_GETTERS(lode_scores, lode_scores, scores_handle, scores_matrices, scores_values, scores_texts)

}  // extern "C"
