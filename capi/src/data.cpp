// Version, status names, the last error, data handles and correlations.
#include "boundary.hpp"
#include "handles.hpp"

#include "lode/polychoric.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>

using namespace lode;
using namespace lode::capi;

namespace {

lode_version_info make_version_info() {
  lode_version_info v{};
  std::sscanf(lode::version(), "%d.%d.%d", &v.major, &v.minor, &v.patch);
  v.abi_major = LODE_ABI_VERSION_MAJOR;
  v.abi_minor = LODE_ABI_VERSION_MINOR;
  v.string = lode::version();
  return v;
}

int make_matrix_data(DataSource source, const double* values, int64_t items, int64_t row_stride, int64_t col_stride,
                     int64_t n_obs, lode_data** out) {
  return guarded([&] {
    require_pointer(out, "out");
    *out = nullptr;
    const char* what = source == DataSource::correlation ? "correlation matrix" : "covariance matrix";
    auto content = std::make_shared<DataContent>();
    content->source = source;
    content->values = read_matrix(values, items, items, row_stride, col_stride, what);
    if (n_obs < 0) fail(LODE_E_INVALID_ARGUMENT, fmt::format("the number of observations is negative ({})", n_obs));
    content->n_obs = static_cast<Index>(n_obs);
    // Check the matrix now, so a malformed one is reported where it enters.
    if (source == DataSource::correlation) correlation_from_matrix(content->values, content->n_obs);
    else correlation_from_covariance(content->values, content->n_obs);
    *out = new lode_data{std::move(content)};
  });
}

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

LODE_API const lode_version_info* lode_version(void) {
  static const lode_version_info info = make_version_info();
  return &info;
}

LODE_API const char* lode_status_name(int status) {
  switch (status) {
    case LODE_OK: return "ok";
    case LODE_E_INVALID_ARGUMENT: return "invalid argument";
    case LODE_E_INSUFFICIENT_DATA: return "insufficient data";
    case LODE_E_NOT_POSITIVE_DEFINITE: return "not positive definite";
    case LODE_E_TOO_MANY_FACTORS: return "too many factors";
    case LODE_E_NOT_CONVERGED: return "not converged";
    case LODE_E_CANCELLED: return "cancelled";
    case LODE_E_INTERNAL: return "internal error";
    case LODE_E_NOMEM: return "out of memory";
    case LODE_E_BUFFER_TOO_SMALL: return "buffer too small";
    case LODE_E_UNSUPPORTED: return "unsupported";
    default: return "unknown status";
  }
}

LODE_API const char* lode_error_message(void) { return lode::capi::last_error(); }

LODE_API int lode_data_from_raw(const double* values, int64_t rows, int64_t cols, int64_t row_stride,
                                int64_t col_stride, lode_data** out) {
  return guarded([&] {
    require_pointer(out, "out");
    *out = nullptr;
    auto content = std::make_shared<DataContent>();
    content->source = DataSource::raw;
    content->values = read_matrix(values, rows, cols, row_stride, col_stride, "data");
    for (Index j = 0; j < content->values.cols(); ++j)
      for (Index i = 0; i < content->values.rows(); ++i)
        if (std::isinf(content->values(i, j)))
          fail(LODE_E_INVALID_ARGUMENT,
               fmt::format("{} holds an infinite value in row {}", item_label({}, j), i + 1));
    content->n_obs = static_cast<Index>(rows);
    *out = new lode_data{std::move(content)};
  });
}

LODE_API int lode_data_from_correlation(const double* values, int64_t items, int64_t row_stride, int64_t col_stride,
                                        int64_t n_obs, lode_data** out) {
  return make_matrix_data(DataSource::correlation, values, items, row_stride, col_stride, n_obs, out);
}

LODE_API int lode_data_from_covariance(const double* values, int64_t items, int64_t row_stride, int64_t col_stride,
                                       int64_t n_obs, lode_data** out) {
  return make_matrix_data(DataSource::covariance, values, items, row_stride, col_stride, n_obs, out);
}

LODE_API int lode_data_set_item_names(lode_data* data, const char* const* names, int64_t count) {
  return guarded([&] {
    require_pointer(data, "data");
    const Index items = data->content->values.cols();
    if (names == nullptr && count != 0)
      fail(LODE_E_INVALID_ARGUMENT, fmt::format("argument 'names' is NULL but count is {}", count));
    if (names != nullptr && count != items)
      fail(LODE_E_INVALID_ARGUMENT, fmt::format("{} names were given for {} items", count, items));
    auto content = std::make_shared<DataContent>(*data->content);
    content->item_names.clear();
    for (int64_t j = 0; j < count; ++j) content->item_names.emplace_back(names[j] ? names[j] : "");
    data->content = std::move(content);
  });
}

LODE_API int lode_data_shape(const lode_data* data, int64_t* rows, int64_t* items) {
  return guarded([&] {
    require_pointer(data, "data");
    if (rows) *rows = static_cast<int64_t>(data->content->n_obs);
    if (items) *items = static_cast<int64_t>(data->content->values.cols());
  });
}

LODE_API void lode_data_free(lode_data* data) { delete data; }

LODE_API int lode_correlation_options_init(lode_correlation_options* opts, size_t struct_size) {
  return guarded([&] {
    lode_correlation_options d{};
    d.struct_size = sizeof d;
    d.kind = LODE_COEFFICIENT_PEARSON;
    d.missing = LODE_MISSING_PAIRWISE;
    d.smooth = 0;
    d.min_eigenvalue = 1e-6;
    d.min_pair_observations = 3;
    d.threads = 0;
    d.max_categories = 10;
    d.zero_cells = LODE_ZERO_CELLS_AT_BOUND;
    d.zero_cell_add = 0.5;
    d.progress = nullptr;
    d.progress_user = nullptr;
    d.em_tolerance = 1e-10;
    d.em_max_iterations = 1000;
    init_options(opts, struct_size, d, "lode_correlation_options");
  });
}

}  // extern "C"

