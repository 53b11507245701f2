// Rotation and fitted models through the C ABI (scores, reliability and comparison: scales.cpp). The orchestration of a
// fit (optional factor count -> extraction -> rotation -> residuals -> fit statistics) lives here:
// it is a few calls of the core, and keeping it here keeps C concerns (optional parts with their
// reasons, handles) out of the core.
#include "boundary.hpp"
#include "handles.hpp"
#include "count.hpp"
#include "results.hpp"
#include "model.hpp"

#include "lode/extraction.hpp"
#include "lode/fit.hpp"
#include "lode/rotation.hpp"
#include "lode/congruence.hpp"
#include "lode/reliability.hpp"
#include "lode/scores.hpp"

#include <cmath>
#include <limits>
#include <optional>

using namespace lode;
using namespace lode::capi;

namespace {

constexpr double nan_value = std::numeric_limits<double>::quiet_NaN();

Vector flags_of_heywood(const ExtractionResult& e) {
  Vector v = Vector::Zero(e.loadings.rows());
  for (const auto& h : e.heywood)
    if (h.item >= 0 && h.item < v.size()) v(h.item) = 1.0;
  return v;
}

// ---- options -------------------------------------------------------------------------------------

lode_rotation_options rotation_defaults() {
  lode_rotation_options d{};
  d.struct_size = sizeof d;
  d.method = LODE_CRITERION_VARIMAX;
  d.normalize = 1;
  d.gamma = 0.0;
  d.kappa = 0.0;
  d.epsilon = 0.01;
  d.power = 4.0;
  d.target = nullptr;
  d.target_rows = d.target_cols = d.target_row_stride = d.target_col_stride = 0;
  const RotationOptions core;  // the core's defaults
  d.random_starts = core.random_starts;
  d.seed = core.seed;
  d.max_iterations = core.max_iterations;
  d.tolerance = core.tolerance;
  d.threads = 1;
  return d;
}

}  // namespace

RotationMethod lode::capi::rotation_method_of(int m) {
  if (m < LODE_CRITERION_NONE || m > LODE_CRITERION_PROMAX)
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("unknown rotation method {}", m));
  // lode.h numbers the methods as the core does (checked by static_asserts below).
  return static_cast<RotationMethod>(m);
}

