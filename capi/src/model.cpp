// Fitted models through the C ABI: lode_model_options (read here for the bootstrap and the
// single-scale omega too), the fit (optional factor count -> extraction -> rotation -> residuals
// -> fit statistics: a few calls of the core, kept here so C concerns such as optional parts with
// their reasons stay out of the core), and the lode_model handle.
#include "boundary.hpp"
#include "factor_count.hpp"
#include "handles.hpp"
#include "keys.hpp"
#include "model.hpp"
#include "options.hpp"
#include "results.hpp"

#include "lode/extraction.hpp"
#include "lode/fit.hpp"
#include "lode/rotation.hpp"

#include <cmath>
#include <limits>
#include <optional>

using namespace lode;
using namespace lode::capi;

namespace {

constexpr Code<ExtractionMethod> extraction_codes[] = {
    {LODE_EXTRACTION_ML, ExtractionMethod::maximum_likelihood},
    {LODE_EXTRACTION_PAF, ExtractionMethod::principal_axis},
    {LODE_EXTRACTION_MINRES, ExtractionMethod::minimum_residual},
    {LODE_EXTRACTION_PCA, ExtractionMethod::principal_components},
};

// The core's settings behind lode_model_options' defaults.
struct ModelDefaults {
  ExtractionOptions extraction;
  FitOptions fit;
};

// lode_model_options: field, default. factors 0 asks for the suggested count.
#define LODE_MODEL_OPTIONS_FIELDS(F)                              \
  F(factors, 0)                                                   \
  F(method, c_code(extraction_codes, core.extraction.method))     \
  F(max_iterations, core.extraction.max_iterations)               \
  F(tolerance, core.extraction.tolerance)                         \
  F(min_uniqueness, core.extraction.min_uniqueness)               \
  F(interval_level, core.fit.interval_level)                      \
  F(rotation, nullptr)                                            \
  F(factor_count, nullptr)                                        \
  F(progress, nullptr)                                            \
  F(progress_user, nullptr)

LODE_OPTIONS_FUNCTIONS(lode_model_options, LODE_MODEL_OPTIONS_FIELDS, ModelDefaults, model_defaults,
                       merged_model_options)

// The extraction fields of lode_model_options, checked, for the matrix behind `corr`.
ExtractionOptions extraction_options_of(const lode_model_options& o, const lode_correlation* corr) {
  ExtractionOptions eo;
  eo.method = core_value(extraction_codes, o.method, "extraction method");
  if (o.max_iterations < 1)
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("max_iterations must be at least 1; it is {}", o.max_iterations));
  eo.max_iterations = o.max_iterations;
  if (!(o.tolerance > 0.0) || !std::isfinite(o.tolerance))
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("tolerance must be positive; it is {}", o.tolerance));
  eo.tolerance = o.tolerance;
  if (!(o.min_uniqueness >= 0.0 && o.min_uniqueness < 1.0))
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("min_uniqueness must be at least 0 and below 1; it is {}", o.min_uniqueness));
  eo.min_uniqueness = o.min_uniqueness;
  eo.n_obs = corr->result.n_obs;
  eo.item_names = corr->options.item_names;
  return eo;
}

// The means and standard deviations (n - 1) behind the model's correlation matrix: over the complete
// rows under listwise deletion, else over each item's answered values (see lode_model::means).
void fit_standardisation(lode_model& m, const CorrelationResult& r) {
  const Matrix& x = m.data->values;
  const Index p = x.cols();
  if (m.missing == MissingPolicy::em) {
    // The EM estimate's means, and its variances with the divisor n - 1 like the other rules.
    const double rows = static_cast<double>(r.em.rows_used);
    m.means = r.em.means;
    m.sds = (r.em.covariance.diagonal() * (rows / (rows - 1.0))).cwiseSqrt();
    return;
  }
  m.means = Vector::Constant(p, std::numeric_limits<double>::quiet_NaN());
  m.sds = m.means;
  std::vector<Index> complete;
  if (m.missing == MissingPolicy::listwise)
    for (Index i = 0; i < x.rows(); ++i)
      if (!x.row(i).array().isNaN().any()) complete.push_back(i);
  for (Index j = 0; j < p; ++j) {
    std::vector<double> v;
    if (m.missing == MissingPolicy::listwise) {
      for (Index i : complete) v.push_back(x(i, j));
    } else {
      for (Index i = 0; i < x.rows(); ++i)
        if (!std::isnan(x(i, j))) v.push_back(x(i, j));
    }
    if (v.size() < 2) continue;
    const Eigen::Map<const Vector> col(v.data(), static_cast<Index>(v.size()));
    m.means(j) = col.mean();
    m.sds(j) = std::sqrt((col.array() - m.means(j)).square().sum() / static_cast<double>(v.size() - 1));
  }
}

