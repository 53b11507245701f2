// The general-factor sheet: a general factor under the group factors of an oblique solution (Schmid &
// Leiman 1957), its loadings beside the group loadings, and the omegas with a plain reading.
#include "report_layout.hpp"
#include "report_text.hpp"

#include <cmath>

namespace lode::addin::report {
namespace {

using namespace styles;

// Common practice, not a sharp rule: omega hierarchical of about 0.7 or more (with ECV of about 0.7 or
// more) is read as a total score that mostly measures one thing; about 0.5 or less as subscales that
// carry information of their own.
std::string total_score_reading(double omega_h) {
  if (!std::isfinite(omega_h)) return "cannot be read: omega hierarchical is not defined";
  if (omega_h >= 0.70)
    return "A total score over all items mostly measures one thing, the general factor (omega hierarchical of 0.70 or "
           "more; common practice).";
  if (omega_h > 0.50)
    return "A total score measures the general factor in part; the subscales add information of their own (omega "
           "hierarchical between 0.50 and 0.70; common practice).";
  return "A total score is not a good measure of one thing: the subscales carry their own information and are better "
         "reported apart (omega hierarchical of 0.50 or less; common practice).";
}

}  // namespace

Sheet layout_general(const Analysis& a) {
  const GeneralResult& g = a.general;
  const std::size_t p = a.p(), k = a.k();
  Sheet s;
  s.base_name = names::general;
  s.column_widths = {5200, 3000, 3000};
  s.line({Cell::txt("A general factor under the factors", title)});
  s.line({Cell::txt("The correlations between the " + std::to_string(k) + " factors were themselves fitted by one factor "
                    "(a second-order factor); the Schmid & Leiman (1957) transformation then splits each loading into "
                    "a part on that general factor and a part on its own group factor.",
                    note)});
  s.blank();
  heading_row(s, "How much a total score measures one thing", 3);
  s.line({Cell::txt("Omega hierarchical", label), Cell::num(g.omega_hierarchical, number),
          Cell::txt("the general factor's share of the variance of a total score over all items")});
  s.line({Cell::txt("Omega total", label), Cell::num(g.omega_total, number),
          Cell::txt("all factors' share of that variance (McDonald 1999)")});
  s.line({Cell::txt("Explained common variance", label), Cell::num(g.ecv, number),
          Cell::txt("the general factor's share of what all factors explain")});
  s.line({Cell::txt(total_score_reading(g.omega_hierarchical), note)});
  s.line({Cell::txt("An ECV of about 0.70 or more is commonly read as items that are essentially one-dimensional "
                    "(common practice; neither threshold is a sharp rule).",
                    note)});
  s.blank();

  heading_row(s, "Subscales (each item in the scale of its largest loading)", 4);
  s.line({Cell::txt("Factor", heading), Cell::txt("Loading on the general factor", heading),
          Cell::txt("Omega total of the subscale", heading), Cell::txt("Omega subscale", heading)});
  for (std::size_t f = 0; f < k; ++f) {
    const double os = f < g.omega_subscales.size() ? g.omega_subscales[f] : kNaN;
    std::vector<Cell> row{Cell::txt("Factor " + std::to_string(f + 1), label), Cell::num(g.second_order[f], number)};
    if (std::isfinite(os)) {
      row.push_back(Cell::num(g.subscale_omega_total[f], number));
      row.push_back(Cell::num(os, number));
    } else {
      row.push_back(Cell::txt("no item", note));
    }
    s.line(std::move(row));
  }
  s.line({Cell::txt("Omega subscale is the group factor's own share of its subscale's total, once the general factor "
                    "is set aside (Zinbarg et al. 2005): low values say that subscale score mostly repeats the general "
                    "factor.",
                    note)});
  s.blank();

  heading_row(s, "Loadings", 2 + k);
  std::vector<Cell> hdr{Cell::txt("Item", heading), Cell::txt("General factor", heading)};
  for (std::size_t f = 0; f < k; ++f) hdr.push_back(Cell::txt("Group factor " + std::to_string(f + 1), heading));
  s.line(std::move(hdr));
  for (std::size_t i = 0; i < p; ++i) {
    std::vector<Cell> row{Cell::txt(a.items.names[i], label),
                          Cell::num(g.general[i], std::fabs(g.general[i]) >= a.options.salient ? salient : number)};
    for (std::size_t f = 0; f < k; ++f) {
      const double v = g.group[i * k + f];
      row.push_back(Cell::num(v, std::fabs(v) >= a.options.salient ? salient : faint));
    }
    s.line(std::move(row));
  }
  for (const std::string& n : g.notes) s.line({Cell::txt(n, note)});
  return s;
}

}  // namespace lode::addin::report
