// The factors sheet: factor correlations (with bootstrap intervals), structure, residual
// correlations, the reliability of each factor's scale and its items, and the item correlations used.
#include "report_layout.hpp"
#include "report_text.hpp"

#include <algorithm>
#include <cmath>

namespace lode::addin::report {
namespace {

using namespace styles;

std::string factor_word(std::size_t f) { return "Factor " + std::to_string(f + 1); }

// A square table with the item names as row and column headings, items in `order`.
void item_matrix(Sheet& fc, const std::vector<std::string>& names, const std::vector<double>& m,
                 const std::vector<std::size_t>& order, bool flag_large) {
  const std::size_t p = names.size();
  std::vector<Cell> hdr{Cell::txt("", heading)};
  for (std::size_t j : order) hdr.push_back(Cell::txt(names[j], heading));
  fc.line(std::move(hdr));
  for (std::size_t i : order) {
    std::vector<Cell> row{Cell::txt(names[i], label)};
    for (std::size_t j : order) {
      const double v = m[i * p + j];
      row.push_back(Cell::num(v, flag_large && i != j && std::fabs(v) > 0.10 ? flag : number));
    }
    fc.line(std::move(row));
  }
}

void correlations_and_structure(Sheet& fc, const Analysis& a) {
  const ModelResult& model = a.model;
  const std::size_t k = a.k();
  fc.blank();
  fc.line({Cell::txt("Factor correlations", heading)});
  std::vector<Cell> hdr{Cell::txt("", heading)};
  for (std::size_t f = 0; f < k; ++f) hdr.push_back(Cell::txt(factor_word(f), heading));
  fc.line(hdr);
  for (std::size_t r = 0; r < k; ++r) {
    std::vector<Cell> row{Cell::txt(factor_word(r), label)};
    for (std::size_t c = 0; c < k; ++c) row.push_back(Cell::num(model.phi[r * k + c], number));
    fc.line(std::move(row));
  }
  if (a.bootstrap_asked() && a.boot.available) {
    fc.blank();
    const std::string pct = fmt_num(100.0 * a.boot.level, 0) + "%";
    heading_row(fc, "Factor correlations with " + pct + " bootstrap intervals", 4);
    fc.line({Cell::txt("Factors", label), Cell::txt("Correlation", label), Cell::txt(pct + " from", label),
             Cell::txt(pct + " to", label)});
    for (std::size_t r = 0; r < k; ++r)
      for (std::size_t c = r + 1; c < k; ++c)
        fc.line({Cell::txt(factor_word(r) + " and factor " + std::to_string(c + 1), label),
                 Cell::num(model.phi[r * k + c], number), Cell::num(a.boot.phi_lower[r * k + c], number),
                 Cell::num(a.boot.phi_upper[r * k + c], number)});
  }
  fc.blank();
  fc.line({Cell::txt("Structure: correlations of items with factors", heading)});
  hdr[0] = Cell::txt("Item", heading);
  fc.line(hdr);
  for (std::size_t j : loading_order(model.loadings, a.p(), k)) {  // the loadings sheet's order
    std::vector<Cell> row{Cell::txt(a.items.names[j], label)};
    for (std::size_t f = 0; f < k; ++f) row.push_back(Cell::num(model.structure[j * k + f], number));
    fc.line(std::move(row));
  }
}

// One row per scale: the reading first, then omega (the model's figures), then alpha and the items'
// average correlation (the answers' figures), then how many items and respondents.
void scale_table(Sheet& fc, const ReliabilityResult& rel) {
  fc.line({Cell::txt("Scale", heading), Cell::txt("Reading (omega total)", heading), Cell::txt("Omega total", heading),
           Cell::txt("Omega, factor's own share", heading), Cell::txt("Alpha", heading),
           Cell::txt("Average correlation between its items", heading), Cell::txt("Alpha from the correlations", heading),
           Cell::txt("Items", heading), Cell::txt("Respondents with every item answered", heading)});
  for (const ScaleReliability& sr : rel.scales) {
    std::vector<Cell> row{Cell::txt(factor_word(sr.factor), label), Cell::txt(reliability_words(sr.omega), note)};
    const char* missing = sr.items.empty() ? "no items" : "not available";
    row.push_back(std::isnan(sr.omega) ? Cell::txt(missing, note) : Cell::num(sr.omega, number));
    row.push_back(std::isnan(sr.omega_share) ? Cell::txt(missing, note) : Cell::num(sr.omega_share, number));
    if (sr.have_alpha) {
      row.push_back(Cell::num(sr.alpha, number));
      row.push_back(Cell::num(sr.mean_r, number));
      row.push_back(Cell::num(sr.alpha_std, number));
    } else {
      row.push_back(Cell::txt(sr.alpha_reason, note));
      row.push_back(Cell::txt(""));
      row.push_back(Cell::txt(""));
    }
    row.push_back(Cell::num(static_cast<double>(sr.items.size())));
    row.push_back(sr.have_alpha ? Cell::num(sr.rows_used) : Cell::txt(""));
    fc.line(std::move(row));
  }
}

// A scale's items in two groups under a band: how each goes with the rest of its scale (its loading,
// its correlation with the sum of the others, the alphas without it), then its answers (average,
// spread).
void scale_items(Sheet& fc, const Analysis& a, const ScaleReliability& sr) {
  const std::size_t k = a.k();
  fc.blank();
  heading_row(fc, "Items of factor " + std::to_string(sr.factor + 1) + "'s scale", 8);
  fc.line({Cell::txt("", label), Cell::txt("How it goes with the rest of the scale", label), Cell::txt(""), Cell::txt(""),
           Cell::txt(""), Cell::txt(""), Cell::txt("Its answers", label), Cell::txt("")});
  fc.line({Cell::txt("Item", label), Cell::txt("Reverse-scored", label), Cell::txt("Loading", label),
           Cell::txt("Correlation with the sum of the others", label), Cell::txt("Alpha without it", label),
           Cell::txt("Alpha from the correlations, without it", label), Cell::txt("Average", label),
           Cell::txt("Spread (SD)", label)});
  for (std::size_t c = 0; c < sr.items.size(); ++c) {
    const std::size_t j = sr.items[c];
    std::vector<Cell> row{Cell::txt(a.items.names[j], label), Cell::txt(sr.reversed[c] ? "yes" : "no"),
                          Cell::num(a.model.loadings[j * k + sr.factor], number)};
    if (sr.have_alpha) {
      // under 0.30: the item hardly goes with the rest of its scale (common practice)
      row.push_back(Cell::num(sr.item_total[c], sr.item_total[c] < 0.30 ? flag : number));
      // above the scale's alpha: the scale would be more consistent without the item
      const double del = sr.alpha_if_deleted[c], std_del = sr.alpha_std_if_deleted[c];
      row.push_back(std::isnan(del) ? Cell::txt("") : Cell::num(del, del > sr.alpha ? flag : number));
      row.push_back(std::isnan(std_del) ? Cell::txt("") : Cell::num(std_del, number));
      row.push_back(Cell::num(sr.means[c], number));
      row.push_back(Cell::num(sr.sds[c], number));
    }
    fc.line(std::move(row));
  }
  for (const std::string& n : sr.notes) fc.line({Cell::txt("Note on the scale", flag), Cell::txt(n, note)});
}

void reliability_section(Sheet& fc, const Analysis& a) {
  const ReliabilityResult& rel = a.reliability;
  heading_row(fc, "Reliability of each factor's scale", 9);
  if (!rel.available) {
    fc.line({Cell::txt("Reliability (alpha, omega): not computed: " + rel.reason, note)});
    return;
  }
  fc.line({Cell::txt("Each item counts in the scale of the factor it loads on most (its largest absolute loading), "
                     "as on the loadings sheet.",
                     note)});
  if (!rel.reversed_names.empty()) {
    std::string list;
    for (const std::string& n : rel.reversed_names) list += (list.empty() ? "" : ", ") + n;
    fc.line({Cell::txt("Reverse-scored for these figures, because they load negatively on their factor: " + list +
                           " (lowest plus highest answer given, minus the answer), as a scale score would add them.",
                       note)});
  }
  fc.line({Cell::txt("Alpha (Cronbach 1951) uses the respondents who answered every item of the scale; omega "
                     "(McDonald 1999) comes from the model's loadings, factor correlations and uniquenesses, as a "
                     "share of the variance of the scale's sum that the model implies.",
                     note)});
  fc.line({Cell::txt("Omega total: the share due to all the common factors (the items' loadings on other factors "
                     "and the factor correlations count). Factor's share: the part due to the scale's own factor "
                     "alone, (sum of the items' loadings on it) squared over the same variance. With one factor "
                     "the two agree.",
                     note)});
  scale_table(fc, rel);
  for (const ScaleReliability& sr : rel.scales)
    if (!sr.items.empty()) scale_items(fc, a, sr);
  if (std::any_of(rel.scales.begin(), rel.scales.end(), [](const ScaleReliability& x) { return x.have_alpha; }))
    fc.line({Cell::txt("Flagged: an item whose correlation with the sum of the others is under 0.30, or without which "
                       "alpha would rise (common practice).",
                       note)});
  for (const std::string& n : rel.omega_notes) fc.line({Cell::txt("Note on omega", flag), Cell::txt(n, note)});
}

}  // namespace

Sheet layout_factors(const Analysis& a) {
  const ModelResult& model = a.model;
  Sheet fc;
  fc.base_name = names::factors;
  fc.column_widths = {5200, 3300, 3300, 3300, 3300, 3300, 3300, 3300, 3300};
  fc.line({Cell::txt("Factors, residuals and reliability", title)});
  if (!model.available) {
    fc.line({Cell::txt("Factor correlations and structure: " + model.reason, note)});
    fc.line({Cell::txt("Residual correlations: " + model.reason, note)});
  } else {
    if (model.oblique) correlations_and_structure(fc, a);
    else fc.line({Cell::txt("The factors are kept uncorrelated (orthogonal rotation): no factor correlations.", note)});
    fc.blank();
    fc.line({Cell::txt("Residual correlations (observed minus model); above 0.10 in size is flagged (common practice)", heading)});
    fc.line({Cell::txt("Items in the order of the loadings sheet.", note)});
    item_matrix(fc, a.items.names, model.residuals, loading_order(model.loadings, a.p(), a.k()), true);
  }
  fc.blank();
  reliability_section(fc, a);
  fc.blank();
  fc.line({Cell::txt("Item correlations used", heading)});
  std::vector<std::size_t> source_order(a.p());
  for (std::size_t j = 0; j < a.p(); ++j) source_order[j] = j;
  item_matrix(fc, a.items.names, a.corr.matrix, source_order, false);
  return fc;
}

}  // namespace lode::addin::report
