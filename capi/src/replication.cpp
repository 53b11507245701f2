// The restricted factor model, split-sample replication and the hold-out check through the C ABI (ABI 1.4).
#include "boundary.hpp"
#include "handles.hpp"
#include "model.hpp"
#include "results.hpp"

#include "lode/replication.hpp"
#include "lode/restricted_fit.hpp"

#include <cmath>
#include <cstdint>
#include <memory>

using namespace lode;
using namespace lode::capi;

struct lode_restricted_fit {
  RestrictedFitResult result;
};

struct lode_replication {
  ReplicationResult result;
};

struct lode_holdout {
  HoldoutResult result;
  double share = 0.0, salient = 0.0;
};

namespace {

lode_restricted_fit_options restricted_defaults() {
  const RestrictedFitOptions core;
  lode_restricted_fit_options d{};
  d.struct_size = sizeof d;
  d.max_iterations = core.max_iterations;
  d.tolerance = core.tolerance;
  d.min_uniqueness = core.min_uniqueness;
  d.interval_level = core.interval_level;
  return d;
}

lode_replication_options replication_defaults() {
  const ReplicationOptions core;
  lode_replication_options d{};
  d.struct_size = sizeof d;
  d.splits = static_cast<int64_t>(core.splits);
  d.seed = core.seed;
  d.threads = core.threads;
  return d;
}

lode_holdout_options holdout_defaults() {
  const HoldoutOptions core;
  lode_holdout_options d{};
  d.struct_size = sizeof d;
  d.share = core.share;
  d.seed = core.seed;
  d.salient = core.salient;
  return d;
}

RestrictedFitOptions read_restricted_options(const lode_restricted_fit_options* opts) {
  lode_restricted_fit_options o = restricted_defaults();
  if (opts) {
    check_options_size(opts, "lode_restricted_fit_options");
    LODE_OPTION_FIELD(o, opts, max_iterations);
    LODE_OPTION_FIELD(o, opts, tolerance);
    LODE_OPTION_FIELD(o, opts, min_uniqueness);
    LODE_OPTION_FIELD(o, opts, interval_level);
  }
  if (o.max_iterations < 1 || o.max_iterations > 1000000)
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("max_iterations must be between 1 and 1000000; it is {}", o.max_iterations));
  if (!(o.tolerance > 0.0 && o.tolerance < 1.0))
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("tolerance must lie strictly between 0 and 1; it is {}", o.tolerance));
  if (!(o.min_uniqueness >= 0.0 && o.min_uniqueness < 1.0))
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("min_uniqueness must lie in [0, 1); it is {}", o.min_uniqueness));
  if (!(o.interval_level > 0.0 && o.interval_level < 1.0))
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("interval_level must lie strictly between 0 and 1; it is {}", o.interval_level));
  RestrictedFitOptions r;
  r.max_iterations = o.max_iterations;
  r.tolerance = o.tolerance;
  r.min_uniqueness = o.min_uniqueness;
  r.interval_level = o.interval_level;
  return r;
}

// The analysis a replication or hold-out check repeats: factors, extraction and rotation from `fit`.
struct Analysis {
  int factors = 0;
  ExtractionOptions extraction;
  RotationOptions rotation;
};

Analysis read_analysis(const lode_correlation* corr, const lode_model_options* fit, const char* what) {
  FitSetup setup = read_fit_options(fit, corr);
  if (setup.factors < 1)
    fail(LODE_E_INVALID_ARGUMENT,
         fmt::format("{} needs the number of factors (lode_model_options.factors); it is {}", what, setup.factors));
  require_rows(*corr->data, fmt::format("{} splits the respondents", what).c_str());
  Analysis a;
  a.factors = setup.factors;
  a.extraction = setup.extraction;
  a.extraction.n_obs = 0;  // each part takes the sample size behind its own correlations
  a.rotation.method = RotationMethod::none;
  if (setup.rotation) a.rotation = *setup.rotation;
  a.rotation.item_names = corr->options.item_names;
  return a;
}

