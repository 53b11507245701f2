// Correlations through the C ABI: lode_correlation_options, computing the matrix from any kind of
// data handle, and the lode_correlation handle.
#include "boundary.hpp"
#include "handles.hpp"
#include "keys.hpp"
#include "options.hpp"
#include "results.hpp"

#include "lode/polychoric.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

using namespace lode;
using namespace lode::capi;

namespace {

constexpr Code<CorrelationKind> coefficient_codes[] = {
    {LODE_COEFFICIENT_PEARSON, CorrelationKind::pearson},
    {LODE_COEFFICIENT_SPEARMAN, CorrelationKind::spearman},
    {LODE_COEFFICIENT_POLYCHORIC, CorrelationKind::polychoric},
};

constexpr Code<MissingPolicy> missing_codes[] = {
    {LODE_MISSING_PAIRWISE, MissingPolicy::pairwise},
    {LODE_MISSING_LISTWISE, MissingPolicy::listwise},
    {LODE_MISSING_EM, MissingPolicy::em},
};

constexpr Code<ZeroCellPolicy> zero_cell_codes[] = {
    {LODE_ZERO_CELLS_NONE, ZeroCellPolicy::none},
    {LODE_ZERO_CELLS_AT_BOUND, ZeroCellPolicy::at_bound},
    {LODE_ZERO_CELLS_ALWAYS, ZeroCellPolicy::always},
};

// lode_correlation_options: field, default (from the core's CorrelationOptions).
#define LODE_CORRELATION_OPTIONS_FIELDS(F)                             \
  F(kind, c_code(coefficient_codes, core.kind))                        \
  F(missing, c_code(missing_codes, core.missing))                      \
  F(smooth, core.smooth_if_not_positive_definite ? 1 : 0)              \
  F(min_eigenvalue, core.min_eigenvalue)                               \
  F(min_pair_observations, static_cast<int64_t>(core.min_pair_observations)) \
  F(threads, core.threads)                                             \
  F(max_categories, core.polychoric.max_categories)                    \
  F(zero_cells, c_code(zero_cell_codes, core.polychoric.zero_cells))   \
  F(zero_cell_add, core.polychoric.zero_cell_add)                      \
  F(progress, nullptr)                                                 \
  F(progress_user, nullptr)                                            \
  F(em_tolerance, core.em.tolerance)                                   \
  F(em_max_iterations, core.em.max_iterations)

LODE_OPTIONS_FUNCTIONS(lode_correlation_options, LODE_CORRELATION_OPTIONS_FIELDS, CorrelationOptions,
                       correlation_defaults, merged_correlation_options)

}  // namespace

CorrelationOptions lode::capi::read_correlation_options(const lode_correlation_options* opts) {
  const lode_correlation_options o = merged_correlation_options(opts);
  CorrelationOptions co;
  co.kind = core_value(coefficient_codes, o.kind, "correlation kind");
  co.missing = core_value(missing_codes, o.missing, "missing-value policy");
  co.smooth_if_not_positive_definite = o.smooth != 0;
  if (!(o.min_eigenvalue >= 0.0 && o.min_eigenvalue < 1.0))
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("min_eigenvalue must be at least 0 and below 1; it is {}", o.min_eigenvalue));
  co.min_eigenvalue = o.min_eigenvalue;
  if (o.min_pair_observations < 2)
    fail(LODE_E_INVALID_ARGUMENT,
         fmt::format("min_pair_observations must be at least 2; it is {}", o.min_pair_observations));
  co.min_pair_observations = static_cast<Index>(o.min_pair_observations);
  require_threads(o.threads);
  co.threads = o.threads;
  if (o.max_categories < 2 || o.max_categories > 100)
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("max_categories must be between 2 and 100; it is {}", o.max_categories));
  co.polychoric.max_categories = o.max_categories;
  co.polychoric.zero_cells = core_value(zero_cell_codes, o.zero_cells, "zero-cell policy");
  if (!(o.zero_cell_add > 0.0 && o.zero_cell_add <= 1.0))
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("zero_cell_add must be above 0 and at most 1; it is {}", o.zero_cell_add));
  co.polychoric.zero_cell_add = o.zero_cell_add;
  co.polychoric.progress = progress_of(o.progress, o.progress_user);
  if (!(o.em_tolerance > 0.0 && o.em_tolerance < 1.0))
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("em_tolerance must be above 0 and below 1; it is {}", o.em_tolerance));
  if (o.em_max_iterations < 1)
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("em_max_iterations must be at least 1; it is {}", o.em_max_iterations));
  co.em.tolerance = o.em_tolerance;
  co.em.max_iterations = o.em_max_iterations;
  co.em.progress = co.polychoric.progress;
  return co;
}

