#include "lode/groups.hpp"

#include "lode/congruence.hpp"
#include "lode/parallel.hpp"
#include "lode/reliability.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <map>

namespace lode {

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

void check_options(const Matrix& data, const std::vector<std::int64_t>& groups, const GroupComparisonOptions& o) {
  if (static_cast<Index>(groups.size()) != data.rows())
    throw Error(ErrorCode::invalid_argument,
                fmt::format("{} group codes were given for {} rows; give one per row", groups.size(), data.rows()));
  if (o.factors < 1)
    throw Error(ErrorCode::invalid_argument, fmt::format("the number of factors must be at least 1; it is {}", o.factors));
  if (o.min_group < 2)
    throw Error(ErrorCode::invalid_argument, fmt::format("the smallest group size must be at least 2; it is {}", o.min_group));
  if (!(o.difference_threshold > 0.0) || !std::isfinite(o.difference_threshold))
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the loading difference threshold must be positive; it is {}", o.difference_threshold));
}

// The pooled solution: correlations of every row, extraction, rotation (none with one factor).
void pooled_solution(const Matrix& data, const GroupComparisonOptions& o, GroupComparison& out) {
  const CorrelationResult r = correlation(data, o.correlation);
  ExtractionOptions eo = o.extraction;
  eo.n_obs = r.n_obs;
  eo.item_names = o.correlation.item_names;
  const ExtractionResult ex = extract_factors(r.matrix, o.factors, eo);
  out.pooled_n_obs = r.n_obs;
  if (o.factors >= 2 && o.rotation.method != RotationMethod::none) {
    RotationOptions ro = o.rotation;
    ro.item_names = o.correlation.item_names;
    const RotationResult rot = rotate(ex.loadings, ro);
    out.pooled_pattern = rot.pattern;
    out.pooled_factor_correlations = rot.factor_correlations;
    out.oblique = rot.oblique;
  } else {
    out.pooled_pattern = ex.loadings;
    out.pooled_factor_correlations = Matrix::Identity(o.factors, o.factors);
  }
  const Index p = data.cols();
  out.assignment.resize(static_cast<std::size_t>(p));
  out.reversed.resize(static_cast<std::size_t>(p));
  for (Index i = 0; i < p; ++i) {
    Index f = 0;
    out.pooled_pattern.row(i).cwiseAbs().maxCoeff(&f);
    out.assignment[static_cast<std::size_t>(i)] = f;
    out.reversed[static_cast<std::size_t>(i)] = out.pooled_pattern(i, f) < 0.0;
  }
}

// One group's analysis, rotated towards the pooled pattern.
void analyse_group(const Matrix& x, const GroupComparisonOptions& o, const GroupComparison& pooled, GroupSolution& g) {
  const Index p = x.cols(), k = o.factors;
  CorrelationOptions co = o.correlation;
  co.threads = 1;
  co.polychoric.progress = {};
  co.em.progress = {};
  const CorrelationResult r = correlation(x, co);
  g.n_obs = r.n_obs;
  ExtractionOptions eo = o.extraction;
  eo.n_obs = r.n_obs;
  eo.item_names = o.correlation.item_names;
  const ExtractionResult ex = extract_factors(r.matrix, k, eo);
  g.convergence = ex.convergence;
  g.notes = ex.notes;
  g.uniquenesses = ex.uniquenesses;
  const ProcrustesFit fit = pooled.oblique ? procrustes_oblique(ex.loadings, pooled.pooled_pattern)
                                           : procrustes_orthogonal(ex.loadings, pooled.pooled_pattern);
  g.pattern = fit.pattern;
  g.factor_correlations = fit.factor_correlations;
  g.congruence = tucker_congruence(g.pattern, pooled.pooled_pattern).diagonal();

  // Scales: the pooled assignment; items loading negatively on their factor reversed (negated: alpha and
  // omega do not depend on the answers' offset).
  Matrix signed_x = x;
  Matrix signed_pattern = g.pattern;
  for (Index i = 0; i < p; ++i)
    if (pooled.reversed[static_cast<std::size_t>(i)]) {
      signed_x.col(i) = -signed_x.col(i);
      signed_pattern.row(i) = -signed_pattern.row(i);
    }
  g.alpha = Vector::Constant(k, kNaN);
  for (Index f = 0; f < k; ++f) {
    std::vector<Index> items;
    for (Index i = 0; i < p; ++i)
      if (pooled.assignment[static_cast<std::size_t>(i)] == f) items.push_back(i);
    if (items.size() < 2) continue;
    try {
      g.alpha(f) = cronbach_alpha(signed_x(Eigen::all, items)).alpha;
    } catch (const Error& e) {
      g.notes.push_back(fmt::format("no alpha for factor {}'s scale: {}", f + 1, e.what()));
    }
  }
  OmegaOptions oo;
  oo.assignment = pooled.assignment;
  oo.item_names = o.correlation.item_names;
  oo.factor_correlations = g.factor_correlations;
  const OmegaResult om = omega_from_loadings(signed_pattern, g.uniquenesses, oo);
  g.omega = Vector::Constant(k, kNaN);
  for (const ScaleOmega& s : om.scales) g.omega(s.factor) = s.omega;
}

void flag_differences(const GroupComparisonOptions& o, GroupComparison& out) {
  const Index p = out.pooled_pattern.rows(), k = out.pooled_pattern.cols();
  for (const GroupSolution& g : out.groups)
    for (Index i = 0; i < p; ++i)
      for (Index f = 0; f < k; ++f) {
        const double gl = g.pattern(i, f), pl = out.pooled_pattern(i, f);
        if (!(std::abs(gl - pl) > o.difference_threshold)) continue;
        ItemDifference d;
        d.code = g.code;
        d.item = i;
        d.factor = f;
        d.group_loading = gl;
        d.pooled_loading = pl;
        d.text = fmt::format("in group {}, {} loads {:.2f} on factor {}, against {:.2f} in all respondents together",
                             g.code, item_label(o.correlation.item_names, i), gl, f + 1, pl);
        out.differences.push_back(std::move(d));
      }
}

}  // namespace

