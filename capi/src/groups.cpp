// The comparison of groups of respondents through the C ABI: its options (one field list), the
// lode_group_comparison handle and its key tables read by the generic getters.
#include "boundary.hpp"
#include "handles.hpp"
#include "keys.hpp"
#include "model.hpp"
#include "options.hpp"
#include "results.hpp"

#include "lode/groups.hpp"

using namespace lode;
using namespace lode::capi;

struct lode_group_comparison {
  GroupComparison result;
  Index factors = 0;
};

namespace {

// lode_group_comparison_options: field, default. ML with oblimin for the pooled solution; the
// smallest group and the difference worth a look are the core's.
#define LODE_GROUP_COMPARISON_OPTIONS_FIELDS(F)      \
  F(factors, 0)                                      \
  F(method, LODE_EXTRACTION_ML)                      \
  F(rotation, LODE_CRITERION_OBLIMIN)                \
  F(correlation, nullptr)                            \
  F(min_group, core.min_group)                       \
  F(difference_threshold, core.difference_threshold) \
  F(threads, 0)                                      \
  F(progress, nullptr)                               \
  F(progress_user, nullptr)

LODE_OPTIONS_FUNCTIONS(lode_group_comparison_options, LODE_GROUP_COMPARISON_OPTIONS_FIELDS, GroupComparisonOptions,
                       group_comparison_defaults, merged_group_comparison_options)

// The caller's options, checked, for the data behind `content`.
GroupComparisonOptions read_group_comparison_options(const lode_group_comparison_options* opts,
                                                     const DataContent& content) {
  const lode_group_comparison_options o = merged_group_comparison_options(opts);
  GroupComparisonOptions go;
  go.factors = o.factors;
  go.extraction.method = extraction_method_of(o.method);
  go.rotation.method = rotation_method_of(o.rotation);
  if (go.rotation.method == RotationMethod::target_orthogonal || go.rotation.method == RotationMethod::target_oblique)
    fail(LODE_E_INVALID_ARGUMENT, "a target rotation needs a target; choose another rotation for the pooled solution");
  go.correlation = read_correlation_options(o.correlation);
  go.correlation.item_names = content.item_names;
  go.correlation.threads = o.threads;
  go.min_group = static_cast<Index>(o.min_group);
  go.difference_threshold = o.difference_threshold;
  require_threads(o.threads);
  go.threads = o.threads;
  go.progress = progress_of(o.progress, o.progress_user);
  return go;
}

// One row per group, `factors` columns: a per-factor field of every group's solution.
Matrix per_group(const GroupComparison& c, Index factors, Vector GroupSolution::*field) {
  Matrix m(static_cast<Index>(c.groups.size()), factors);
  for (std::size_t g = 0; g < c.groups.size(); ++g) m.row(static_cast<Index>(g)) = (c.groups[g].*field).transpose();
  return m;
}

// One row per group: a count of every group's solution.
template <class T>
Matrix per_group_count(const GroupComparison& c, T GroupSolution::*field) {
  Matrix m(static_cast<Index>(c.groups.size()), 1);
  for (std::size_t g = 0; g < c.groups.size(); ++g) m(static_cast<Index>(g), 0) = static_cast<double>(c.groups[g].*field);
  return m;
}

Matrix skipped_of(const GroupComparison& c) {
  Matrix m(static_cast<Index>(c.skipped.size()), 2);
  for (std::size_t i = 0; i < c.skipped.size(); ++i)
    m.row(static_cast<Index>(i)) << static_cast<double>(c.skipped[i].code), static_cast<double>(c.skipped[i].rows);
  return m;
}

Matrix differences_of(const GroupComparison& c) {
  Matrix m(static_cast<Index>(c.differences.size()), 5);
  for (std::size_t i = 0; i < c.differences.size(); ++i) {
    const ItemDifference& d = c.differences[i];
    m.row(static_cast<Index>(i)) << static_cast<double>(d.code), static_cast<double>(d.item),
        static_cast<double>(d.factor), d.group_loading, d.pooled_loading;
  }
  return m;
}

// Every group's pattern, stacked: (groups * items) x factors.
Matrix patterns_of(const lode_group_comparison& g) {
  const GroupComparison& c = g.result;
  const Index n = static_cast<Index>(c.groups.size()), p = c.pooled_pattern.rows();
  Matrix m(n * p, g.factors);
  for (Index i = 0; i < n; ++i) m.middleRows(i * p, p) = c.groups[static_cast<std::size_t>(i)].pattern;
  return m;
}

template <class Items, class Text>
std::string lines_of(const Items& items, Text text) {
  std::vector<std::string> lines;
  for (const auto& x : items) lines.push_back(text(x));
  return join_lines(lines);
}

constexpr HandleNames group_comparison_handle{"lode_group_comparison", "lode_group_comparison", "comparison"};

using GC = lode_group_comparison;
constexpr MatrixKey<GC> group_comparison_matrices[] = {
    {LODE_GROUP_COMPARISON_CODES, [](const GC& g) { return per_group_count(g.result, &GroupSolution::code); }},
    {LODE_GROUP_COMPARISON_ROWS, [](const GC& g) { return per_group_count(g.result, &GroupSolution::rows); }},
    {LODE_GROUP_COMPARISON_CONGRUENCE, [](const GC& g) { return per_group(g.result, g.factors, &GroupSolution::congruence); }},
    {LODE_GROUP_COMPARISON_ALPHA, [](const GC& g) { return per_group(g.result, g.factors, &GroupSolution::alpha); }},
    {LODE_GROUP_COMPARISON_OMEGA, [](const GC& g) { return per_group(g.result, g.factors, &GroupSolution::omega); }},
    {LODE_GROUP_COMPARISON_POOLED_PATTERN, [](const GC& g) -> Matrix { return g.result.pooled_pattern; }},
    {LODE_GROUP_COMPARISON_POOLED_FACTOR_CORRELATIONS,
     [](const GC& g) -> Matrix { return g.result.pooled_factor_correlations; }},
    {LODE_GROUP_COMPARISON_ASSIGNMENT, [](const GC& g) -> Matrix { return vector_of(g.result.assignment); }},
    {LODE_GROUP_COMPARISON_SKIPPED, [](const GC& g) { return skipped_of(g.result); }},
    {LODE_GROUP_COMPARISON_DIFFERENCES, [](const GC& g) { return differences_of(g.result); }},
    {LODE_GROUP_COMPARISON_PATTERNS, [](const GC& g) { return patterns_of(g); }},
};

constexpr ValueKey<GC> group_comparison_values[] = {
    {LODE_GROUP_COMPARISON_GROUPS, [](const GC& g) { return number(static_cast<Index>(g.result.groups.size())); }},
    {LODE_GROUP_COMPARISON_FACTORS, [](const GC& g) { return number(g.factors); }},
    {LODE_GROUP_COMPARISON_OBLIQUE, [](const GC& g) { return flag(g.result.oblique); }},
    {LODE_GROUP_COMPARISON_POOLED_N_OBS, [](const GC& g) { return number(g.result.pooled_n_obs); }},
};

constexpr TextKey<GC> group_comparison_texts[] = {
    {LODE_GROUP_COMPARISON_NOTES, [](const GC& g) { return join_lines(g.result.notes); }},
    {LODE_GROUP_COMPARISON_SKIPPED_REASONS,
     [](const GC& g) { return lines_of(g.result.skipped, [](const auto& s) { return s.reason; }); }},
    {LODE_GROUP_COMPARISON_DIFFERENCE_TEXTS,
     [](const GC& g) { return lines_of(g.result.differences, [](const auto& d) { return d.text; }); }},
};

}  // namespace

