// The groups sheet: does the structure hold in every group of respondents? Congruence of each group's
// factors with the pooled ones read in words, the counts, the skipped groups, the loadings that
// differ, and the caution that this is a descriptive check.
#include "report_layout.hpp"
#include "report_text.hpp"

#include <cmath>

namespace lode::addin::report {

using namespace styles;

// Tucker's congruence in words (Lorenzo-Seva & ten Berge 2006).
std::string congruence_words(double c) {
  if (!std::isfinite(c)) return "not defined";
  const double v = std::fabs(c);
  if (v >= 0.95) return "the same factor";
  if (v >= 0.85) return "fair similarity";
  return "differs";
}

namespace {

const char* kCaution =
    "Congruence is a descriptive check, not a formal test of measurement invariance. Before scores are compared "
    "across these groups or used to select, rate or diagnose people, the instrument needs formal evidence that it "
    "measures the same way in each group (e.g. a multi-group confirmatory analysis); local law and professional "
    "testing standards govern such use.";

// One group's reading over its factors: the weakest factor decides.
std::string group_reading(const std::vector<double>& c, std::size_t g, std::size_t k) {
  double weakest = 1.0;
  std::size_t at = 0;
  for (std::size_t f = 0; f < k; ++f)
    if (std::fabs(c[g * k + f]) < weakest) {
      weakest = std::fabs(c[g * k + f]);
      at = f;
    }
  const std::string w = congruence_words(weakest);
  if (w == "the same factor") return "every factor is the same factor as in all respondents together";
  return "factor " + std::to_string(at + 1) + (w == "differs" ? " differs" : " shows only fair similarity") +
         " from the pooled factor (congruence " + fmt_num(weakest, 2) + ")";
}

}  // namespace

Sheet layout_groups(const Analysis& a) {
  const GroupsResult& g = a.groups;
  const std::size_t k = a.k();
  Sheet s;
  s.base_name = names::groups;
  s.column_widths = {4500, 3000, 3000, 3000};
  s.line({Cell::txt("Does the structure hold in every group?", title)});
  s.line({Cell::txt("Groups by the column \"" + g.column + "\". Each group large enough (at least " +
                        std::to_string(g.needed) + " respondents) was analysed as all respondents were, and its factors "
                        "turned towards the pooled ones (" + (g.oblique ? "oblique" : "orthogonal") +
                        " Procrustes); Tucker's congruence compares each group factor with the pooled one.",
                    note)});
  s.line({Cell::txt(kCaution, caution)});
  s.blank();
  if (!g.available) {
    s.line({Cell::txt("The groups were not compared: " + g.reason, flag)});
    if (!g.skipped.empty()) {
      s.blank();
      heading_row(s, "Groups too small", 2);
      for (const GroupsResult::Skipped& sk : g.skipped)
        s.line({Cell::txt(sk.label, label), Cell::num(sk.rows)});
    }
    return s;
  }
  heading_row(s, "Congruence with the pooled factors", 3 + k);
  std::vector<Cell> hdr{Cell::txt("Group", heading), Cell::txt("Respondents", heading)};
  for (std::size_t f = 0; f < k; ++f) hdr.push_back(Cell::txt("Factor " + std::to_string(f + 1), heading));
  hdr.push_back(Cell::txt("Reading", heading));
  s.line(std::move(hdr));
  for (std::size_t i = 0; i < g.labels.size(); ++i) {
    std::vector<Cell> row{Cell::txt(g.labels[i], label), Cell::num(g.rows[i])};
    for (std::size_t f = 0; f < k; ++f) {
      const double c = g.congruence[i * k + f];
      row.push_back(Cell::num(c, congruence_words(c) == "differs" ? flag : number));
    }
    row.push_back(Cell::txt(group_reading(g.congruence, i, k)));
    s.line(std::move(row));
  }
  s.line({Cell::txt("Reading (Lorenzo-Seva & ten Berge 2006): 0.95 and above, the same factor; 0.85 to 0.94, fair "
                    "similarity; below 0.85, the factor differs in that group.",
                    note)});
  s.blank();

  heading_row(s, "Reliability of each scale per group", 1 + 2 * k);
  std::vector<Cell> rh{Cell::txt("Group", heading)};
  for (std::size_t f = 0; f < k; ++f) {
    rh.push_back(Cell::txt("Factor " + std::to_string(f + 1) + " alpha", heading));
    rh.push_back(Cell::txt("Factor " + std::to_string(f + 1) + " omega", heading));
  }
  s.line(std::move(rh));
  for (std::size_t i = 0; i < g.labels.size(); ++i) {
    std::vector<Cell> row{Cell::txt(g.labels[i], label)};
    for (std::size_t f = 0; f < k; ++f) {
      for (double v : {g.alpha[i * k + f], g.omega[i * k + f]})
        row.push_back(std::isfinite(v) ? Cell::num(v, number) : Cell::txt("not defined", note));
    }
    s.line(std::move(row));
  }
  s.blank();

  heading_row(s, "Groups left out", 2);
  if (g.skipped.empty()) s.line({Cell::txt("None: every group had at least " + std::to_string(g.needed) + " respondents.")});
  for (const GroupsResult::Skipped& sk : g.skipped)
    s.line({Cell::txt(sk.label, label), Cell::num(sk.rows),
            Cell::txt("too few respondents (at least " + std::to_string(g.needed) + " are needed)", note)});
  s.blank();

  heading_row(s, "Loadings that differ from all respondents together by more than " + fmt_num(g.threshold, 2), 1);
  if (g.shifts.empty()) s.line({Cell::txt("None.")});
  for (const GroupsResult::Shift& d : g.shifts)
    s.line({Cell::txt("In group " + d.group + ", item " + a.items.names.at(d.item) + " loads " +
                          fmt_num(d.group_loading, 2) + " on factor " + std::to_string(d.factor + 1) + ", against " +
                          fmt_num(d.pooled_loading, 2) + " in all respondents together.",
                      flag)});
  return s;
}

}  // namespace lode::addin::report
