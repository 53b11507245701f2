// Summaries at the C boundary: create, add rows, merge, the byte form, and the data handle that
// lode_correlation_compute turns into correlations.
#include "boundary.hpp"
#include "handles.hpp"
#include "keys.hpp"
#include "options.hpp"
#include "results.hpp"

#include <cmath>
#include <limits>

using namespace lode;
using namespace lode::capi;

namespace {

const Summary& summary_of(const lode_summary* s) {
  require_pointer(s, "summary");
  return s->summary;
}

Matrix padded(const Summary& s, bool counts) {
  const Index p = s.items();
  Matrix m = Matrix::Constant(p, s.options.max_categories, std::numeric_limits<double>::quiet_NaN());
  for (Index j = 0; j < p; ++j) {
    const auto& cat = s.categories[static_cast<std::size_t>(j)];
    for (std::size_t k = 0; k < cat.values.size(); ++k)
      m(j, static_cast<Index>(k)) = counts ? static_cast<double>(cat.counts[k]) : cat.values[k];
  }
  return m;
}

// lode_summary_options: field, default (from the core's SummaryOptions).
#define LODE_SUMMARY_OPTIONS_FIELDS(F)     \
  F(max_categories, core.max_categories)   \
  F(listwise, core.listwise ? 1 : 0)

LODE_OPTIONS_FUNCTIONS(lode_summary_options, LODE_SUMMARY_OPTIONS_FIELDS, SummaryOptions, summary_defaults,
                       merged_summary_options)

constexpr HandleNames summary_handle{"lode_summary", "lode_summary", "summary"};

constexpr MatrixKey<lode_summary> summary_matrices[] = {
    {LODE_SUMMARY_PAIR_COUNTS, [](const lode_summary& s) -> Matrix { return s.summary.n.cast<double>(); }},
    {LODE_SUMMARY_MEANS, [](const lode_summary& s) -> Matrix { return s.summary.mean; }},
    {LODE_SUMMARY_SUMS_OF_SQUARES, [](const lode_summary& s) -> Matrix { return s.summary.m2; }},
    {LODE_SUMMARY_COMOMENTS, [](const lode_summary& s) -> Matrix { return s.summary.comoment; }},
    {LODE_SUMMARY_CATEGORIES, [](const lode_summary& s) -> Matrix { return padded(s.summary, false); }},
    {LODE_SUMMARY_CATEGORY_COUNTS, [](const lode_summary& s) -> Matrix { return padded(s.summary, true); }},
};

constexpr ValueKey<lode_summary> summary_values[] = {
    {LODE_SUMMARY_N_ROWS, [](const lode_summary& s) { return static_cast<double>(s.summary.rows_total); }},
    {LODE_SUMMARY_ROWS_COMPLETE, [](const lode_summary& s) { return static_cast<double>(s.summary.rows_complete); }},
    {LODE_SUMMARY_ROWS_ANSWERED, [](const lode_summary& s) { return static_cast<double>(s.summary.rows_any); }},
    {LODE_SUMMARY_MISSING_CELLS, [](const lode_summary& s) { return static_cast<double>(s.summary.missing_cells); }},
    {LODE_SUMMARY_ITEMS, [](const lode_summary& s) { return number(s.summary.items()); }},
    {LODE_SUMMARY_MAX_CATEGORIES, [](const lode_summary& s) { return static_cast<double>(s.summary.options.max_categories); }},
    {LODE_SUMMARY_LISTWISE, [](const lode_summary& s) { return flag(s.summary.options.listwise); }},
    {LODE_SUMMARY_FORMAT_VERSION, [](const lode_summary&) { return static_cast<double>(kSummaryFormatVersion); }},
};

}  // namespace

