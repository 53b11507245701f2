// The scree sheet: observed eigenvalues beside parallel analysis's random-data line, with a chart.
#include "report_layout.hpp"
#include "report_text.hpp"

namespace lode::addin::report {

using namespace styles;

std::string random_data_words(const CountResult& count) {
  return count.available ? "Random data (" + fmt_num(count.percentile, 0) + "th percentile of " +
                               std::to_string(count.replicates) + ")"
                         : "Random data (parallel analysis)";
}

Sheet layout_scree(const Analysis& a) {
  const CountResult& count = a.count;
  const std::vector<double>& eig = a.corr.eigenvalues;
  Sheet sc;
  sc.base_name = names::scree;
  sc.line({Cell::txt("Scree: eigenvalues of the item correlations", title)});
  sc.line({Cell::txt(count.available ? "Where an observed line falls below its random-data line, the factors are no "
                                        "stronger than chance (parallel analysis, Horn 1965). The count uses the "
                                        "reduced-matrix lines, squared multiple correlations on the diagonal "
                                        "(O'Connor 2000); the other two are the correlations' own eigenvalues."
                                      : "The random-data line of parallel analysis: " + count.reason,
                    note)});
  sc.blank();
  const std::size_t table_top = sc.rows.size();
  // Both versions: the reduced-matrix eigenvalues the count compares (first), and those of the
  // correlations themselves, each beside its random-data line.
  const bool both = count.available && count.observed_factor.size() >= eig.size() &&
                    count.random_factor.size() >= eig.size() && count.random_pc.size() >= eig.size();
  if (both)
    sc.line({Cell::txt("Factor", heading), Cell::txt("Reduced eigenvalue", heading),
             Cell::txt("Random, reduced", heading), Cell::txt("Eigenvalue", heading), Cell::txt("Random", heading)});
  else
    sc.line({Cell::txt("Factor", heading), Cell::txt("Eigenvalue of the correlations", heading)});
  for (std::size_t k = 0; k < eig.size(); ++k) {
    std::vector<Cell> row{Cell::num(static_cast<double>(k + 1))};
    if (both) {
      row.push_back(Cell::num(count.observed_factor[k], number));
      row.push_back(Cell::num(count.random_factor[k], number));
    }
    row.push_back(Cell::num(eig[k], number));
    if (both) row.push_back(Cell::num(count.random_pc[k], number));
    sc.line(std::move(row));
  }
  Chart ch;
  ch.name = "LodeScree";
  ch.title = "Scree";
  ch.x_title = "Factor";
  ch.y_title = "Eigenvalue";
  ch.top = table_top;
  ch.left = 0;
  ch.rows = eig.size() + 1;
  ch.cols = both ? 5 : 2;
  ch.anchor_row = table_top;
  ch.anchor_col = ch.cols + 1;
  sc.charts.push_back(ch);
  sc.column_widths = {1800, 3800, 3300, 2800, 2800};  // the chart fits beside them on a screen
  return sc;
}

}  // namespace lode::addin::report
