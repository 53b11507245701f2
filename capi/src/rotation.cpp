// Rotation through the C ABI: the rotation options (read here for lode_model_compute and the
// bootstrap too), method names, rotating a caller's loadings, and the lode_rotation handle.
#include "boundary.hpp"
#include "results.hpp"
#include "keys.hpp"
#include "model.hpp"
#include "options.hpp"

#include "lode/rotation.hpp"

#include <cmath>

using namespace lode;
using namespace lode::capi;

struct lode_rotation {
  RotationResult result;
};

namespace {

// lode.h numbers the criteria as the core does.
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

bool known_criterion(int m) { return m >= LODE_CRITERION_NONE && m <= LODE_CRITERION_PROMAX; }

// lode_rotation_options: field, default (from the core's RotationOptions).
#define LODE_ROTATION_OPTIONS_FIELDS(F)               \
  F(method, static_cast<int>(core.method))            \
  F(normalize, core.normalize ? 1 : 0)                \
  F(gamma, core.gamma)                                \
  F(kappa, core.kappa)                                \
  F(epsilon, core.epsilon)                            \
  F(power, core.power)                                \
  F(target, nullptr)                                  \
  F(target_rows, 0)                                   \
  F(target_cols, 0)                                   \
  F(target_row_stride, 0)                             \
  F(target_col_stride, 0)                             \
  F(random_starts, core.random_starts)                \
  F(seed, core.seed)                                  \
  F(max_iterations, core.max_iterations)              \
  F(tolerance, core.tolerance)                        \
  F(threads, core.threads)

LODE_OPTIONS_FUNCTIONS(lode_rotation_options, LODE_ROTATION_OPTIONS_FIELDS, RotationOptions, rotation_defaults,
                       merged_rotation_options)

double finite_option(double v, const char* name) {
  if (!std::isfinite(v)) fail(LODE_E_INVALID_ARGUMENT, fmt::format("rotation option {} is not finite ({})", name, v));
  return v;
}

Matrix target_of(const lode_rotation_options& o) {
  if (o.target == nullptr) {
    if (o.target_rows != 0 || o.target_cols != 0)
      fail(LODE_E_INVALID_ARGUMENT, "argument 'target' is NULL but its size is not 0 x 0");
    return Matrix();
  }
  // NaN marks unspecified entries of a partial target, so it is allowed here; infinities are not.
  Matrix t = read_matrix(o.target, o.target_rows, o.target_cols, o.target_row_stride, o.target_col_stride, "target");
  for (Index j = 0; j < t.cols(); ++j)
    for (Index i = 0; i < t.rows(); ++i)
      if (std::isinf(t(i, j)))
        fail(LODE_E_INVALID_ARGUMENT, fmt::format("the target holds an infinite value at row {}, column {}", i + 1, j + 1));
  return t;
}

constexpr HandleNames rotation_handle{"lode_rotation", "lode_rotation", "rotation"};

constexpr MatrixKey<lode_rotation> rotation_matrices[] = {
    {LODE_ROTATION_PATTERN, [](const lode_rotation& r) -> Matrix { return r.result.pattern; }},
    {LODE_ROTATION_STRUCTURE, [](const lode_rotation& r) -> Matrix { return r.result.structure; }},
    {LODE_ROTATION_FACTOR_CORRELATIONS, [](const lode_rotation& r) -> Matrix { return r.result.factor_correlations; }},
    {LODE_ROTATION_TRANSFORM, [](const lode_rotation& r) -> Matrix { return r.result.rotation; }},
    {LODE_ROTATION_SS_PATTERN, [](const lode_rotation& r) -> Matrix { return r.result.ss_pattern; }},
    {LODE_ROTATION_SS_STRUCTURE, [](const lode_rotation& r) -> Matrix { return r.result.ss_structure; }},
    {LODE_ROTATION_START_CRITERIA, [](const lode_rotation& r) -> Matrix { return vector_of(r.result.starts.criteria); }},
};

constexpr ValueKey<lode_rotation> rotation_values[] = {
    {LODE_ROTATION_CRITERION, [](const lode_rotation& r) { return r.result.criterion; }},
    {LODE_ROTATION_CONVERGED, [](const lode_rotation& r) { return flag(r.result.convergence.converged); }},
    {LODE_ROTATION_ITERATIONS, [](const lode_rotation& r) { return static_cast<double>(r.result.convergence.iterations); }},
    {LODE_ROTATION_OBLIQUE, [](const lode_rotation& r) { return flag(r.result.oblique); }},
    {LODE_ROTATION_STARTS, [](const lode_rotation& r) { return static_cast<double>(r.result.starts.starts); }},
    {LODE_ROTATION_STARTS_CONVERGED, [](const lode_rotation& r) { return static_cast<double>(r.result.starts.converged); }},
    {LODE_ROTATION_REACHED_BEST, [](const lode_rotation& r) { return static_cast<double>(r.result.starts.reached_best); }},
    {LODE_ROTATION_DISTINCT_SOLUTIONS,
     [](const lode_rotation& r) { return static_cast<double>(r.result.starts.distinct_solutions); }},
    {LODE_ROTATION_METHOD, [](const lode_rotation& r) { return static_cast<double>(static_cast<int>(r.result.method)); }},
    {LODE_ROTATION_FINAL_CHANGE, [](const lode_rotation& r) { return r.result.convergence.final_change; }},
    {LODE_ROTATION_TOLERANCE, [](const lode_rotation& r) { return r.result.convergence.tolerance; }},
    {LODE_ROTATION_MAX_ITERATIONS,
     [](const lode_rotation& r) { return static_cast<double>(r.result.convergence.max_iterations); }},
};

constexpr TextKey<lode_rotation> rotation_texts[] = {
    {LODE_ROTATION_METHOD_NAME, [](const lode_rotation& r) { return std::string(rotation_name(r.result.method)); }},
};

}  // namespace

RotationOptions lode::capi::read_rotation_options(const lode_rotation_options* opts,
                                                  const std::vector<std::string>& names) {
  const lode_rotation_options o = merged_rotation_options(opts);
  RotationOptions r;
  r.method = rotation_method_of(o.method);
  r.normalize = o.normalize != 0;
  r.gamma = finite_option(o.gamma, "gamma");
  r.kappa = finite_option(o.kappa, "kappa");
  r.epsilon = finite_option(o.epsilon, "epsilon");
  r.power = finite_option(o.power, "power");
  r.target = target_of(o);
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
  require_threads(o.threads);
  r.threads = o.threads;
  r.item_names = names;
  return r;
}

extern "C" {

LODE_API int lode_criterion_from_name(const char* name, int* method) {
  return guarded([&] {
    require_pointer(name, "name");
    require_pointer(method, "method");
    *method = static_cast<int>(rotation_from_name(name));
  });
}

LODE_API const char* lode_criterion_name(int method) {
  return known_criterion(method) ? rotation_name(static_cast<RotationMethod>(method)) : nullptr;
}

LODE_OPTIONS_INIT(lode_rotation_options, rotation_defaults)

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

LODE_KEY_GETTERS(lode_rotation, lode_rotation, rotation_handle, rotation_matrices, rotation_values, rotation_texts)

}  // extern "C"

RotationMethod lode::capi::rotation_method_of(int method) {
  if (!known_criterion(method)) fail(LODE_E_INVALID_ARGUMENT, fmt::format("unknown rotation method {}", method));
  return static_cast<RotationMethod>(method);  // lode.h numbers the criteria as the core does (static_asserts above)
}