namespace {

// The correlations of any kind of data handle.
void compute(lode_correlation& c, const DataContent& content, const CorrelationOptions& co) {
  const bool polychoric = co.kind == CorrelationKind::polychoric;
  switch (content.source) {
    case DataSource::raw:
      if (polychoric) keep_polychoric(c, polychoric_correlation(content.values, co));
      else c.result = correlation(content.values, co);
      break;
    case DataSource::summary:
      if (polychoric) keep_polychoric(c, polychoric_from_summary(*content.summary, co));
      else c.result = correlation_from_summary(*content.summary, co);
      break;
    case DataSource::correlation: c.result = correlation_from_matrix(content.values, content.n_obs, co); break;
    case DataSource::covariance: c.result = correlation_from_covariance(content.values, content.n_obs, co); break;
  }
}

const lode_correlation& polychoric_of(const lode_correlation& c) {
  if (!c.polychoric)
    fail(LODE_E_INVALID_ARGUMENT, "standard errors and thresholds exist only for polychoric correlations of raw data");
  return c;
}

const EmEstimate& em_of(const lode_correlation& c) {
  if (c.result.missing != MissingPolicy::em || c.result.em.means.size() == 0)
    fail(LODE_E_INVALID_ARGUMENT, "EM means, covariances and convergence exist only for correlations of raw data with the em rule");
  return c.result.em;
}

const lode_correlation& with_smc(const lode_correlation& c) {
  if (c.smc.size() == 0) fail(LODE_E_NOT_POSITIVE_DEFINITE, c.smc_error);
  return c;
}

constexpr HandleNames correlation_handle{"lode_correlation", "lode_correlation", "corr"};

constexpr MatrixKey<lode_correlation> correlation_matrices[] = {
    {LODE_CORRELATION_MATRIX, [](const lode_correlation& c) -> Matrix { return c.result.matrix; }},
    {LODE_CORRELATION_PAIR_COUNTS, [](const lode_correlation& c) -> Matrix { return c.result.report.pair_counts.cast<double>(); }},
    {LODE_CORRELATION_EIGENVALUES, [](const lode_correlation& c) -> Matrix { return c.eigenvalues; }},
    {LODE_CORRELATION_REDUCED_EIGENVALUES, [](const lode_correlation& c) -> Matrix { return with_smc(c).reduced_eigenvalues; }},
    {LODE_CORRELATION_SMC, [](const lode_correlation& c) -> Matrix { return with_smc(c).smc; }},
    {LODE_CORRELATION_STANDARD_ERRORS, [](const lode_correlation& c) -> Matrix { return polychoric_of(c).standard_errors; }},
    {LODE_CORRELATION_THRESHOLDS, [](const lode_correlation& c) -> Matrix { return polychoric_of(c).thresholds; }},
    {LODE_CORRELATION_EM_MEANS, [](const lode_correlation& c) -> Matrix { return em_of(c).means; }},
    {LODE_CORRELATION_EM_COVARIANCE, [](const lode_correlation& c) -> Matrix { return em_of(c).covariance; }},
};

constexpr ValueKey<lode_correlation> correlation_values[] = {
    {LODE_CORRELATION_ITEMS, [](const lode_correlation& c) { return number(c.result.matrix.cols()); }},
    {LODE_CORRELATION_N_OBS, [](const lode_correlation& c) { return number(c.result.n_obs); }},
    {LODE_CORRELATION_ROWS_TOTAL, [](const lode_correlation& c) { return number(c.result.report.rows_total); }},
    {LODE_CORRELATION_ROWS_COMPLETE, [](const lode_correlation& c) { return number(c.result.report.rows_complete); }},
    {LODE_CORRELATION_ROWS_USED, [](const lode_correlation& c) { return number(c.result.report.rows_used); }},
    {LODE_CORRELATION_MIN_PAIR_COUNT, [](const lode_correlation& c) { return number(c.result.report.min_pair_count); }},
    {LODE_CORRELATION_MISSING_FRACTION, [](const lode_correlation& c) { return c.result.report.missing_fraction; }},
    {LODE_CORRELATION_POSITIVE_DEFINITE, [](const lode_correlation& c) { return flag(c.result.positive_definite); }},
    {LODE_CORRELATION_SMOOTHED, [](const lode_correlation& c) { return flag(c.result.smoothing.applied); }},
    {LODE_CORRELATION_SMALLEST_EIGENVALUE_BEFORE,
     [](const lode_correlation& c) { return c.result.smoothing.smallest_eigenvalue_before; }},
    {LODE_CORRELATION_SMOOTHING_MAX_CHANGE, [](const lode_correlation& c) { return c.result.smoothing.max_abs_change; }},
    {LODE_CORRELATION_SMOOTHING_RMS_CHANGE, [](const lode_correlation& c) { return c.result.smoothing.rms_change; }},
    {LODE_CORRELATION_SMOOTHING_CONVERGED,
     [](const lode_correlation& c) { return flag(c.result.smoothing.convergence.converged); }},
    {LODE_CORRELATION_SMOOTHING_ITERATIONS,
     [](const lode_correlation& c) { return number(c.result.smoothing.convergence.iterations); }},
    {LODE_CORRELATION_KIND,
     [](const lode_correlation& c) { return static_cast<double>(c_code(coefficient_codes, c.result.kind)); }},
    {LODE_CORRELATION_MISSING,
     [](const lode_correlation& c) { return static_cast<double>(c_code(missing_codes, c.result.missing)); }},
    {LODE_CORRELATION_PAIRS_NOT_CONVERGED, [](const lode_correlation& c) { return number(c.pairs_not_converged); }},
    {LODE_CORRELATION_EM_CONVERGED, [](const lode_correlation& c) { return flag(em_of(c).convergence.converged); }},
    {LODE_CORRELATION_EM_ITERATIONS, [](const lode_correlation& c) { return number(em_of(c).convergence.iterations); }},
    {LODE_CORRELATION_EM_FINAL_CHANGE, [](const lode_correlation& c) { return em_of(c).convergence.final_change; }},
    {LODE_CORRELATION_EM_TOLERANCE, [](const lode_correlation& c) { return em_of(c).convergence.tolerance; }},
    {LODE_CORRELATION_EM_MAX_ITERATIONS, [](const lode_correlation& c) { return number(em_of(c).convergence.max_iterations); }},
    {LODE_CORRELATION_PAIRS_AT_BOUND, [](const lode_correlation& c) { return number(c.pairs_at_bound); }},
    {LODE_CORRELATION_PAIRS_ZERO_CELL_CORRECTED, [](const lode_correlation& c) { return number(c.pairs_zero_cell_corrected); }},
};

constexpr TextKey<lode_correlation> correlation_texts[] = {
    {LODE_CORRELATION_NOTES, [](const lode_correlation& c) { return join_lines(c.result.notes); }},
};

}  // namespace