namespace {
static_assert(static_cast<int>(RotationMethod::none) == LODE_CRITERION_NONE);
static_assert(static_cast<int>(RotationMethod::varimax) == LODE_CRITERION_VARIMAX);
static_assert(static_cast<int>(RotationMethod::varimax_kaiser) == LODE_CRITERION_VARIMAX_KAISER);
static_assert(static_cast<int>(RotationMethod::quartimax) == LODE_CRITERION_QUARTIMAX);
static_assert(static_cast<int>(RotationMethod::equamax) == LODE_CRITERION_EQUAMAX);
static_assert(static_cast<int>(RotationMethod::crawford_ferguson) == LODE_CRITERION_CRAWFORD_FERGUSON);
static_assert(static_cast<int>(RotationMethod::geomin_orthogonal) == LODE_CRITERION_GEOMIN_ORTHOGONAL);
static_assert(static_cast<int>(RotationMethod::target_orthogonal) == LODE_CRITERION_TARGET_ORTHOGONAL);
static_assert(static_cast<int>(RotationMethod::oblimin) == LODE_CRITERION_OBLIMIN);
static_assert(static_cast<int>(RotationMethod::quartimin) == LODE_CRITERION_QUARTIMIN);
static_assert(static_cast<int>(RotationMethod::crawford_ferguson_oblique) == LODE_CRITERION_CRAWFORD_FERGUSON_OBLIQUE);
static_assert(static_cast<int>(RotationMethod::geomin) == LODE_CRITERION_GEOMIN);
static_assert(static_cast<int>(RotationMethod::target_oblique) == LODE_CRITERION_TARGET_OBLIQUE);
static_assert(static_cast<int>(RotationMethod::promax) == LODE_CRITERION_PROMAX);

RotationOptions read_rotation_options(const lode_rotation_options* opts, const std::vector<std::string>& names) {
  lode_rotation_options o = rotation_defaults();
  if (opts) {
    check_options_size(opts, "lode_rotation_options");
    LODE_OPTION_FIELD(o, opts, method);
    LODE_OPTION_FIELD(o, opts, normalize);
    LODE_OPTION_FIELD(o, opts, gamma);
    LODE_OPTION_FIELD(o, opts, kappa);
    LODE_OPTION_FIELD(o, opts, epsilon);
    LODE_OPTION_FIELD(o, opts, power);
    LODE_OPTION_FIELD(o, opts, target);
    LODE_OPTION_FIELD(o, opts, target_rows);
    LODE_OPTION_FIELD(o, opts, target_cols);
    LODE_OPTION_FIELD(o, opts, target_row_stride);
    LODE_OPTION_FIELD(o, opts, target_col_stride);
    LODE_OPTION_FIELD(o, opts, random_starts);
    LODE_OPTION_FIELD(o, opts, seed);
    LODE_OPTION_FIELD(o, opts, max_iterations);
    LODE_OPTION_FIELD(o, opts, tolerance);
    LODE_OPTION_FIELD(o, opts, threads);
  }
  RotationOptions r;
  r.method = rotation_method_of(o.method);
  r.normalize = o.normalize != 0;
  auto finite = [](double v, const char* name) {
    if (!std::isfinite(v)) fail(LODE_E_INVALID_ARGUMENT, fmt::format("rotation option {} is not finite ({})", name, v));
    return v;
  };
  r.gamma = finite(o.gamma, "gamma");
  r.kappa = finite(o.kappa, "kappa");
  r.epsilon = finite(o.epsilon, "epsilon");
  r.power = finite(o.power, "power");
  if (o.target != nullptr) {
    // NaN marks unspecified entries of a partial target, so it is allowed here; infinities are not.
    r.target = read_matrix(o.target, o.target_rows, o.target_cols, o.target_row_stride, o.target_col_stride, "target");
    for (Index j = 0; j < r.target.cols(); ++j)
      for (Index i = 0; i < r.target.rows(); ++i)
        if (std::isinf(r.target(i, j)))
          fail(LODE_E_INVALID_ARGUMENT, fmt::format("the target holds an infinite value at row {}, column {}", i + 1, j + 1));
  } else if (o.target_rows != 0 || o.target_cols != 0) {
    fail(LODE_E_INVALID_ARGUMENT, "argument 'target' is NULL but its size is not 0 x 0");
  }
  if (o.random_starts < -1 || o.random_starts > 100000)
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("random_starts must be -1 (by method) or 0 to 100000; it is {}", o.random_starts));
  r.random_starts = o.random_starts;
  r.seed = o.seed;
  if (o.max_iterations < 1)
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("max_iterations must be at least 1; it is {}", o.max_iterations));
  r.max_iterations = o.max_iterations;
  if (!(o.tolerance > 0.0) || !std::isfinite(o.tolerance))
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("tolerance must be positive; it is {}", o.tolerance));
  r.tolerance = o.tolerance;
  if (o.threads < 0) fail(LODE_E_INVALID_ARGUMENT, fmt::format("threads must be 0 (all cores) or more; it is {}", o.threads));
  r.threads = o.threads;
  r.item_names = names;
  return r;
}

lode_model_options fit_defaults() {
  lode_model_options d{};
  d.struct_size = sizeof d;
  d.factors = 0;
  d.method = LODE_EXTRACTION_ML;
  const ExtractionOptions core;  // the core's defaults
  d.max_iterations = core.max_iterations;
  d.tolerance = core.tolerance;
  d.min_uniqueness = core.min_uniqueness;
  d.interval_level = FitOptions{}.interval_level;
  d.rotation = nullptr;
  d.factor_count = nullptr;
  d.progress = nullptr;
  d.progress_user = nullptr;
  return d;
}

}  // namespace

ExtractionMethod lode::capi::extraction_method_of(int m) {
  switch (m) {
    case LODE_EXTRACTION_ML: return ExtractionMethod::maximum_likelihood;
    case LODE_EXTRACTION_PAF: return ExtractionMethod::principal_axis;
    case LODE_EXTRACTION_MINRES: return ExtractionMethod::minimum_residual;
    case LODE_EXTRACTION_PCA: return ExtractionMethod::principal_components;
    default: fail(LODE_E_INVALID_ARGUMENT, fmt::format("unknown extraction method {}", m));
  }
}