// The number of factors to extract: as given, or the factor count's suggestion (noted in the model).
int factors_to_extract(const FitSetup& setup, const lode_correlation* corr, lode_model& m) {
  if (setup.factors != 0) return setup.factors;
  const FactorCountResult count = count_for(corr, read_factor_count_options(setup.factor_count));
  if (count.suggested < 1)
    fail(LODE_E_INSUFFICIENT_DATA,
         fmt::format("the factor count suggests no common factor ({}); give the number of factors", count.reason));
  const int factors = static_cast<int>(count.suggested);
  m.suggested_factors = factors;
  m.notes.push_back(fmt::format("{} factor(s), as suggested: {}", factors, count.reason));
  return factors;
}

// The rotation of the extracted loadings (the unrotated solution when there is none), reporting each
// start through `progress` after the extraction's unit.
void rotate_model(lode_model& m, std::optional<RotationOptions>& ro, const ProgressFn& progress, std::int64_t total) {
  const Index k = m.extraction.loadings.cols();
  if (ro && ro->method != RotationMethod::none && k < 2) {
    m.notes.push_back("one factor: rotation does not apply, the loadings are unrotated");
    ro.reset();
  }
  if (ro) {
    if (progress)
      ro->progress = [&](std::int64_t done, std::int64_t starts) {
        return done >= starts || progress(1 + done, total);  // the final report is made by the caller
      };
    m.rotation = rotate(m.extraction.loadings, *ro);
    ro->progress = {};
    m.rotated = true;
    return;
  }
  auto& rot = m.rotation;
  rot.method = RotationMethod::none;
  rot.pattern = rot.structure = m.extraction.loadings;
  rot.factor_correlations = rot.rotation = Matrix::Identity(k, k);
  rot.ss_pattern = rot.ss_structure = m.extraction.loadings.colwise().squaredNorm().transpose();
  rot.convergence.converged = true;
}

// Residuals always; fit statistics when n_obs is known (else the reason they are missing).
void assess_model(lode_model& m, double interval_level) {
  const Matrix& r = m.correlation;
  m.residual = residual_fit(r, m.extraction.loadings, m.extraction.uniquenesses);
  if (m.n_obs == 0) {
    m.fit_missing = {LODE_E_INSUFFICIENT_DATA,
                     "fit statistics need the number of observations behind the correlation matrix (n_obs)"};
    return;
  }
  try {
    FitOptions fo;
    fo.interval_level = interval_level;
    m.fit = assess_fit(r, m.extraction.loadings, m.extraction.uniquenesses, m.n_obs, fo);
    for (const auto& note : m.fit->notes) m.notes.push_back(note);
  } catch (const Error& e) {
    m.fit_missing = {status_of(e.code()), e.what()};
    m.notes.push_back(fmt::format("fit statistics are not available: {}", e.what()));
  }
}

Vector flags_of_heywood(const ExtractionResult& e) {
  Vector v = Vector::Zero(e.loadings.rows());
  for (const auto& h : e.heywood)
    if (h.item >= 0 && h.item < v.size()) v(h.item) = 1.0;
  return v;
}

const FitResult& fit_of(const lode_model& m) {
  m.fit_missing.require();
  return *m.fit;
}

constexpr HandleNames model_handle{"lode_model", "lode_model", "model"};

