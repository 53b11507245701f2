// The cells on the structure behind a fit: a general factor under the group factors (Schmid-Leiman,
// with the omegas) and the comparison of the factors across groups of respondents. They reuse the
// fit family's arguments, cache and deadline (functions_shared.hpp). UNO-free.
#include "functions.hpp"
#include "functions_shared.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <map>
#include <string>
#include <vector>

namespace lode::addin {
namespace {

// ---------------------------------------------------------------------------------------------
// A general factor: the Schmid-Leiman transformation of the fit of LODE.LOADINGS with the same arguments
// ---------------------------------------------------------------------------------------------

struct GeneralOutputs {
  Matrix general, group, omega_subscales, subscale_omega_total;
  double omega_total = 0.0, omega_hierarchical = 0.0, ecv = 0.0;
};

std::shared_ptr<const GeneralOutputs> general_factor(const Call& call) {
  const FitRequest req = read_fit_request(call, 4);
  auto f = converged_fit(call, req);
  KeyBuilder k("general factor");
  k.add(req.key);
  return call.cache.get_or_compute<GeneralOutputs>(
      k.take(),
      [&] {
        check_time(call.deadline, "general factor");
        lode_schmid_leiman* raw = nullptr;
        check(lode_schmid_leiman_compute(f->model.get(), nullptr, nullptr, 0, &raw), "general factor");
        auto sl = shared_handle<lode_schmid_leiman, lode_schmid_leiman_free>(raw);
        const auto mat = [&](int key) { return read_matrix(sl.get(), key, lode_schmid_leiman_matrix, "general factor"); };
        const auto num = [&](int key) { return read_value(sl.get(), key, lode_schmid_leiman_value, "general factor"); };
        auto out = std::make_shared<GeneralOutputs>();
        out->general = mat(LODE_SCHMID_LEIMAN_GENERAL);
        out->group = mat(LODE_SCHMID_LEIMAN_GROUP);
        out->omega_subscales = mat(LODE_SCHMID_LEIMAN_OMEGA_SUBSCALES);
        out->subscale_omega_total = mat(LODE_SCHMID_LEIMAN_SUBSCALE_OMEGA_TOTAL);
        out->omega_total = num(LODE_SCHMID_LEIMAN_OMEGA_TOTAL);
        out->omega_hierarchical = num(LODE_SCHMID_LEIMAN_OMEGA_HIERARCHICAL);
        out->ecv = num(LODE_SCHMID_LEIMAN_ECV);
        return std::shared_ptr<const GeneralOutputs>(std::move(out));
      },
      req.src.input.grid->cols * static_cast<std::size_t>(f->factors + 4) * sizeof(double) + 1024);
}

// ---------------------------------------------------------------------------------------------
// Groups: the same analysis in every group of respondents, turned towards the pooled one
// ---------------------------------------------------------------------------------------------

// The labels of the grouping column, one per respondent of the data, as whole-number codes for the
// C ABI. All numbers, each whole: the numbers are the codes (and the labels). Otherwise every label is
// text (numbers written out) and a group's code is its place in sorted order.
struct GroupLabels {
  std::vector<std::int64_t> codes;      // one per row of the data
  bool numeric = true;
  std::map<std::int64_t, std::string> text;  // code -> label, when not numeric
};

std::string number_label(double v) {
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.10g", v);
  return buf;
}

GroupLabels read_groups(const Arg& a, const Input& data) {
  if (a.kind != Arg::Kind::grid || a.grid.empty())
    throw CellError(Failure::bad_argument, "'groups' must be a column of group labels, one per respondent");
  const Grid& g = a.grid;
  if (g.cols != 1)
    throw CellError(Failure::bad_argument, "'groups' has " + std::to_string(g.cols) +
                                               " columns; give one column of group labels (text or numbers)");
  // Every cell of the range as given, a first row taken for names put back: [number or text].
  struct Label {
    bool number = false;
    double value = 0.0;
    std::string text;
    bool empty = true;
  };
  std::vector<Label> all;
  if (!g.header.empty()) all.push_back({false, 0.0, g.header[0], g.header[0].empty()});
  const std::size_t first = all.size();
  all.resize(first + g.rows);
  for (std::size_t r = 0; r < g.rows; ++r)
    if (std::isfinite(g.values[r])) all[first + r] = {true, g.values[r], {}, false};
  for (const auto& [index, t] : g.texts)
    if (!t.empty()) all[first + index] = {false, 0.0, t, false};
  // With a row of item names above the answers, the range of labels covers it too: its first cell is
  // the column's heading.
  const bool data_header = !data.grid->header.empty();
  const std::size_t data_rows = data.grid->rows + (data_header ? 1 : 0);
  // The labels may also leave that heading out: then one per row of answers.
  const bool with_heading = data_header && all.size() == data_rows;
  if (!with_heading && all.size() != data.grid->rows)
    throw CellError(Failure::bad_argument,
                    "'groups' has " + std::to_string(all.size()) + " rows but 'data' has " + std::to_string(data_rows) +
                        "; give one label per respondent, in the same rows as the answers (empty cells at its end are "
                        "not counted)");
  if (with_heading) all.erase(all.begin());
  GroupLabels out;
  for (std::size_t r = 0; r < all.size(); ++r) {
    if (all[r].empty)
      throw CellError(Failure::bad_argument, "respondent " + std::to_string(r + 1) +
                                                 " has no group label in 'groups'; every respondent needs one (leave "
                                                 "respondents without a group out of both ranges)");
    if (!all[r].number || all[r].value != std::floor(all[r].value) || std::fabs(all[r].value) > 9.0e15)
      out.numeric = false;
  }
  if (out.numeric) {
    for (const Label& l : all) out.codes.push_back(static_cast<std::int64_t>(l.value));
    return out;
  }
  std::vector<std::string> texts;
  for (const Label& l : all) texts.push_back(l.number ? number_label(l.value) : l.text);
  std::vector<std::string> sorted = texts;
  std::sort(sorted.begin(), sorted.end());
  sorted.erase(std::unique(sorted.begin(), sorted.end()), sorted.end());
  for (std::size_t i = 0; i < sorted.size(); ++i) out.text[static_cast<std::int64_t>(i)] = sorted[i];
  for (const std::string& t : texts)
    out.codes.push_back(std::lower_bound(sorted.begin(), sorted.end(), t) - sorted.begin());
  return out;
}

struct GroupOutputs {
  GroupLabels labels;
  std::vector<std::string> item_names;
  Matrix codes, rows, congruence, skipped, differences;
  OutCell label(double code) const {
    const auto c = static_cast<std::int64_t>(code);
    return labels.numeric ? OutCell::of(code) : OutCell::of(labels.text.at(c));
  }
};

// Arguments: data, groups, [factors], [method], [rotation], [min_group], then `threshold` at index 6
// (LODE.GROUPSHIFTS only).
std::shared_ptr<const GroupOutputs> compare(const Call& call) {
  // The fit family's reading of data, factors, method and rotation (a factor count left out is the
  // one parallel analysis suggests for all respondents together).
  const std::vector<Arg> fit_args{call.args[0], call.args[2], call.args[3], call.args[4]};
  const FitRequest req = read_fit_request(Call{fit_args, call.cache, call.deadline}, kNoArg);
  if (req.src.input.is_correlation)
    throw CellError(Failure::bad_argument, "comparing groups needs the respondents' answers (respondents in rows), "
                                           "not a correlation matrix");
  GroupLabels labels = read_groups(call.args[1], req.src.input);
  const std::int64_t min_group = whole(call.args[5], "min_group", 100, 2, kMaxObservations);
  double threshold = 0.2;
  if (call.args.size() > 6 && call.args[6].kind != Arg::Kind::missing) {
    if (call.args[6].kind != Arg::Kind::number || !(call.args[6].number > 0.0 && call.args[6].number < 2.0))
      throw CellError(Failure::bad_argument, "'threshold' must be a number between 0 and 2, e.g. 0.2");
    threshold = call.args[6].number;
  }
  KeyBuilder k("groups");
  k.add(req.key).add(static_cast<std::uint64_t>(min_group)).add(threshold);
  for (std::int64_t c : labels.codes) k.add(static_cast<std::uint64_t>(c));
  for (const auto& [code, text] : labels.text) k.add(text);
  const std::size_t groups = labels.numeric ? labels.codes.size() : labels.text.size();
  return call.cache.get_or_compute<GroupOutputs>(
      k.take(),
      [&] {
        check_time(call.deadline, "group comparison");
        DataHandle data = make_data(req.src.input, 0);
        lode_group_comparison_options o;
        check(lode_group_comparison_options_init(&o, sizeof o), "group comparison options");
        o.factors = req.spec.factors;
        o.method = req.spec.method;
        o.rotation = req.spec.rotation;
        o.min_group = min_group;
        o.difference_threshold = threshold;
        o.progress = deadline_progress;
        o.progress_user = const_cast<Deadline*>(&call.deadline);
        lode_group_comparison* raw = nullptr;
        check(lode_group_comparison_compute(data.get(), labels.codes.data(), static_cast<std::int64_t>(labels.codes.size()),
                                            &o, &raw),
              "group comparison");
        auto gc = shared_handle<lode_group_comparison, lode_group_comparison_free>(raw);
        const auto mat = [&](int key) {
          return read_matrix(gc.get(), key, lode_group_comparison_matrix, "group comparison");
        };
        auto out = std::make_shared<GroupOutputs>();
        out->labels = std::move(labels);
        const Grid& g = *req.src.input.grid;
        for (std::size_t j = 0; j < g.cols; ++j)
          out->item_names.push_back(j < g.header.size() && !g.header[j].empty() ? g.header[j]
                                                                                 : "column " + std::to_string(j + 1));
        out->codes = mat(LODE_GROUP_COMPARISON_CODES);
        out->rows = mat(LODE_GROUP_COMPARISON_ROWS);
        out->congruence = mat(LODE_GROUP_COMPARISON_CONGRUENCE);
        out->skipped = mat(LODE_GROUP_COMPARISON_SKIPPED);
        out->differences = mat(LODE_GROUP_COMPARISON_DIFFERENCES);
        return std::shared_ptr<const GroupOutputs>(std::move(out));
      },
      (std::min<std::size_t>(groups, 1000) * static_cast<std::size_t>(req.spec.factors + 4) + labels.codes.size()) *
              sizeof(double) + 4096);
}

// One cell "none" for a list with no rows (an array formula cannot return an empty array).
Output none_output(const std::string& words) {
  Output out = Output::table(1, 1);
  out.cells[0] = OutCell::of(words);
  return out;
}

}  // namespace

Output fn_general(const Call& call) {
  auto g = general_factor(call);
  const auto items = static_cast<std::size_t>(g->general.rows), k = static_cast<std::size_t>(g->group.cols);
  Matrix m;
  m.rows = g->general.rows;
  m.cols = g->group.cols + 1;
  for (std::size_t i = 0; i < items; ++i) {
    m.values.push_back(g->general.values[i]);
    for (std::size_t f = 0; f < k; ++f) m.values.push_back(g->group.values[i * k + f]);
  }
  return to_output(m);
}

Output fn_generalomega(const Call& call) {
  auto g = general_factor(call);
  std::vector<std::pair<std::string, double>> rows{{"omega total", g->omega_total},
                                                   {"omega hierarchical", g->omega_hierarchical},
                                                   {"general factor's share of common variance (ECV)", g->ecv}};
  for (std::int64_t f = 0; f < g->omega_subscales.rows; ++f) {
    const std::string name = "factor " + std::to_string(f + 1);
    rows.emplace_back(name + ": omega total of its subscale", g->subscale_omega_total.values[static_cast<std::size_t>(f)]);
    rows.emplace_back(name + ": omega subscale", g->omega_subscales.values[static_cast<std::size_t>(f)]);
  }
  Output out = Output::table(rows.size(), 2);
  for (std::size_t r = 0; r < rows.size(); ++r) {
    out.at(r, 0) = OutCell::of(rows[r].first);
    out.at(r, 1) = std::isfinite(rows[r].second) ? OutCell::of(rows[r].second) : OutCell::of(std::string("no items"));
  }
  return out;
}

Output fn_groupmatch(const Call& call) {
  auto g = compare(call);
  const auto groups = static_cast<std::size_t>(g->codes.rows), k = static_cast<std::size_t>(g->congruence.cols);
  Output out = Output::table(groups, 2 + k);
  for (std::size_t r = 0; r < groups; ++r) {
    out.at(r, 0) = g->label(g->codes.values[r]);
    out.at(r, 1) = OutCell::of(g->rows.values[r]);
    for (std::size_t f = 0; f < k; ++f) out.at(r, 2 + f) = OutCell::of(g->congruence.values[r * k + f]);
  }
  return out;
}

Output fn_groupskipped(const Call& call) {
  auto g = compare(call);
  if (g->skipped.rows == 0) return none_output("none: every group was large enough");
  Output out = Output::table(static_cast<std::size_t>(g->skipped.rows), 2);
  for (std::size_t r = 0; r < out.rows; ++r) {
    out.at(r, 0) = g->label(g->skipped.at(static_cast<std::int64_t>(r), 0));
    out.at(r, 1) = OutCell::of(g->skipped.at(static_cast<std::int64_t>(r), 1));
  }
  return out;
}

Output fn_groupshifts(const Call& call) {
  auto g = compare(call);
  if (g->differences.rows == 0) return none_output("none: no loading differs from the pooled one beyond the threshold");
  Output out = Output::table(static_cast<std::size_t>(g->differences.rows), 5);
  for (std::size_t r = 0; r < out.rows; ++r) {
    const auto at = [&](std::int64_t c) { return g->differences.at(static_cast<std::int64_t>(r), c); };
    out.at(r, 0) = g->label(at(0));
    out.at(r, 1) = OutCell::of(g->item_names.at(static_cast<std::size_t>(at(1))));
    out.at(r, 2) = OutCell::of(at(2) + 1.0);  // factors counted from 1, as the columns of LODE.LOADINGS
    out.at(r, 3) = OutCell::of(at(3));
    out.at(r, 4) = OutCell::of(at(4));
  }
  return out;
}

}  // namespace lode::addin