namespace {

// The extraction fields of lode_model_options, checked, for the matrix behind `corr`.
ExtractionOptions extraction_options_of(const lode_model_options& o, const lode_correlation* corr) {
  ExtractionOptions eo;
  eo.method = extraction_method_of(o.method);
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

int extraction_code_of(ExtractionMethod m) {
  switch (m) {
    case ExtractionMethod::maximum_likelihood: return LODE_EXTRACTION_ML;
    case ExtractionMethod::principal_axis: return LODE_EXTRACTION_PAF;
    case ExtractionMethod::minimum_residual: return LODE_EXTRACTION_MINRES;
    case ExtractionMethod::principal_components: return LODE_EXTRACTION_PCA;
  }
  return -1;
}

}  // namespace

FitSetup lode::capi::read_fit_options(const lode_model_options* opts, const lode_correlation* corr) {
  lode_model_options o = fit_defaults();
  if (opts) {
    check_options_size(opts, "lode_model_options");
    LODE_OPTION_FIELD(o, opts, factors);
    LODE_OPTION_FIELD(o, opts, method);
    LODE_OPTION_FIELD(o, opts, max_iterations);
    LODE_OPTION_FIELD(o, opts, tolerance);
    LODE_OPTION_FIELD(o, opts, min_uniqueness);
    LODE_OPTION_FIELD(o, opts, interval_level);
    LODE_OPTION_FIELD(o, opts, rotation);
    LODE_OPTION_FIELD(o, opts, factor_count);
    LODE_OPTION_FIELD(o, opts, progress);  // ABI 1.2
    LODE_OPTION_FIELD(o, opts, progress_user);
  }
  const auto& names = corr->options.item_names;
  FitSetup setup;
  setup.extraction = extraction_options_of(o, corr);
  if (!(o.interval_level > 0.0 && o.interval_level < 1.0))
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("interval_level must lie strictly between 0 and 1; it is {}", o.interval_level));
  setup.interval_level = o.interval_level;
  if (o.factors < 0) fail(LODE_E_INVALID_ARGUMENT, fmt::format("factors must be 0 (suggested) or more; it is {}", o.factors));
  setup.factors = o.factors;
  if (o.rotation) setup.rotation = read_rotation_options(o.rotation, names);
  setup.factor_count = o.factor_count;
  setup.progress = o.progress;
  setup.progress_user = o.progress_user;
  return setup;
}

ExtractionOptions lode::capi::read_extraction_options(const lode_model_options* opts, const lode_correlation* corr) {
  lode_model_options o = fit_defaults();
  if (opts) {
    check_options_size(opts, "lode_model_options");
    LODE_OPTION_FIELD(o, opts, method);
    LODE_OPTION_FIELD(o, opts, max_iterations);
    LODE_OPTION_FIELD(o, opts, tolerance);
    LODE_OPTION_FIELD(o, opts, min_uniqueness);
  }
  return extraction_options_of(o, corr);
}

// ---- handles -------------------------------------------------------------------------------------


struct lode_rotation {
  RotationResult result;
};

namespace {

void write_rotation_matrix(const RotationResult& r, int key, double* out, std::size_t capacity, int64_t* rows,
                           int64_t* cols, const char* kind) {
  switch (key) {
    case LODE_ROTATION_PATTERN: write_matrix(r.pattern, out, capacity, rows, cols); break;
    case LODE_ROTATION_STRUCTURE: write_matrix(r.structure, out, capacity, rows, cols); break;
    case LODE_ROTATION_FACTOR_CORRELATIONS: write_matrix(r.factor_correlations, out, capacity, rows, cols); break;
    case LODE_ROTATION_TRANSFORM: write_matrix(r.rotation, out, capacity, rows, cols); break;
    case LODE_ROTATION_SS_PATTERN: write_matrix(r.ss_pattern, out, capacity, rows, cols); break;
    case LODE_ROTATION_SS_STRUCTURE: write_matrix(r.ss_structure, out, capacity, rows, cols); break;
    case LODE_ROTATION_START_CRITERIA: {
      Vector v(static_cast<Index>(r.starts.criteria.size()));
      for (std::size_t k = 0; k < r.starts.criteria.size(); ++k) v(static_cast<Index>(k)) = r.starts.criteria[k];
      write_matrix(v, out, capacity, rows, cols);
      break;
    }
    default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, kind));
  }
}

}  // namespace