// lode_correlation_options (older sizes included), checked, as the core's options.
CorrelationOptions lode::capi::read_correlation_options(const lode_correlation_options* opts) {
  lode_correlation_options o{};
  lode_correlation_options_init(&o, sizeof o);
  if (opts) {
    check_options_size(opts, "lode_correlation_options");
    LODE_OPTION_FIELD(o, opts, kind);
    LODE_OPTION_FIELD(o, opts, missing);
    LODE_OPTION_FIELD(o, opts, smooth);
    LODE_OPTION_FIELD(o, opts, min_eigenvalue);
    LODE_OPTION_FIELD(o, opts, min_pair_observations);
    LODE_OPTION_FIELD(o, opts, threads);
    LODE_OPTION_FIELD(o, opts, max_categories);
    LODE_OPTION_FIELD(o, opts, zero_cells);
    LODE_OPTION_FIELD(o, opts, zero_cell_add);
    LODE_OPTION_FIELD(o, opts, progress);
    LODE_OPTION_FIELD(o, opts, progress_user);
    LODE_OPTION_FIELD(o, opts, em_tolerance);
    LODE_OPTION_FIELD(o, opts, em_max_iterations);
  }
  CorrelationOptions co;
  switch (o.kind) {
    case LODE_COEFFICIENT_PEARSON: co.kind = CorrelationKind::pearson; break;
    case LODE_COEFFICIENT_SPEARMAN: co.kind = CorrelationKind::spearman; break;
    case LODE_COEFFICIENT_POLYCHORIC: co.kind = CorrelationKind::polychoric; break;
    default: fail(LODE_E_INVALID_ARGUMENT, fmt::format("unknown correlation kind {}", o.kind));
  }
  switch (o.missing) {
    case LODE_MISSING_PAIRWISE: co.missing = MissingPolicy::pairwise; break;
    case LODE_MISSING_LISTWISE: co.missing = MissingPolicy::listwise; break;
    case LODE_MISSING_EM: co.missing = MissingPolicy::em; break;
    default: fail(LODE_E_INVALID_ARGUMENT, fmt::format("unknown missing-value policy {}", o.missing));
  }
  co.smooth_if_not_positive_definite = o.smooth != 0;
  if (!(o.min_eigenvalue >= 0.0 && o.min_eigenvalue < 1.0))
    fail(LODE_E_INVALID_ARGUMENT,
         fmt::format("min_eigenvalue must be at least 0 and below 1; it is {}", o.min_eigenvalue));
  co.min_eigenvalue = o.min_eigenvalue;
  if (o.min_pair_observations < 2)
    fail(LODE_E_INVALID_ARGUMENT,
         fmt::format("min_pair_observations must be at least 2; it is {}", o.min_pair_observations));
  co.min_pair_observations = static_cast<Index>(o.min_pair_observations);
  if (o.threads < 0) fail(LODE_E_INVALID_ARGUMENT, fmt::format("threads must be 0 (all cores) or more; it is {}", o.threads));
  co.threads = o.threads;
  if (o.max_categories < 2 || o.max_categories > 100)
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("max_categories must be between 2 and 100; it is {}", o.max_categories));
  co.polychoric.max_categories = o.max_categories;
  switch (o.zero_cells) {
    case LODE_ZERO_CELLS_NONE: co.polychoric.zero_cells = ZeroCellPolicy::none; break;
    case LODE_ZERO_CELLS_AT_BOUND: co.polychoric.zero_cells = ZeroCellPolicy::at_bound; break;
    case LODE_ZERO_CELLS_ALWAYS: co.polychoric.zero_cells = ZeroCellPolicy::always; break;
    default: fail(LODE_E_INVALID_ARGUMENT, fmt::format("unknown zero-cell policy {}", o.zero_cells));
  }
  if (!(o.zero_cell_add > 0.0 && o.zero_cell_add <= 1.0))
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("zero_cell_add must be above 0 and at most 1; it is {}", o.zero_cell_add));
  co.polychoric.zero_cell_add = o.zero_cell_add;
  if (!(o.em_tolerance > 0.0 && o.em_tolerance < 1.0))
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("em_tolerance must be above 0 and below 1; it is {}", o.em_tolerance));
  if (o.em_max_iterations < 1)
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("em_max_iterations must be at least 1; it is {}", o.em_max_iterations));
  co.em.tolerance = o.em_tolerance;
  co.em.max_iterations = o.em_max_iterations;
  if (o.progress) {
    const lode_progress_fn fn = o.progress;
    void* user = o.progress_user;
    co.polychoric.progress = [fn, user](std::int64_t done, std::int64_t total) { return fn(user, done, total) == 0; };
    co.em.progress = co.polychoric.progress;
  }
  return co;
}