constexpr MatrixKey<lode_model> model_matrices[] = {
    {LODE_MODEL_LOADINGS, [](const lode_model& m) -> Matrix { return m.rotation.pattern; }},
    {LODE_MODEL_STRUCTURE, [](const lode_model& m) -> Matrix { return m.rotation.structure; }},
    {LODE_MODEL_FACTOR_CORRELATIONS, [](const lode_model& m) -> Matrix { return m.rotation.factor_correlations; }},
    {LODE_MODEL_ROTATION_MATRIX, [](const lode_model& m) -> Matrix { return m.rotation.rotation; }},
    {LODE_MODEL_UNROTATED_LOADINGS, [](const lode_model& m) -> Matrix { return m.extraction.loadings; }},
    {LODE_MODEL_UNIQUENESSES, [](const lode_model& m) -> Matrix { return m.extraction.uniquenesses; }},
    {LODE_MODEL_COMMUNALITIES, [](const lode_model& m) -> Matrix { return m.extraction.communalities; }},
    {LODE_MODEL_RESIDUALS, [](const lode_model& m) -> Matrix { return m.residual.residuals; }},
    {LODE_MODEL_HEYWOOD, [](const lode_model& m) -> Matrix { return flags_of_heywood(m.extraction); }},
    {LODE_MODEL_SS_LOADINGS, [](const lode_model& m) -> Matrix { return m.rotation.ss_pattern; }},
    {LODE_MODEL_SS_STRUCTURE, [](const lode_model& m) -> Matrix { return m.rotation.ss_structure; }},
};

constexpr ValueKey<lode_model> model_values[] = {
    {LODE_MODEL_FACTORS, [](const lode_model& m) { return number(m.extraction.factors); }},
    {LODE_MODEL_ITEMS, [](const lode_model& m) { return number(m.extraction.loadings.rows()); }},
    {LODE_MODEL_N_OBS, [](const lode_model& m) { return number(m.n_obs); }},
    {LODE_MODEL_CONVERGED, [](const lode_model& m) { return flag(m.extraction.convergence.converged); }},
    {LODE_MODEL_ITERATIONS, [](const lode_model& m) { return number(m.extraction.convergence.iterations); }},
    {LODE_MODEL_HEYWOOD_COUNT, [](const lode_model& m) { return number(static_cast<Index>(m.extraction.heywood.size())); }},
    {LODE_MODEL_OBJECTIVE, [](const lode_model& m) { return m.extraction.objective; }},
    {LODE_MODEL_RMSR, [](const lode_model& m) { return m.residual.rmsr; }},
    {LODE_MODEL_MAX_ABS_RESIDUAL, [](const lode_model& m) { return m.residual.max_abs_residual; }},
    {LODE_MODEL_CHI_SQUARE, [](const lode_model& m) { return fit_of(m).chi_square; }},
    {LODE_MODEL_DF, [](const lode_model& m) { return fit_of(m).df; }},
    {LODE_MODEL_P_VALUE, [](const lode_model& m) { return fit_of(m).p_value; }},
    {LODE_MODEL_RMSEA, [](const lode_model& m) { return fit_of(m).rmsea; }},
    {LODE_MODEL_RMSEA_LOWER, [](const lode_model& m) { return fit_of(m).rmsea_lower; }},
    {LODE_MODEL_RMSEA_UPPER, [](const lode_model& m) { return fit_of(m).rmsea_upper; }},
    {LODE_MODEL_TLI, [](const lode_model& m) { return fit_of(m).tli; }},
    {LODE_MODEL_BIC, [](const lode_model& m) { return fit_of(m).bic; }},
    {LODE_MODEL_NULL_CHI_SQUARE, [](const lode_model& m) { return fit_of(m).null_chi_square; }},
    {LODE_MODEL_NULL_DF, [](const lode_model& m) { return fit_of(m).null_df; }},
    {LODE_MODEL_ROTATION_CRITERION,
     [](const lode_model& m) { return m.rotated ? m.rotation.criterion : std::numeric_limits<double>::quiet_NaN(); }},
    {LODE_MODEL_ROTATION_CONVERGED, [](const lode_model& m) { return flag(m.rotation.convergence.converged); }},
    {LODE_MODEL_OBLIQUE, [](const lode_model& m) { return flag(m.rotation.oblique); }},
    {LODE_MODEL_METHOD, [](const lode_model& m) { return static_cast<double>(c_code(extraction_codes, m.extraction.method)); }},
    {LODE_MODEL_ROTATION_METHOD, [](const lode_model& m) { return static_cast<double>(static_cast<int>(m.rotation.method)); }},
    {LODE_MODEL_SUGGESTED_FACTORS, [](const lode_model& m) { return static_cast<double>(m.suggested_factors); }},
    {LODE_MODEL_FINAL_CHANGE, [](const lode_model& m) { return m.extraction.convergence.final_change; }},
    {LODE_MODEL_TOLERANCE, [](const lode_model& m) { return m.extraction.convergence.tolerance; }},
    {LODE_MODEL_MAX_ITERATIONS, [](const lode_model& m) { return number(m.extraction.convergence.max_iterations); }},
    {LODE_MODEL_ROTATION_STARTS, [](const lode_model& m) { return number(m.rotation.starts.starts); }},
};