extern "C" {

LODE_OPTIONS_INIT(lode_group_comparison_options, group_comparison_defaults)

LODE_API int lode_group_comparison_compute(const lode_data* data, const int64_t* groups, int64_t rows,
                                           const lode_group_comparison_options* opts, lode_group_comparison** out) {
  return compute_handle(data, "data", out, [&] {
    require_pointer(groups, "groups");
    const auto& content = data->content;
    require_rows(*content, "comparing groups analyses each group's respondents");
    if (rows != content->values.rows())
      fail(LODE_E_INVALID_ARGUMENT, fmt::format("{} group codes were given for {} rows; give one per row", rows,
                                                content->values.rows()));
    const GroupComparisonOptions go = read_group_comparison_options(opts, *content);
    const std::vector<std::int64_t> codes(groups, groups + rows);
    auto c = std::make_unique<lode_group_comparison>();
    c->result = compare_groups(content->values, codes, go);
    c->factors = go.factors;
    return c;
  });
}

LODE_API void lode_group_comparison_free(lode_group_comparison* comparison) { delete comparison; }

LODE_KEY_GETTERS(lode_group_comparison, lode_group_comparison, group_comparison_handle, group_comparison_matrices,
                 group_comparison_values, group_comparison_texts)

}  // extern "C"
