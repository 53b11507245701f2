// The comparison of groups of respondents through the C ABI.
#include "boundary.hpp"
#include "handles.hpp"
#include "model.hpp"
#include "results.hpp"

#include "lode/groups.hpp"

using namespace lode;
using namespace lode::capi;

struct lode_group_comparison {
  GroupComparison result;
  Index factors = 0;
};

namespace {

Matrix per_group(const GroupComparison& c, Index factors, Vector GroupSolution::*field) {
  Matrix m(static_cast<Index>(c.groups.size()), factors);
  for (std::size_t g = 0; g < c.groups.size(); ++g) m.row(static_cast<Index>(g)) = (c.groups[g].*field).transpose();
  return m;
}

}  // namespace

extern "C" {

LODE_API int lode_group_comparison_options_init(lode_group_comparison_options* opts, size_t struct_size) {
  return guarded([&] {
    lode_group_comparison_options d{};
    d.struct_size = sizeof d;
    d.factors = 0;
    d.method = LODE_EXTRACTION_ML;
    d.rotation = LODE_CRITERION_OBLIMIN;
    d.correlation = nullptr;
    d.min_group = 100;
    d.difference_threshold = 0.2;
    d.threads = 0;
    d.progress = nullptr;
    d.progress_user = nullptr;
    init_options(opts, struct_size, d, "lode_group_comparison_options");
  });
}

LODE_API int lode_group_comparison_compute(const lode_data* data, const int64_t* groups, int64_t rows,
                                           const lode_group_comparison_options* opts, lode_group_comparison** out) {
  return guarded([&] {
    require_pointer(data, "data");
    require_pointer(groups, "groups");
    require_pointer(out, "out");
    *out = nullptr;
    lode_group_comparison_options o{};
    lode_group_comparison_options_init(&o, sizeof o);
    if (opts) {
      check_options_size(opts, "lode_group_comparison_options");
      LODE_OPTION_FIELD(o, opts, factors);
      LODE_OPTION_FIELD(o, opts, method);
      LODE_OPTION_FIELD(o, opts, rotation);
      LODE_OPTION_FIELD(o, opts, correlation);
      LODE_OPTION_FIELD(o, opts, min_group);
      LODE_OPTION_FIELD(o, opts, difference_threshold);
      LODE_OPTION_FIELD(o, opts, threads);
      LODE_OPTION_FIELD(o, opts, progress);
      LODE_OPTION_FIELD(o, opts, progress_user);
    }
    const auto& content = data->content;
    require_rows(*content, "comparing groups analyses each group's respondents");
    if (rows != content->values.rows())
      fail(LODE_E_INVALID_ARGUMENT, fmt::format("{} group codes were given for {} rows; give one per row", rows,
                                                content->values.rows()));
    GroupComparisonOptions go;
    go.factors = o.factors;
    go.extraction.method = extraction_method_of(o.method);
    go.rotation.method = rotation_method_of(o.rotation);
    if (go.rotation.method == RotationMethod::target_orthogonal || go.rotation.method == RotationMethod::target_oblique)
      fail(LODE_E_INVALID_ARGUMENT, "a target rotation needs a target; choose another rotation for the pooled solution");
    go.correlation = read_correlation_options(o.correlation);
    go.correlation.item_names = content->item_names;
    go.correlation.threads = o.threads;
    go.min_group = static_cast<Index>(o.min_group);
    go.difference_threshold = o.difference_threshold;
    if (o.threads < 0) fail(LODE_E_INVALID_ARGUMENT, fmt::format("threads must be 0 (all cores) or more; it is {}", o.threads));
    go.threads = o.threads;
    go.progress = progress_of(o.progress, o.progress_user);
    const std::vector<std::int64_t> codes(groups, groups + rows);
    auto c = std::make_unique<lode_group_comparison>();
    c->result = compare_groups(content->values, codes, go);
    c->factors = go.factors;
    *out = c.release();
  });
}

LODE_API void lode_group_comparison_free(lode_group_comparison* comparison) { delete comparison; }

LODE_API int lode_group_comparison_matrix(const lode_group_comparison* comparison, int key, double* out,
                                          size_t capacity, int64_t* rows, int64_t* cols) {
  return guarded([&] {
    require_pointer(comparison, "comparison");
    const GroupComparison& c = comparison->result;
    const Index k = comparison->factors, g = static_cast<Index>(c.groups.size()), p = c.pooled_pattern.rows();
    Matrix m;
    switch (key) {
      case LODE_GROUP_COMPARISON_CODES:
      case LODE_GROUP_COMPARISON_ROWS:
        m.resize(g, 1);
        for (Index i = 0; i < g; ++i) {
          const GroupSolution& s = c.groups[static_cast<std::size_t>(i)];
          m(i, 0) = key == LODE_GROUP_COMPARISON_CODES ? static_cast<double>(s.code) : static_cast<double>(s.rows);
        }
        break;
      case LODE_GROUP_COMPARISON_CONGRUENCE: m = per_group(c, k, &GroupSolution::congruence); break;
      case LODE_GROUP_COMPARISON_ALPHA: m = per_group(c, k, &GroupSolution::alpha); break;
      case LODE_GROUP_COMPARISON_OMEGA: m = per_group(c, k, &GroupSolution::omega); break;
      case LODE_GROUP_COMPARISON_POOLED_PATTERN: m = c.pooled_pattern; break;
      case LODE_GROUP_COMPARISON_POOLED_FACTOR_CORRELATIONS: m = c.pooled_factor_correlations; break;
      case LODE_GROUP_COMPARISON_ASSIGNMENT:
        m.resize(p, 1);
        for (Index i = 0; i < p; ++i) m(i, 0) = static_cast<double>(c.assignment[static_cast<std::size_t>(i)]);
        break;
      case LODE_GROUP_COMPARISON_SKIPPED:
        m.resize(static_cast<Index>(c.skipped.size()), 2);
        for (std::size_t i = 0; i < c.skipped.size(); ++i)
          m.row(static_cast<Index>(i)) << static_cast<double>(c.skipped[i].code), static_cast<double>(c.skipped[i].rows);
        break;
      case LODE_GROUP_COMPARISON_DIFFERENCES:
        m.resize(static_cast<Index>(c.differences.size()), 5);
        for (std::size_t i = 0; i < c.differences.size(); ++i) {
          const ItemDifference& d = c.differences[i];
          m.row(static_cast<Index>(i)) << static_cast<double>(d.code), static_cast<double>(d.item),
              static_cast<double>(d.factor), d.group_loading, d.pooled_loading;
        }
        break;
      case LODE_GROUP_COMPARISON_PATTERNS:
        m.resize(g * p, k);
        for (Index i = 0; i < g; ++i) m.middleRows(i * p, p) = c.groups[static_cast<std::size_t>(i)].pattern;
        break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_group_comparison matrix (lode_group_comparison_matrix)"));
    }
    write_matrix(m, out, capacity, rows, cols);
  });
}

LODE_API int lode_group_comparison_value(const lode_group_comparison* comparison, int key, double* value) {
  return guarded([&] {
    require_pointer(comparison, "comparison");
    require_pointer(value, "value");
    const GroupComparison& c = comparison->result;
    switch (key) {
      case LODE_GROUP_COMPARISON_GROUPS: *value = static_cast<double>(c.groups.size()); break;
      case LODE_GROUP_COMPARISON_FACTORS: *value = static_cast<double>(comparison->factors); break;
      case LODE_GROUP_COMPARISON_OBLIQUE: *value = c.oblique ? 1.0 : 0.0; break;
      case LODE_GROUP_COMPARISON_POOLED_N_OBS: *value = static_cast<double>(c.pooled_n_obs); break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_group_comparison number (lode_group_comparison_value)"));
    }
  });
}

LODE_API int lode_group_comparison_text(const lode_group_comparison* comparison, int key, char* out, size_t capacity,
                                        size_t* length) {
  return guarded([&] {
    require_pointer(comparison, "comparison");
    const GroupComparison& c = comparison->result;
    std::vector<std::string> lines;
    switch (key) {
      case LODE_GROUP_COMPARISON_NOTES: lines = c.notes; break;
      case LODE_GROUP_COMPARISON_SKIPPED_REASONS:
        for (const auto& s : c.skipped) lines.push_back(s.reason);
        break;
      case LODE_GROUP_COMPARISON_DIFFERENCE_TEXTS:
        for (const auto& d : c.differences) lines.push_back(d.text);
        break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_group_comparison text (lode_group_comparison_text)"));
    }
    write_text(join_lines(lines), out, capacity, length);
  });
}

}  // extern "C"
