// Summaries at the C boundary: create, add rows, merge, the byte form, and the data handle that
// lode_correlation_compute turns into correlations.
#include "boundary.hpp"
#include "handles.hpp"

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

}  // namespace

extern "C" {

LODE_API int lode_summary_options_init(lode_summary_options* opts, size_t struct_size) {
  return guarded([&] {
    lode_summary_options d{};
    d.struct_size = sizeof d;
    d.max_categories = 11;
    d.listwise = 0;
    init_options(opts, struct_size, d, "lode_summary_options");
  });
}

LODE_API int lode_summary_create(int64_t items, const char* const* names, const lode_summary_options* opts,
                                 lode_summary** out) {
  return guarded([&] {
    require_pointer(out, "out");
    *out = nullptr;
    lode_summary_options o{};
    lode_summary_options_init(&o, sizeof o);
    if (opts) {
      check_options_size(opts, "lode_summary_options");
      LODE_OPTION_FIELD(o, opts, max_categories);
      LODE_OPTION_FIELD(o, opts, listwise);
    }
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

LODE_API int lode_summary_matrix(const lode_summary* summary, int key, double* out, size_t capacity, int64_t* rows,
                                 int64_t* cols) {
  return guarded([&] {
    const Summary& s = summary_of(summary);
    switch (key) {
      case LODE_SUMMARY_PAIR_COUNTS: write_matrix(s.n.cast<double>(), out, capacity, rows, cols); break;
      case LODE_SUMMARY_MEANS: write_matrix(s.mean, out, capacity, rows, cols); break;
      case LODE_SUMMARY_SUMS_OF_SQUARES: write_matrix(s.m2, out, capacity, rows, cols); break;
      case LODE_SUMMARY_COMOMENTS: write_matrix(s.comoment, out, capacity, rows, cols); break;
      case LODE_SUMMARY_CATEGORIES: write_matrix(padded(s, false), out, capacity, rows, cols); break;
      case LODE_SUMMARY_CATEGORY_COUNTS: write_matrix(padded(s, true), out, capacity, rows, cols); break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_summary matrix (lode_summary_matrix)"));
    }
  });
}

LODE_API int lode_summary_value(const lode_summary* summary, int key, double* value) {
  return guarded([&] {
    const Summary& s = summary_of(summary);
    require_pointer(value, "value");
    double v = 0.0;
    switch (key) {
      case LODE_SUMMARY_N_ROWS: v = static_cast<double>(s.rows_total); break;
      case LODE_SUMMARY_ROWS_COMPLETE: v = static_cast<double>(s.rows_complete); break;
      case LODE_SUMMARY_ROWS_ANSWERED: v = static_cast<double>(s.rows_any); break;
      case LODE_SUMMARY_MISSING_CELLS: v = static_cast<double>(s.missing_cells); break;
      case LODE_SUMMARY_ITEMS: v = static_cast<double>(s.items()); break;
      case LODE_SUMMARY_MAX_CATEGORIES: v = s.options.max_categories; break;
      case LODE_SUMMARY_LISTWISE: v = s.options.listwise ? 1.0 : 0.0; break;
      case LODE_SUMMARY_FORMAT_VERSION: v = kSummaryFormatVersion; break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_summary number (lode_summary_value)"));
    }
    *value = v;
  });
}

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