extern "C" {

LODE_API int lode_correlation_compute(const lode_data* data, const lode_correlation_options* opts, lode_correlation** out) {
  return guarded([&] {
    require_pointer(data, "data");
    require_pointer(out, "out");
    *out = nullptr;
    CorrelationOptions co = read_correlation_options(opts);
    const auto& content = data->content;
    co.item_names = content->item_names;

    auto c = std::make_unique<lode_correlation>();
    c->data = content;
    switch (content->source) {
      case DataSource::raw:
        if (co.kind == CorrelationKind::polychoric) keep_polychoric(*c, polychoric_correlation(content->values, co));
        else c->result = correlation(content->values, co);
        break;
      case DataSource::summary:
        if (co.kind == CorrelationKind::polychoric) keep_polychoric(*c, polychoric_from_summary(*content->summary, co));
        else c->result = correlation_from_summary(*content->summary, co);
        break;
      case DataSource::correlation: c->result = correlation_from_matrix(content->values, content->n_obs, co); break;
      case DataSource::covariance: c->result = correlation_from_covariance(content->values, content->n_obs, co); break;
    }
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
    *out = c.release();
  });
}

LODE_API void lode_correlation_free(lode_correlation* corr) { delete corr; }

LODE_API int lode_correlation_matrix(const lode_correlation* corr, int key, double* out, size_t capacity,
                                     int64_t* rows, int64_t* cols) {
  return guarded([&] {
    require_pointer(corr, "corr");
    const auto& r = corr->result;
    switch (key) {
      case LODE_CORRELATION_MATRIX: write_matrix(r.matrix, out, capacity, rows, cols); break;
      case LODE_CORRELATION_PAIR_COUNTS: write_matrix(r.report.pair_counts.cast<double>(), out, capacity, rows, cols); break;
      case LODE_CORRELATION_EIGENVALUES: write_matrix(corr->eigenvalues, out, capacity, rows, cols); break;
      case LODE_CORRELATION_STANDARD_ERRORS:
      case LODE_CORRELATION_THRESHOLDS:
        if (!corr->polychoric)
          fail(LODE_E_INVALID_ARGUMENT, "standard errors and thresholds exist only for polychoric correlations of raw data");
        write_matrix(key == LODE_CORRELATION_THRESHOLDS ? corr->thresholds : corr->standard_errors, out, capacity, rows,
                     cols);
        break;
      case LODE_CORRELATION_EM_MEANS:
      case LODE_CORRELATION_EM_COVARIANCE:
        if (r.missing != MissingPolicy::em || r.em.means.size() == 0)
          fail(LODE_E_INVALID_ARGUMENT, "EM means and covariances exist only for correlations of raw data with the em rule");
        write_matrix(key == LODE_CORRELATION_EM_MEANS ? Matrix(r.em.means) : r.em.covariance, out, capacity, rows, cols);
        break;
      case LODE_CORRELATION_REDUCED_EIGENVALUES:
      case LODE_CORRELATION_SMC:
        if (corr->smc.size() == 0) fail(LODE_E_NOT_POSITIVE_DEFINITE, corr->smc_error);
        write_matrix(key == LODE_CORRELATION_SMC ? corr->smc : corr->reduced_eigenvalues, out, capacity, rows, cols);
        break;
      default:
        fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_correlation matrix (lode_correlation_matrix)"));
    }
  });
}

LODE_API int lode_correlation_value(const lode_correlation* corr, int key, double* value) {
  return guarded([&] {
    require_pointer(corr, "corr");
    require_pointer(value, "value");
    const auto& r = corr->result;
    const auto& s = r.smoothing;
    double v = 0.0;
    switch (key) {
      case LODE_CORRELATION_ITEMS: v = static_cast<double>(r.matrix.cols()); break;
      case LODE_CORRELATION_N_OBS: v = static_cast<double>(r.n_obs); break;
      case LODE_CORRELATION_ROWS_TOTAL: v = static_cast<double>(r.report.rows_total); break;
      case LODE_CORRELATION_ROWS_COMPLETE: v = static_cast<double>(r.report.rows_complete); break;
      case LODE_CORRELATION_ROWS_USED: v = static_cast<double>(r.report.rows_used); break;
      case LODE_CORRELATION_MIN_PAIR_COUNT: v = static_cast<double>(r.report.min_pair_count); break;
      case LODE_CORRELATION_MISSING_FRACTION: v = r.report.missing_fraction; break;
      case LODE_CORRELATION_POSITIVE_DEFINITE: v = r.positive_definite ? 1.0 : 0.0; break;
      case LODE_CORRELATION_SMOOTHED: v = s.applied ? 1.0 : 0.0; break;
      case LODE_CORRELATION_SMALLEST_EIGENVALUE_BEFORE: v = s.smallest_eigenvalue_before; break;
      case LODE_CORRELATION_SMOOTHING_MAX_CHANGE: v = s.max_abs_change; break;
      case LODE_CORRELATION_SMOOTHING_RMS_CHANGE: v = s.rms_change; break;
      case LODE_CORRELATION_SMOOTHING_CONVERGED: v = s.convergence.converged ? 1.0 : 0.0; break;
      case LODE_CORRELATION_SMOOTHING_ITERATIONS: v = static_cast<double>(s.convergence.iterations); break;
      case LODE_CORRELATION_KIND:
        v = r.kind == CorrelationKind::spearman     ? LODE_COEFFICIENT_SPEARMAN
            : r.kind == CorrelationKind::polychoric ? LODE_COEFFICIENT_POLYCHORIC
                                                    : LODE_COEFFICIENT_PEARSON;
        break;
      case LODE_CORRELATION_PAIRS_NOT_CONVERGED: v = static_cast<double>(corr->pairs_not_converged); break;
      case LODE_CORRELATION_PAIRS_AT_BOUND: v = static_cast<double>(corr->pairs_at_bound); break;
      case LODE_CORRELATION_PAIRS_ZERO_CELL_CORRECTED: v = static_cast<double>(corr->pairs_zero_cell_corrected); break;
      case LODE_CORRELATION_MISSING:
        v = r.missing == MissingPolicy::listwise ? LODE_MISSING_LISTWISE : r.missing == MissingPolicy::em ? LODE_MISSING_EM : LODE_MISSING_PAIRWISE;
        break;
      case LODE_CORRELATION_EM_CONVERGED:
      case LODE_CORRELATION_EM_ITERATIONS:
      case LODE_CORRELATION_EM_FINAL_CHANGE:
      case LODE_CORRELATION_EM_TOLERANCE:
      case LODE_CORRELATION_EM_MAX_ITERATIONS: {
        if (r.missing != MissingPolicy::em || r.em.means.size() == 0)
          fail(LODE_E_INVALID_ARGUMENT, "EM convergence exists only for correlations of raw data with the em rule");
        const Convergence& c = r.em.convergence;
        v = key == LODE_CORRELATION_EM_CONVERGED    ? (c.converged ? 1.0 : 0.0)
            : key == LODE_CORRELATION_EM_ITERATIONS ? static_cast<double>(c.iterations)
            : key == LODE_CORRELATION_EM_FINAL_CHANGE ? c.final_change
            : key == LODE_CORRELATION_EM_TOLERANCE    ? c.tolerance
                                                      : static_cast<double>(c.max_iterations);
        break;
      }
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_correlation number (lode_correlation_value)"));
    }
    *value = v;
  });
}

LODE_API int lode_correlation_text(const lode_correlation* corr, int key, char* out, size_t capacity,
                                   size_t* length) {
  return guarded([&] {
    require_pointer(corr, "corr");
    switch (key) {
      case LODE_CORRELATION_NOTES: {
        std::string text;
        for (const auto& note : corr->result.notes) {
          if (!text.empty()) text += '\n';
          text += note;
        }
        write_text(text, out, capacity, length);
        break;
      }
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_correlation text (lode_correlation_text)"));
    }
  });
}

}  // extern "C"