extern "C" {

// ---- rotation ------------------------------------------------------------------------------------

LODE_API int lode_rotation_method_from_name(const char* name, int* method) {
  return guarded([&] {
    require_pointer(name, "name");
    require_pointer(method, "method");
    *method = static_cast<int>(rotation_from_name(name));
  });
}

LODE_API const char* lode_rotation_method_name(int method) {
  if (method < LODE_CRITERION_NONE || method > LODE_CRITERION_PROMAX) return nullptr;
  return rotation_name(static_cast<RotationMethod>(method));
}

LODE_API int lode_rotation_options_init(lode_rotation_options* opts, size_t struct_size) {
  return guarded([&] { init_options(opts, struct_size, rotation_defaults(), "lode_rotation_options"); });
}

LODE_API int lode_rotation_compute(const double* loadings, int64_t items, int64_t factors, int64_t row_stride,
                         int64_t col_stride, const lode_rotation_options* opts, lode_rotation** out) {
  return guarded([&] {
    require_pointer(out, "out");
    *out = nullptr;
    const Matrix a = read_matrix(loadings, items, factors, row_stride, col_stride, "loading matrix");
    const RotationOptions options = read_rotation_options(opts, {});
    auto r = std::make_unique<lode_rotation>();
    r->result = rotate(a, options);
    *out = r.release();
  });
}

LODE_API void lode_rotation_free(lode_rotation* rotation) { delete rotation; }

LODE_API int lode_rotation_matrix(const lode_rotation* rotation, int key, double* out, size_t capacity,
                                  int64_t* rows, int64_t* cols) {
  return guarded([&] {
    require_pointer(rotation, "rotation");
    write_rotation_matrix(rotation->result, key, out, capacity, rows, cols,
                          "lode_rotation matrix (lode_rotation_matrix)");
  });
}

LODE_API int lode_rotation_value(const lode_rotation* rotation, int key, double* value) {
  return guarded([&] {
    require_pointer(rotation, "rotation");
    require_pointer(value, "value");
    const auto& r = rotation->result;
    double v = 0.0;
    switch (key) {
      case LODE_ROTATION_CRITERION: v = r.criterion; break;
      case LODE_ROTATION_CONVERGED: v = r.convergence.converged ? 1.0 : 0.0; break;
      case LODE_ROTATION_ITERATIONS: v = static_cast<double>(r.convergence.iterations); break;
      case LODE_ROTATION_OBLIQUE: v = r.oblique ? 1.0 : 0.0; break;
      case LODE_ROTATION_STARTS: v = static_cast<double>(r.starts.starts); break;
      case LODE_ROTATION_STARTS_CONVERGED: v = static_cast<double>(r.starts.converged); break;
      case LODE_ROTATION_REACHED_BEST: v = static_cast<double>(r.starts.reached_best); break;
      case LODE_ROTATION_DISTINCT_SOLUTIONS: v = static_cast<double>(r.starts.distinct_solutions); break;
      case LODE_ROTATION_METHOD: v = static_cast<double>(static_cast<int>(r.method)); break;
      case LODE_ROTATION_FINAL_CHANGE: v = r.convergence.final_change; break;
      case LODE_ROTATION_TOLERANCE: v = r.convergence.tolerance; break;
      case LODE_ROTATION_MAX_ITERATIONS: v = static_cast<double>(r.convergence.max_iterations); break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_rotation number (lode_rotation_value)"));
    }
    *value = v;
  });
}

LODE_API int lode_rotation_text(const lode_rotation* rotation, int key, char* out, size_t capacity, size_t* length) {
  return guarded([&] {
    require_pointer(rotation, "rotation");
    switch (key) {
      case LODE_ROTATION_METHOD_NAME: write_text(rotation_name(rotation->result.method), out, capacity, length); break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_rotation text (lode_rotation_text)"));
    }
  });
}

// ---- fitted models -------------------------------------------------------------------------------

LODE_API int lode_model_options_init(lode_model_options* opts, size_t struct_size) {
  return guarded([&] { init_options(opts, struct_size, fit_defaults(), "lode_model_options"); });
}

namespace {

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

}  // namespace

LODE_API int lode_model_compute(const lode_correlation* corr, const lode_model_options* opts, lode_model** out) {
  return guarded([&] {
    require_pointer(corr, "corr");
    require_pointer(out, "out");
    *out = nullptr;
    // Read every option (the rotation's too) before any long work, so a bad option fails fast.
    FitSetup setup = read_fit_options(opts, corr);
    const ExtractionOptions& eo = setup.extraction;
    std::optional<RotationOptions>& ro = setup.rotation;
    const auto& names = corr->options.item_names;

    auto m = std::make_unique<lode_model>();
    m->n_obs = corr->result.n_obs;
    m->correlation = corr->result.matrix;
    m->item_names = names;
    m->data = corr->data;
    m->missing = corr->result.missing;
    if (m->data && m->data->source == DataSource::raw) fit_standardisation(*m, corr->result);
    int factors = setup.factors;
    if (factors == 0) {
      const FactorCountResult count = count_for(corr, read_factor_count_options(setup.factor_count));
      if (count.suggested < 1)
        fail(LODE_E_INSUFFICIENT_DATA,
             fmt::format("the factor count suggests no common factor ({}); give the number of factors", count.reason));
      factors = static_cast<int>(count.suggested);
      m->suggested_factors = factors;
      m->notes.push_back(fmt::format("{} factor(s), as suggested: {}", factors, count.reason));
    }
    // Progress (ABI 1.2): the extraction is one unit, each rotation start one.
    const bool rotating = ro && !(ro->method != RotationMethod::none && factors < 2);
    const std::int64_t total = 1 + (rotating ? rotation_start_count(*ro) : 0);
    const ProgressFn progress = progress_of(setup.progress, setup.progress_user);
    auto report = [&](std::int64_t done) {
      if (progress && !progress(done, total)) throw Error(ErrorCode::cancelled, "cancelled by the caller");
    };
    report(0);
    const Matrix& r = corr->result.matrix;
    m->extraction = extract_factors(r, factors, eo);
    for (const auto& note : m->extraction.notes) m->notes.push_back(note);
    report(1);

    const Index p = m->extraction.loadings.rows(), k = m->extraction.loadings.cols();
    if (ro && ro->method != RotationMethod::none && k < 2) {
      m->notes.push_back("one factor: rotation does not apply, the loadings are unrotated");
      ro.reset();
    }
    if (ro) {
      if (progress)
        ro->progress = [&](std::int64_t done, std::int64_t starts) {
          return done >= starts || progress(1 + done, total);  // the final report is made below
        };
      m->rotation = rotate(m->extraction.loadings, *ro);
      ro->progress = {};
      m->rotated = true;
    } else {
      auto& rot = m->rotation;
      rot.method = RotationMethod::none;
      rot.pattern = rot.structure = m->extraction.loadings;
      rot.factor_correlations = rot.rotation = Matrix::Identity(k, k);
      rot.ss_pattern = rot.ss_structure = m->extraction.loadings.colwise().squaredNorm().transpose();
      rot.convergence.converged = true;
    }
    (void)p;
    m->residual = residual_fit(r, m->extraction.loadings, m->extraction.uniquenesses);
    if (m->n_obs == 0) {
      m->fit_missing = {LODE_E_INSUFFICIENT_DATA,
                        "fit statistics need the number of observations behind the correlation matrix (n_obs)"};
    } else {
      try {
        FitOptions fo;
        fo.interval_level = setup.interval_level;
        m->fit = assess_fit(r, m->extraction.loadings, m->extraction.uniquenesses, m->n_obs, fo);
        for (const auto& note : m->fit->notes) m->notes.push_back(note);
      } catch (const Error& e) {
        m->fit_missing = {status_of(e.code()), e.what()};
        m->notes.push_back(fmt::format("fit statistics are not available: {}", e.what()));
      }
    }
    if (progress) progress(total, total);  // the final report; the work is done, so no cancel here
    *out = m.release();
  });
}

LODE_API void lode_model_free(lode_model* model) { delete model; }

LODE_API int lode_model_matrix(const lode_model* model, int key, double* out, size_t capacity, int64_t* rows,
                               int64_t* cols) {
  return guarded([&] {
    require_pointer(model, "model");
    const auto& e = model->extraction;
    const auto& rot = model->rotation;
    switch (key) {
      case LODE_MODEL_LOADINGS: write_matrix(rot.pattern, out, capacity, rows, cols); break;
      case LODE_MODEL_STRUCTURE: write_matrix(rot.structure, out, capacity, rows, cols); break;
      case LODE_MODEL_FACTOR_CORRELATIONS: write_matrix(rot.factor_correlations, out, capacity, rows, cols); break;
      case LODE_MODEL_ROTATION_MATRIX: write_matrix(rot.rotation, out, capacity, rows, cols); break;
      case LODE_MODEL_UNROTATED_LOADINGS: write_matrix(e.loadings, out, capacity, rows, cols); break;
      case LODE_MODEL_UNIQUENESSES: write_matrix(e.uniquenesses, out, capacity, rows, cols); break;
      case LODE_MODEL_COMMUNALITIES: write_matrix(e.communalities, out, capacity, rows, cols); break;
      case LODE_MODEL_RESIDUALS: write_matrix(model->residual.residuals, out, capacity, rows, cols); break;
      case LODE_MODEL_HEYWOOD: write_matrix(flags_of_heywood(e), out, capacity, rows, cols); break;
      case LODE_MODEL_SS_LOADINGS: write_matrix(rot.ss_pattern, out, capacity, rows, cols); break;
      case LODE_MODEL_SS_STRUCTURE: write_matrix(rot.ss_structure, out, capacity, rows, cols); break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_model matrix (lode_model_matrix)"));
    }
  });
}

LODE_API int lode_model_value(const lode_model* model, int key, double* value) {
  return guarded([&] {
    require_pointer(model, "model");
    require_pointer(value, "value");
    const auto& e = model->extraction;
    const auto& rot = model->rotation;
    auto fit = [&]() -> const FitResult& {
      model->fit_missing.require();
      return *model->fit;
    };
    double v = 0.0;
    switch (key) {
      case LODE_MODEL_FACTORS: v = static_cast<double>(e.factors); break;
      case LODE_MODEL_ITEMS: v = static_cast<double>(e.loadings.rows()); break;
      case LODE_MODEL_N_OBS: v = static_cast<double>(model->n_obs); break;
      case LODE_MODEL_CONVERGED: v = e.convergence.converged ? 1.0 : 0.0; break;
      case LODE_MODEL_ITERATIONS: v = static_cast<double>(e.convergence.iterations); break;
      case LODE_MODEL_HEYWOOD_COUNT: v = static_cast<double>(e.heywood.size()); break;
      case LODE_MODEL_OBJECTIVE: v = e.objective; break;
      case LODE_MODEL_RMSR: v = model->residual.rmsr; break;
      case LODE_MODEL_MAX_ABS_RESIDUAL: v = model->residual.max_abs_residual; break;
      case LODE_MODEL_CHI_SQUARE: v = fit().chi_square; break;
      case LODE_MODEL_DF: v = fit().df; break;
      case LODE_MODEL_P_VALUE: v = fit().p_value; break;
      case LODE_MODEL_RMSEA: v = fit().rmsea; break;
      case LODE_MODEL_RMSEA_LOWER: v = fit().rmsea_lower; break;
      case LODE_MODEL_RMSEA_UPPER: v = fit().rmsea_upper; break;
      case LODE_MODEL_TLI: v = fit().tli; break;
      case LODE_MODEL_BIC: v = fit().bic; break;
      case LODE_MODEL_NULL_CHI_SQUARE: v = fit().null_chi_square; break;
      case LODE_MODEL_NULL_DF: v = fit().null_df; break;
      case LODE_MODEL_ROTATION_CRITERION: v = model->rotated ? rot.criterion : nan_value; break;
      case LODE_MODEL_ROTATION_CONVERGED: v = rot.convergence.converged ? 1.0 : 0.0; break;
      case LODE_MODEL_OBLIQUE: v = rot.oblique ? 1.0 : 0.0; break;
      case LODE_MODEL_METHOD: v = extraction_code_of(e.method); break;
      case LODE_MODEL_ROTATION_METHOD: v = static_cast<double>(static_cast<int>(rot.method)); break;
      case LODE_MODEL_SUGGESTED_FACTORS: v = static_cast<double>(model->suggested_factors); break;
      case LODE_MODEL_FINAL_CHANGE: v = e.convergence.final_change; break;
      case LODE_MODEL_TOLERANCE: v = e.convergence.tolerance; break;
      case LODE_MODEL_MAX_ITERATIONS: v = static_cast<double>(e.convergence.max_iterations); break;
      case LODE_MODEL_ROTATION_STARTS: v = static_cast<double>(rot.starts.starts); break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_model number (lode_model_value)"));
    }
    *value = v;
  });
}

LODE_API int lode_model_text(const lode_model* model, int key, char* out, size_t capacity, size_t* length) {
  return guarded([&] {
    require_pointer(model, "model");
    switch (key) {
      case LODE_MODEL_NOTES: write_text(join_lines(model->notes), out, capacity, length); break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_model text (lode_model_text)"));
    }
  });
}

}  // extern "C"