// Per-group factor analysis compared with the pooled solution: Procrustes rotation towards the pooled
// pattern (orthogonal, Schonemann 1966; oblique, Hurley & Cattell 1962) and Tucker's (1951) congruence
// per factor, read with the bands of Lorenzo-Seva & ten Berge (2006).
GroupComparison compare_groups(const Matrix& data, const std::vector<std::int64_t>& groups,
                               const GroupComparisonOptions& options) {
  check_options(data, groups, options);
  const Index p = data.cols();
  GroupComparison out;
  pooled_solution(data, options, out);

  std::map<std::int64_t, std::vector<Index>> rows_of;
  for (Index i = 0; i < data.rows(); ++i) rows_of[groups[static_cast<std::size_t>(i)]].push_back(i);
  const Index needed = std::max<Index>(options.min_group, p + 1);
  std::vector<std::pair<std::int64_t, const std::vector<Index>*>> todo;
  for (const auto& [code, rows] : rows_of) {
    if (static_cast<Index>(rows.size()) < needed)
      out.skipped.push_back({code, static_cast<Index>(rows.size()),
                             fmt::format("group {} has {} respondents; at least {} are needed", code, rows.size(), needed)});
    else
      todo.emplace_back(code, &rows);
  }
  if (todo.size() < 2)
    throw Error(ErrorCode::insufficient_data,
                fmt::format("only {} of {} groups have at least {} respondents; at least 2 such groups are needed for a "
                            "comparison",
                            todo.size(), rows_of.size(), needed));

  std::vector<GroupSolution> done(todo.size());
  std::vector<std::string> failed(todo.size());
  parallel_for(
      static_cast<Index>(todo.size()), options.threads,
      [&](Index t) {
        const auto& [code, rows] = todo[static_cast<std::size_t>(t)];
        GroupSolution& g = done[static_cast<std::size_t>(t)];
        g.code = code;
        g.rows = static_cast<Index>(rows->size());
        try {
          analyse_group(data(*rows, Eigen::all), options, out, g);
        } catch (const Error& e) {
          if (e.code() == ErrorCode::cancelled || e.code() == ErrorCode::internal) throw;
          failed[static_cast<std::size_t>(t)] = e.what();
        }
      },
      options.progress);
  for (std::size_t t = 0; t < todo.size(); ++t) {
    if (failed[t].empty()) {
      out.groups.push_back(std::move(done[t]));
    } else {
      out.skipped.push_back({todo[t].first, static_cast<Index>(todo[t].second->size()),
                             fmt::format("group {} could not be analysed: {}", todo[t].first, failed[t])});
    }
  }
  std::sort(out.skipped.begin(), out.skipped.end(), [](const auto& a, const auto& b) { return a.code < b.code; });
  if (out.groups.size() < 2)
    throw Error(ErrorCode::insufficient_data,
                fmt::format("only {} group could be analysed; at least 2 are needed for a comparison ({})",
                            out.groups.size(), out.skipped.empty() ? "" : out.skipped.back().reason));
  flag_differences(options, out);

  out.notes.push_back(fmt::format(
      "each group's factors were turned towards the solution of all {} respondents together by {} Procrustes rotation",
      data.rows(), out.oblique ? "an oblique" : "an orthogonal"));
  for (const GroupSolution& g : out.groups)
    for (Index f = 0; f < g.congruence.size(); ++f)
      out.notes.push_back(fmt::format("group {}, factor {}: congruence {:.3f}, it {} (bands of Lorenzo-Seva & ten Berge 2006)",
                                      g.code, f + 1, g.congruence(f), congruence_reading(g.congruence(f))));
  out.notes.push_back(
      "congruence is a descriptive check, not a formal test of measurement invariance; decisions about people in "
      "different groups need that formal evidence, and local law and professional testing standards govern them");
  return out;
}

}  // namespace lode