extern "C" {

LODE_OPTIONS_INIT(lode_summary_options, summary_defaults)

LODE_API int lode_summary_create(int64_t items, const char* const* names, const lode_summary_options* opts,
                                 lode_summary** out) {
  return guarded([&] {
    require_pointer(out, "out");
    *out = nullptr;
    const lode_summary_options o = merged_summary_options(opts);
    if (items < 1 || items > 100000)
      fail(LODE_E_INVALID_ARGUMENT, fmt::format("a summary needs 1 to 100000 items; {} were asked for", items));
    std::vector<std::string> labels(static_cast<std::size_t>(items));
    if (names)
      for (int64_t j = 0; j < items; ++j) labels[static_cast<std::size_t>(j)] = names[j] ? names[j] : "";
    SummaryOptions so;
    so.max_categories = o.max_categories;
    so.listwise = o.listwise != 0;
    *out = new lode_summary{make_summary(std::move(labels), so)};
  });
}

LODE_API int lode_summary_add(lode_summary* summary, const double* values, int64_t rows, int64_t cols,
                              int64_t row_stride, int64_t col_stride) {
  return guarded([&] {
    require_pointer(summary, "summary");
    const Matrix block = read_matrix(values, rows, cols, row_stride, col_stride, "rows");
    summary_add(summary->summary, block);  // checks every value before it changes anything
  });
}

LODE_API int lode_summary_merge(lode_summary* into, const lode_summary* other) {
  return guarded([&] {
    require_pointer(into, "into");
    const Summary& o = summary_of(other);
    summary_merge(into->summary, o);  // refuses before it changes anything
  });
}

LODE_API int lode_summary_to_bytes(const lode_summary* summary, uint8_t* out, size_t capacity, size_t* length) {
  return guarded([&] {
    const auto bytes = summary_to_bytes(summary_of(summary));
    if (length) *length = bytes.size();
    if (out == nullptr && capacity == 0) return;
    require_pointer(out, "out");
    if (capacity < bytes.size())
      fail(LODE_E_BUFFER_TOO_SMALL,
           fmt::format("the summary needs {} bytes; the buffer holds {}", bytes.size(), capacity));
    std::copy(bytes.begin(), bytes.end(), out);
  });
}

LODE_API int lode_summary_from_bytes(const uint8_t* bytes, size_t length, lode_summary** out) {
  return guarded([&] {
    require_pointer(out, "out");
    *out = nullptr;
    *out = new lode_summary{summary_from_bytes(bytes, length)};
  });
}

LODE_API int lode_summary_to_data(const lode_summary* summary, lode_data** out) {
  return guarded([&] {
    const Summary& s = summary_of(summary);
    require_pointer(out, "out");
    *out = nullptr;
    auto content = std::make_shared<DataContent>();
    content->source = DataSource::summary;
    content->values = Matrix(0, s.items());
    content->n_obs = static_cast<Index>(s.rows_total);
    content->item_names = s.item_names;
    content->summary = std::make_shared<const Summary>(s);
    *out = new lode_data{std::move(content)};
  });
}

LODE_API void lode_summary_free(lode_summary* summary) { delete summary; }

LODE_MATRIX_GETTER(lode_summary, lode_summary, summary_handle, summary_matrices)
LODE_VALUE_GETTER(lode_summary, lode_summary, summary_handle, summary_values)

LODE_API int lode_summary_table(const lode_summary* summary, int64_t a, int64_t b, double* out, size_t capacity,
                                int64_t* rows, int64_t* cols) {
  return guarded([&] {
    const Summary& s = summary_of(summary);
    const Index p = s.items();
    if (a < 0 || b < 0 || a >= p || b >= p || a == b)
      fail(LODE_E_INVALID_ARGUMENT,
           fmt::format("items {} and {} do not name a pair of the summary's {} items (0-based, different)", a, b, p));
    for (int64_t j : {a, b})
      if (s.categories[static_cast<std::size_t>(j)].over_limit)
        fail(LODE_E_INVALID_ARGUMENT,
             fmt::format("{} has more than {} distinct values, so the summary keeps no table for it",
                         item_label(s.item_names, j), s.options.max_categories));
    const Matrix t = summary_table(s, a, b);
    write_matrix(t, out, capacity, rows, cols);
  });
}

LODE_API int lode_summary_item_name(const lode_summary* summary, int64_t index, char* out, size_t capacity,
                                    size_t* length) {
  return guarded([&] {
    const Summary& s = summary_of(summary);
    if (index < 0 || index >= s.items())
      fail(LODE_E_INVALID_ARGUMENT, fmt::format("item {} does not exist; the summary has {} items (0-based)", index,
                                                s.items()));
    write_text(s.item_names[static_cast<std::size_t>(index)], out, capacity, length);
  });
}

}  // extern "C"