constexpr TextKey<lode_model> model_texts[] = {
    {LODE_MODEL_NOTES, [](const lode_model& m) { return join_lines(m.notes); }},
};

}  // namespace

FitSetup lode::capi::read_fit_options(const lode_model_options* opts, const lode_correlation* corr) {
  const lode_model_options o = merged_model_options(opts);
  FitSetup setup;
  setup.extraction = extraction_options_of(o, corr);
  require_open_unit(o.interval_level, "interval_level");
  setup.interval_level = o.interval_level;
  if (o.factors < 0) fail(LODE_E_INVALID_ARGUMENT, fmt::format("factors must be 0 (suggested) or more; it is {}", o.factors));
  setup.factors = o.factors;
  if (o.rotation) setup.rotation = read_rotation_options(o.rotation, corr->options.item_names);
  setup.factor_count = o.factor_count;
  setup.progress = o.progress;
  setup.progress_user = o.progress_user;
  return setup;
}

std::vector<Index> lode::capi::assignment_of(const lode_model& model, const int64_t* assignment, int64_t count) {
  const Index items = model.rotation.pattern.rows(), factors = model.rotation.pattern.cols();
  if (assignment == nullptr && count != 0)
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("argument 'assignment' is NULL but count is {}", count));
  std::vector<Index> out;
  if (assignment == nullptr) return out;
  if (count != items) fail(LODE_E_INVALID_ARGUMENT, fmt::format("{} assignments were given for {} items", count, items));
  for (int64_t j = 0; j < count; ++j) {
    if (assignment[j] < -1 || assignment[j] >= factors)
      fail(LODE_E_INVALID_ARGUMENT,
           fmt::format("{} is assigned to factor {}; factors are 0 to {} (or -1 for none)",
                       item_label(model.item_names, static_cast<Index>(j)), assignment[j], factors - 1));
    out.push_back(static_cast<Index>(assignment[j]));
  }
  return out;
}

ExtractionOptions lode::capi::read_extraction_options(const lode_model_options* opts, const lode_correlation* corr) {
  return extraction_options_of(merged_model_options(opts), corr);
}

extern "C" {

LODE_OPTIONS_INIT(lode_model_options, model_defaults)

LODE_API int lode_model_compute(const lode_correlation* corr, const lode_model_options* opts, lode_model** out) {
  return compute_handle(corr, "corr", out, [&] {
    // Read every option (the rotation's too) before any long work, so a bad option fails fast.
    FitSetup setup = read_fit_options(opts, corr);
    auto m = std::make_unique<lode_model>();
    m->n_obs = corr->result.n_obs;
    m->correlation = corr->result.matrix;
    m->item_names = corr->options.item_names;
    m->data = corr->data;
    m->missing = corr->result.missing;
    if (m->data && m->data->source == DataSource::raw) fit_standardisation(*m, corr->result);
    const int factors = factors_to_extract(setup, corr, *m);
    // Progress: the extraction is one unit, each rotation start one.
    std::optional<RotationOptions>& ro = setup.rotation;
    const bool rotating = ro && !(ro->method != RotationMethod::none && factors < 2);
    const std::int64_t total = 1 + (rotating ? rotation_start_count(*ro) : 0);
    const ProgressFn progress = progress_of(setup.progress, setup.progress_user);
    auto report = [&](std::int64_t done) {
      if (progress && !progress(done, total)) throw Error(ErrorCode::cancelled, "cancelled by the caller");
    };
    report(0);
    m->extraction = extract_factors(m->correlation, factors, setup.extraction);
    for (const auto& note : m->extraction.notes) m->notes.push_back(note);
    report(1);
    rotate_model(*m, ro, progress, total);
    assess_model(*m, setup.interval_level);
    if (progress) progress(total, total);  // the final report; the work is done, so no cancel here
    return m;
  });
}

LODE_API void lode_model_free(lode_model* model) { delete model; }

LODE_KEY_GETTERS(lode_model, lode_model, model_handle, model_matrices, model_values, model_texts)

}  // extern "C"

ExtractionMethod lode::capi::extraction_method_of(int method) {
  return core_value(extraction_codes, method, "extraction method");
}
