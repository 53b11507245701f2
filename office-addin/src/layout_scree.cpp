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
  sc.line({Cell::txt(count.available ? "Where the observed line falls below the random-data line, the factors are no "
                                        "stronger than chance (parallel analysis, Horn 1965)."
                                      : "The random-data line of parallel analysis: " + count.reason,
                    note)});
  sc.blank();
  const std::size_t table_top = sc.rows.size();
  if (count.available)
    sc.line({Cell::txt("Factor", heading), Cell::txt("Observed eigenvalue", heading),
             Cell::txt(random_data_words(count), heading)});
  else
    sc.line({Cell::txt("Factor", heading), Cell::txt("Observed eigenvalue", heading)});
  for (std::size_t k = 0; k < eig.size(); ++k) {
    std::vector<Cell> row{Cell::num(static_cast<double>(k + 1)), Cell::num(eig[k], number)};
    if (count.available && k < count.random_pc.size()) row.push_back(Cell::num(count.random_pc[k], number));
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
  ch.cols = count.available ? 3 : 2;
  ch.anchor_row = table_top;
  ch.anchor_col = 3;
  sc.charts.push_back(ch);
  sc.column_widths = {2500, 4000, 6500};
  return sc;
}

}  // namespace lode::addin::report