Matrix index_column(const std::vector<Index>& v) {
  Matrix m(static_cast<Index>(v.size()), 1);
  for (std::size_t i = 0; i < v.size(); ++i) m(static_cast<Index>(i), 0) = static_cast<double>(v[i]);
  return m;
}

}  // namespace

extern "C" {

LODE_API int lode_restricted_fit_options_init(lode_restricted_fit_options* opts, size_t struct_size) {
  return guarded([&] { init_options(opts, struct_size, restricted_defaults(), "lode_restricted_fit_options"); });
}

LODE_API int lode_restricted_fit_compute(const lode_correlation* corr, const double* pattern, int64_t items,
                                         int64_t factors, int64_t row_stride, int64_t col_stride,
                                         const lode_restricted_fit_options* opts, lode_restricted_fit** out) {
  return guarded([&] {
    require_pointer(corr, "corr");
    require_pointer(out, "out");
    *out = nullptr;
    const Matrix p = read_matrix(pattern, items, factors, row_stride, col_stride, "pattern");
    RestrictedFitOptions o = read_restricted_options(opts);
    o.n_obs = corr->result.n_obs;
    o.item_names = corr->options.item_names;
    if (o.n_obs < 2)
      fail(LODE_E_INSUFFICIENT_DATA,
           "the restricted fit needs the number of respondents behind the correlations; give n_obs with the matrix");
    auto f = std::make_unique<lode_restricted_fit>();
    f->result = fit_restricted(corr->result.matrix, p, o);
    *out = f.release();
  });
}

LODE_API void lode_restricted_fit_free(lode_restricted_fit* fit) { delete fit; }

LODE_API int lode_restricted_fit_matrix(const lode_restricted_fit* fit, int key, double* out, size_t capacity,
                                        int64_t* rows, int64_t* cols) {
  return guarded([&] {
    require_pointer(fit, "fit");
    const auto& r = fit->result;
    switch (key) {
      case LODE_RESTRICTED_FIT_LOADINGS: write_matrix(r.loadings, out, capacity, rows, cols); break;
      case LODE_RESTRICTED_FIT_LOADINGS_SE: write_matrix(r.loadings_se, out, capacity, rows, cols); break;
      case LODE_RESTRICTED_FIT_FACTOR_CORRELATIONS: write_matrix(r.factor_correlations, out, capacity, rows, cols); break;
      case LODE_RESTRICTED_FIT_FACTOR_CORRELATIONS_SE:
        write_matrix(r.factor_correlations_se, out, capacity, rows, cols);
        break;
      case LODE_RESTRICTED_FIT_UNIQUENESSES: write_matrix(r.uniquenesses, out, capacity, rows, cols); break;
      case LODE_RESTRICTED_FIT_UNIQUENESSES_SE: write_matrix(r.uniquenesses_se, out, capacity, rows, cols); break;
      case LODE_RESTRICTED_FIT_HEYWOOD: {
        Matrix h = Matrix::Zero(r.uniquenesses.size(), 1);
        for (const auto& item : r.heywood) h(item.item, 0) = 1.0;
        write_matrix(h, out, capacity, rows, cols);
        break;
      }
      case LODE_RESTRICTED_FIT_PATTERN: write_matrix(r.pattern, out, capacity, rows, cols); break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_restricted_fit matrix (lode_restricted_fit_matrix)"));
    }
  });
}

LODE_API int lode_restricted_fit_value(const lode_restricted_fit* fit, int key, double* value) {
  return guarded([&] {
    require_pointer(fit, "fit");
    require_pointer(value, "value");
    const auto& r = fit->result;
    double v = 0.0;
    switch (key) {
      case LODE_RESTRICTED_FIT_ITEMS: v = static_cast<double>(r.loadings.rows()); break;
      case LODE_RESTRICTED_FIT_FACTORS: v = static_cast<double>(r.loadings.cols()); break;
      case LODE_RESTRICTED_FIT_N_OBS: v = static_cast<double>(r.n_obs); break;
      case LODE_RESTRICTED_FIT_CONVERGED: v = r.convergence.converged ? 1.0 : 0.0; break;
      case LODE_RESTRICTED_FIT_ITERATIONS: v = r.convergence.iterations; break;
      case LODE_RESTRICTED_FIT_FINAL_CHANGE: v = r.convergence.final_change; break;
      case LODE_RESTRICTED_FIT_TOLERANCE: v = r.convergence.tolerance; break;
      case LODE_RESTRICTED_FIT_HEYWOOD_COUNT: v = static_cast<double>(r.heywood.size()); break;
      case LODE_RESTRICTED_FIT_FREE_PARAMETERS: v = static_cast<double>(r.free_parameters); break;
      case LODE_RESTRICTED_FIT_DISCREPANCY: v = r.discrepancy; break;
      case LODE_RESTRICTED_FIT_CHI_SQUARE: v = r.chi_square; break;
      case LODE_RESTRICTED_FIT_DF: v = r.df; break;
      case LODE_RESTRICTED_FIT_P_VALUE: v = r.p_value; break;
      case LODE_RESTRICTED_FIT_CFI: v = r.cfi; break;
      case LODE_RESTRICTED_FIT_TLI: v = r.tli; break;
      case LODE_RESTRICTED_FIT_RMSEA: v = r.rmsea; break;
      case LODE_RESTRICTED_FIT_RMSEA_LOWER: v = r.rmsea_lower; break;
      case LODE_RESTRICTED_FIT_RMSEA_UPPER: v = r.rmsea_upper; break;
      case LODE_RESTRICTED_FIT_SRMR: v = r.srmr; break;
      case LODE_RESTRICTED_FIT_BIC: v = r.bic; break;
      case LODE_RESTRICTED_FIT_NULL_CHI_SQUARE: v = r.null_chi_square; break;
      case LODE_RESTRICTED_FIT_NULL_DF: v = r.null_df; break;
      case LODE_RESTRICTED_FIT_PROPER_CORRELATIONS: v = r.factor_correlations_proper ? 1.0 : 0.0; break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_restricted_fit number (lode_restricted_fit_value)"));
    }
    *value = v;
  });
}

LODE_API int lode_restricted_fit_text(const lode_restricted_fit* fit, int key, char* out, size_t capacity,
                                      size_t* length) {
  return guarded([&] {
    require_pointer(fit, "fit");
    if (key != LODE_RESTRICTED_FIT_NOTES)
      fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_restricted_fit text (lode_restricted_fit_text)"));
    write_text(join_lines(fit->result.notes), out, capacity, length);
  });
}

LODE_API int lode_replication_options_init(lode_replication_options* opts, size_t struct_size) {
  return guarded([&] { init_options(opts, struct_size, replication_defaults(), "lode_replication_options"); });
}

LODE_API int lode_replication_compute(const lode_correlation* corr, const lode_model_options* fit,
                                      const lode_replication_options* opts, lode_replication** out) {
  return guarded([&] {
    require_pointer(corr, "corr");
    require_pointer(out, "out");
    *out = nullptr;
    const Analysis a = read_analysis(corr, fit, "replication");
    lode_replication_options o = replication_defaults();
    if (opts) {
      check_options_size(opts, "lode_replication_options");
      LODE_OPTION_FIELD(o, opts, splits);
      LODE_OPTION_FIELD(o, opts, seed);
      LODE_OPTION_FIELD(o, opts, threads);
      LODE_OPTION_FIELD(o, opts, progress);
      LODE_OPTION_FIELD(o, opts, progress_user);
    }
    if (o.splits < 2 || o.splits > 100000)
      fail(LODE_E_INVALID_ARGUMENT, fmt::format("splits must be between 2 and 100000; it is {}", o.splits));
    if (o.threads < 0) fail(LODE_E_INVALID_ARGUMENT, fmt::format("threads must be 0 (all cores) or more; it is {}", o.threads));
    ReplicationOptions ro;
    ro.splits = static_cast<Index>(o.splits);
    ro.seed = o.seed;
    ro.threads = o.threads;
    ro.progress = progress_of(o.progress, o.progress_user);
    ro.correlation = corr->options;
    ro.correlation.polychoric.progress = {};
    auto r = std::make_unique<lode_replication>();
    r->result = replicate_halves(corr->data->values, a.factors, a.extraction, a.rotation, ro);
    *out = r.release();
  });
}

LODE_API void lode_replication_free(lode_replication* replication) { delete replication; }

LODE_API int lode_replication_matrix(const lode_replication* replication, int key, double* out, size_t capacity,
                                     int64_t* rows, int64_t* cols) {
  return guarded([&] {
    require_pointer(replication, "replication");
    const auto& r = replication->result;
    switch (key) {
      case LODE_REPLICATION_CONGRUENCE_MEDIAN: write_matrix(r.congruence_median, out, capacity, rows, cols); break;
      case LODE_REPLICATION_CONGRUENCE_P5: write_matrix(r.congruence_p5, out, capacity, rows, cols); break;
      case LODE_REPLICATION_SHARE_FAIR: write_matrix(r.share_fair, out, capacity, rows, cols); break;
      case LODE_REPLICATION_SHARE_EQUAL: write_matrix(r.share_equal, out, capacity, rows, cols); break;
      case LODE_REPLICATION_ITEM_STABILITY: write_matrix(r.item_stability, out, capacity, rows, cols); break;
      case LODE_REPLICATION_CONGRUENCE: write_matrix(r.congruence, out, capacity, rows, cols); break;
      case LODE_REPLICATION_LOADINGS: write_matrix(r.loadings, out, capacity, rows, cols); break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_replication matrix (lode_replication_matrix)"));
    }
  });
}

LODE_API int lode_replication_value(const lode_replication* replication, int key, double* value) {
  return guarded([&] {
    require_pointer(replication, "replication");
    require_pointer(value, "value");
    const auto& r = replication->result;
    double v = 0.0;
    switch (key) {
      case LODE_REPLICATION_SPLITS: v = static_cast<double>(r.splits_requested); break;
      case LODE_REPLICATION_USED: v = static_cast<double>(r.splits_used); break;
      case LODE_REPLICATION_FAILED: v = static_cast<double>(r.splits_failed); break;
      case LODE_REPLICATION_FACTORS: v = r.factors; break;
      case LODE_REPLICATION_ITEMS: v = static_cast<double>(r.loadings.rows()); break;
      case LODE_REPLICATION_SUGGESTED_FULL: v = static_cast<double>(r.suggested_full); break;
      case LODE_REPLICATION_SHARE_SAME_COUNT: v = r.share_same_count; break;
      case LODE_REPLICATION_SHARE_FULL_COUNT: v = r.share_full_count; break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_replication number (lode_replication_value)"));
    }
    *value = v;
  });
}

LODE_API int lode_replication_text(const lode_replication* replication, int key, char* out, size_t capacity,
                                   size_t* length) {
  return guarded([&] {
    require_pointer(replication, "replication");
    const auto& r = replication->result;
    switch (key) {
      case LODE_REPLICATION_FAILURES: write_text(join_lines(r.failures), out, capacity, length); break;
      case LODE_REPLICATION_NOTES: write_text(join_lines(r.notes), out, capacity, length); break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_replication text (lode_replication_text)"));
    }
  });
}

LODE_API int lode_holdout_options_init(lode_holdout_options* opts, size_t struct_size) {
  return guarded([&] { init_options(opts, struct_size, holdout_defaults(), "lode_holdout_options"); });
}

LODE_API int lode_holdout_compute(const lode_correlation* corr, const lode_model_options* fit,
                                  const lode_holdout_options* opts, lode_holdout** out) {
  return guarded([&] {
    require_pointer(corr, "corr");
    require_pointer(out, "out");
    *out = nullptr;
    const Analysis a = read_analysis(corr, fit, "the hold-out check");
    lode_holdout_options o = holdout_defaults();
    if (opts) {
      check_options_size(opts, "lode_holdout_options");
      LODE_OPTION_FIELD(o, opts, share);
      LODE_OPTION_FIELD(o, opts, seed);
      LODE_OPTION_FIELD(o, opts, salient);
      LODE_OPTION_FIELD(o, opts, restricted);
    }
    if (!(o.salient > 0.0 && o.salient < 1.0))
      fail(LODE_E_INVALID_ARGUMENT, fmt::format("salient must lie strictly between 0 and 1; it is {}", o.salient));
    HoldoutOptions ho;
    ho.share = o.share;
    ho.seed = o.seed;
    ho.salient = o.salient;
    ho.correlation = corr->options;
    ho.correlation.polychoric.progress = {};
    ho.restricted = read_restricted_options(o.restricted);
    auto h = std::make_unique<lode_holdout>();
    h->result = holdout_check(corr->data->values, a.factors, a.extraction, a.rotation, ho);
    h->share = o.share;
    h->salient = o.salient;
    *out = h.release();
  });
}

LODE_API int lode_restricted_fit_from_holdout(const lode_holdout* holdout, lode_restricted_fit** out) {
  return guarded([&] {
    require_pointer(holdout, "holdout");
    require_pointer(out, "out");
    *out = nullptr;
    auto f = std::make_unique<lode_restricted_fit>();
    f->result = holdout->result.confirmatory;
    *out = f.release();
  });
}

LODE_API void lode_holdout_free(lode_holdout* holdout) { delete holdout; }

LODE_API int lode_holdout_matrix(const lode_holdout* holdout, int key, double* out, size_t capacity, int64_t* rows,
                                 int64_t* cols) {
  return guarded([&] {
    require_pointer(holdout, "holdout");
    const auto& r = holdout->result;
    switch (key) {
      case LODE_HOLDOUT_EXPLORATORY_LOADINGS: write_matrix(r.exploratory.loadings, out, capacity, rows, cols); break;
      case LODE_HOLDOUT_EXPLORATORY_FACTOR_CORRELATIONS: {
        const Index k = r.exploratory.loadings.cols();
        const Matrix phi = r.exploratory.factor_correlations.size() == 0 ? Matrix::Identity(k, k)
                                                                          : r.exploratory.factor_correlations;
        write_matrix(phi, out, capacity, rows, cols);
        break;
      }
      case LODE_HOLDOUT_PATTERN: write_matrix(r.pattern, out, capacity, rows, cols); break;
      case LODE_HOLDOUT_ITEMS_FITTED: write_matrix(index_column(r.items_fitted), out, capacity, rows, cols); break;
      case LODE_HOLDOUT_ITEMS_LEFT_OUT: write_matrix(index_column(r.items_left_out), out, capacity, rows, cols); break;
      case LODE_HOLDOUT_ROWS: write_matrix(index_column(r.holdout_rows), out, capacity, rows, cols); break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_holdout matrix (lode_holdout_matrix)"));
    }
  });
}

LODE_API int lode_holdout_value(const lode_holdout* holdout, int key, double* value) {
  return guarded([&] {
    require_pointer(holdout, "holdout");
    require_pointer(value, "value");
    const auto& r = holdout->result;
    double v = 0.0;
    switch (key) {
      case LODE_HOLDOUT_N_EXPLORE: v = static_cast<double>(r.n_explore); break;
      case LODE_HOLDOUT_N_HOLDOUT: v = static_cast<double>(r.n_holdout); break;
      case LODE_HOLDOUT_SHARE: v = holdout->share; break;
      case LODE_HOLDOUT_SALIENT: v = holdout->salient; break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_holdout number (lode_holdout_value)"));
    }
    *value = v;
  });
}

LODE_API int lode_holdout_text(const lode_holdout* holdout, int key, char* out, size_t capacity, size_t* length) {
  return guarded([&] {
    require_pointer(holdout, "holdout");
    if (key != LODE_HOLDOUT_NOTES) fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_holdout text (lode_holdout_text)"));
    write_text(join_lines(holdout->result.notes), out, capacity, length);
  });
}

}  // extern "C"