namespace lode::capi {

void keep_polychoric(lode_correlation& c, PolychoricResult&& pr) {
  c.result = std::move(pr.correlation);
  c.polychoric = true;
  c.standard_errors = std::move(pr.standard_errors);
  Index most = 0;
  for (const auto& t : pr.thresholds) most = std::max(most, t.size());
  c.thresholds = Matrix::Constant(static_cast<Index>(pr.thresholds.size()), most, std::numeric_limits<double>::quiet_NaN());
  for (std::size_t j = 0; j < pr.thresholds.size(); ++j)
    c.thresholds.row(static_cast<Index>(j)).head(pr.thresholds[j].size()) = pr.thresholds[j].transpose();
  c.pairs_not_converged = pr.pairs_not_converged;
  c.pairs_at_bound = pr.pairs_at_bound;
  c.pairs_zero_cell_corrected = pr.pairs_zero_cell_corrected;
}

}  // namespace lode::capi

extern "C" {

LODE_OPTIONS_INIT(lode_correlation_options, correlation_defaults)

LODE_API int lode_correlation_compute(const lode_data* data, const lode_correlation_options* opts,
                                      lode_correlation** out) {
  return compute_handle(data, "data", out, [&] {
    CorrelationOptions co = read_correlation_options(opts);
    const auto& content = data->content;
    co.item_names = content->item_names;
    auto c = std::make_unique<lode_correlation>();
    c->data = content;
    compute(*c, *content, co);
    co.polychoric.progress = {};  // the caller's callback and its user data are for this call only
    co.em.progress = {};
    c->options = co;
    c->eigenvalues = eigenvalues_descending(c->result.matrix);
    try {
      c->smc = squared_multiple_correlations(c->result.matrix);
      c->reduced_eigenvalues = reduced_eigenvalues(c->result.matrix);
    } catch (const Error& e) {
      c->smc.resize(0);
      c->reduced_eigenvalues.resize(0);
      c->smc_error = e.what();
    }
    return c;
  });
}

LODE_API void lode_correlation_free(lode_correlation* corr) { delete corr; }

LODE_KEY_GETTERS(lode_correlation, lode_correlation, correlation_handle, correlation_matrices, correlation_values, correlation_texts)

}  // extern "C"
