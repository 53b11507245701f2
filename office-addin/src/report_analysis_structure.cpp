// The report's analysis of the structure behind the fit: a general factor under the group factors
// (Schmid-Leiman) and the comparison across groups of respondents. Every C ABI call of these parts
// happens here; the layouts (layout_general.cpp, layout_groups.cpp) read the plain results.
#include "report_calls.hpp"
#include "report_text.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <map>
#include <stdexcept>

namespace lode::addin::report {
namespace {

using SchmidLeimanHandle = Handle<lode_schmid_leiman, lode_schmid_leiman_free>;
using GroupsHandle = Handle<lode_group_comparison, lode_group_comparison_free>;

std::string label_of(const SourceCell& c) {
  if (c.kind == SourceCell::Kind::text) return trimmed(c.text);
  if (c.kind != SourceCell::Kind::number) return {};
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.10g", c.number);
  return buf;
}

int criterion(const std::string& rotation) {
  if (rotation == "oblimin") return LODE_CRITERION_OBLIMIN;
  if (rotation == "promax") return LODE_CRITERION_PROMAX;
  if (rotation == "varimax") return LODE_CRITERION_VARIMAX;
  return LODE_CRITERION_NONE;
}

}  // namespace

GeneralResult general_factor(const lode_model* model, const ModelResult& m) {
  GeneralResult r;
  if (!m.oblique) {
    r.reason = "the solution is orthogonal (its factors are kept uncorrelated), so no general factor lies under them; "
               "choose an oblique rotation to look for one";
    return r;
  }
  if (m.factors < 3) {
    r.reason = "a general factor under the group factors needs at least 3 factors; this solution has " +
               std::to_string(m.factors);
    return r;
  }
  lode_schmid_leiman* raw = nullptr;
  if (lode_schmid_leiman_compute(model, nullptr, nullptr, 0, &raw) != LODE_OK) {
    r.reason = lode_error_message();
    return r;
  }
  SchmidLeimanHandle sl(raw);
  const char* what = "reading the general factor";
  const auto mat = [&](int key) { return vec(sl.get(), key, lode_schmid_leiman_matrix, what); };
  const auto num = [&](int key) { return read_value(sl.get(), key, lode_schmid_leiman_value, what, report_check); };
  r.general = mat(LODE_SCHMID_LEIMAN_GENERAL);
  r.group = mat(LODE_SCHMID_LEIMAN_GROUP);
  r.second_order = mat(LODE_SCHMID_LEIMAN_SECOND_ORDER_LOADINGS);
  r.omega_subscales = mat(LODE_SCHMID_LEIMAN_OMEGA_SUBSCALES);
  r.subscale_omega_total = mat(LODE_SCHMID_LEIMAN_SUBSCALE_OMEGA_TOTAL);
  r.assignment = mat(LODE_SCHMID_LEIMAN_ASSIGNMENT);
  r.omega_total = num(LODE_SCHMID_LEIMAN_OMEGA_TOTAL);
  r.omega_hierarchical = num(LODE_SCHMID_LEIMAN_OMEGA_HIERARCHICAL);
  r.ecv = num(LODE_SCHMID_LEIMAN_ECV);
  r.notes = lines_of(read_text(sl.get(), LODE_SCHMID_LEIMAN_NOTES, lode_schmid_leiman_text, what, report_check));
  r.available = true;
  return r;
}

GroupsResult compare_groups(const SourceTable& src, const Items& items, const Options& o, const ModelResult& model,
                            const Progress& progress, double from, double to) {
  GroupsResult r;
  r.asked = true;
  r.column = o.group_column;
  r.needed = std::max<std::int64_t>(o.min_group, static_cast<std::int64_t>(items.names.size()) + 1);
  if (!model.available) {
    r.reason = "the analysis of all respondents did not succeed: " + model.reason;
    return r;
  }
  // Each respondent's label; its code is the label's place in sorted order (labels compared as text).
  const auto col = static_cast<std::size_t>(
      std::find_if(items.columns.begin(), items.columns.end(), [&](const Column& c) { return c.name == o.group_column; }) -
      items.columns.begin());
  const std::size_t first = items.header ? 1 : 0;
  std::vector<std::string> labels;
  std::size_t unlabelled = 0;
  for (std::size_t i = 0; i < items.rows; ++i) {
    labels.push_back(label_of(src.at(first + i, col)));
    if (labels.back().empty()) ++unlabelled;
  }
  if (unlabelled > 0) {
    r.reason = std::to_string(unlabelled) + " respondents have no label in the grouping column \"" + o.group_column +
               "\"; every respondent needs one (give those a label of their own, or leave them out of the range)";
    return r;
  }
  std::vector<std::string> sorted = labels;
  std::sort(sorted.begin(), sorted.end());
  sorted.erase(std::unique(sorted.begin(), sorted.end()), sorted.end());
  std::vector<std::int64_t> codes;
  for (const std::string& l : labels) codes.push_back(std::lower_bound(sorted.begin(), sorted.end(), l) - sorted.begin());
  const auto label = [&](double code) { return sorted.at(static_cast<std::size_t>(code)); };

  const DataHandle data = make_data(items.values, items.rows, items.names);
  lode_correlation_options copts = correlation_options(o);
  lode_group_comparison_options go;
  lode_group_comparison_options_init(&go, sizeof go);
  go.factors = model.factors;
  go.method = o.extraction == "ml" ? LODE_EXTRACTION_ML : o.extraction == "paf" ? LODE_EXTRACTION_PAF : LODE_EXTRACTION_MINRES;
  go.rotation = model.factors >= 2 ? criterion(o.rotation) : LODE_CRITERION_NONE;
  go.correlation = &copts;
  go.min_group = o.min_group;
  go.threads = 1;  // the office's other work keeps a core
  r.threshold = go.difference_threshold;
  ProgressBridge bridge{&progress, "comparing the groups", from, to};
  go.progress = &ProgressBridge::call;
  go.progress_user = &bridge;
  lode_group_comparison* raw = nullptr;
  const int st = lode_group_comparison_compute(data.get(), codes.data(), static_cast<std::int64_t>(codes.size()), &go, &raw);
  if (st == LODE_E_CANCELLED) throw Cancelled{};
  if (st != LODE_OK) {
    r.reason = lode_error_message();
    // The C ABI names groups by code; the sheet names them by label, listing the groups and their sizes.
    std::map<std::string, std::size_t> counts;
    for (const std::string& l : labels) ++counts[l];
    for (const auto& [l, n] : counts)
      if (static_cast<std::int64_t>(n) < r.needed) r.skipped.push_back({l, static_cast<double>(n)});
    if (r.skipped.size() + 1 >= counts.size())
      r.reason = "fewer than 2 groups have at least " + std::to_string(r.needed) + " respondents, so there is nothing "
                 "to compare (the smallest group compared is the larger of the option MinGroup and the items + 1)";
    return r;
  }
  GroupsHandle gc(raw);
  const char* what = "reading the group comparison";
  const auto mat = [&](int key) { return read_matrix(gc.get(), key, lode_group_comparison_matrix, what, report_check); };
  const Matrix group_codes = mat(LODE_GROUP_COMPARISON_CODES), skipped = mat(LODE_GROUP_COMPARISON_SKIPPED),
               shifts = mat(LODE_GROUP_COMPARISON_DIFFERENCES);
  for (double c : group_codes.values) r.labels.push_back(label(c));
  r.rows = mat(LODE_GROUP_COMPARISON_ROWS).values;
  r.congruence = mat(LODE_GROUP_COMPARISON_CONGRUENCE).values;
  r.alpha = mat(LODE_GROUP_COMPARISON_ALPHA).values;
  r.omega = mat(LODE_GROUP_COMPARISON_OMEGA).values;
  r.oblique = read_value(gc.get(), LODE_GROUP_COMPARISON_OBLIQUE, lode_group_comparison_value, what, report_check) > 0.5;
  for (std::int64_t i = 0; i < skipped.rows; ++i) r.skipped.push_back({label(skipped.at(i, 0)), skipped.at(i, 1)});
  for (std::int64_t i = 0; i < shifts.rows; ++i)
    r.shifts.push_back({label(shifts.at(i, 0)), static_cast<std::size_t>(shifts.at(i, 1)),
                        static_cast<std::size_t>(shifts.at(i, 2)), shifts.at(i, 3), shifts.at(i, 4)});
  r.available = true;
  return r;
}

}  // namespace lode::addin::report
