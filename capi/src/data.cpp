// Version, status names, the last error, and data handles (raw answers or a matrix; summaries: summary.cpp).
#include "boundary.hpp"
#include "handles.hpp"

#include "lode/correlation.hpp"

#include <cmath>
#include <cstdio>

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

}  // extern "C"

void lode::capi::require_rows(const DataContent& content, const char* what) {
  switch (content.source) {
    case DataSource::raw: return;
    case DataSource::correlation:
      fail(LODE_E_INVALID_ARGUMENT, fmt::format("{}, so it needs raw data (the respondents' answers, rows x "
                                                "items); these data were given as a correlation matrix", what));
    case DataSource::covariance:
      fail(LODE_E_INVALID_ARGUMENT, fmt::format("{}, so it needs raw data (the respondents' answers, rows x "
                                                "items); these data were given as a covariance matrix", what));
    case DataSource::summary:
      fail(LODE_E_INVALID_ARGUMENT, fmt::format("{}, so it needs raw data (the respondents' answers, rows x "
                                                "items); these data come from a summary, which keeps counts and sums but no respondent's "
                                                "answers: compute it from the rows themselves", what));
  }
}
