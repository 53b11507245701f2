// The loadings sheet: items grouped by their factor with communality, uniqueness and (when asked for)
// bootstrap intervals, then each item's starting communality and sampling adequacy.
#include "report_layout.hpp"
#include "report_text.hpp"

#include <cmath>

namespace lode::addin::report {
namespace {

using namespace styles;

void loadings_table(Sheet& ld, const Analysis& a) {
  const ModelResult& model = a.model;
  const BootResult& boot = a.boot;
  const std::size_t p = a.p(), k = a.k();
  const bool intervals = a.bootstrap_asked() && boot.available;
  std::vector<Cell> hdr{Cell::txt("Item", heading)};
  for (std::size_t f = 0; f < k; ++f) hdr.push_back(Cell::txt("Factor " + std::to_string(f + 1), heading));
  hdr.push_back(Cell::txt("Communality", heading));
  hdr.push_back(Cell::txt("Uniqueness", heading));
  const std::string pct = intervals ? fmt_num(100.0 * boot.level, 0) + "%" : "";
  if (intervals)
    for (std::size_t f = 0; f < k; ++f) {
      hdr.push_back(Cell::txt("Factor " + std::to_string(f + 1) + " " + pct + " from", heading));
      hdr.push_back(Cell::txt("Factor " + std::to_string(f + 1) + " " + pct + " to", heading));
    }
  ld.line(std::move(hdr));
  for (std::size_t j : loading_order(model.loadings, p, k)) {
    std::vector<Cell> row{Cell::txt(a.items.names[j], label)};
    for (std::size_t f = 0; f < k; ++f) {
      const double v = model.loadings[j * k + f];
      row.push_back(Cell::num(v, std::fabs(v) >= a.options.salient ? salient : faint));
    }
    row.push_back(Cell::num(model.communalities[j], number));
    row.push_back(Cell::num(model.uniquenesses[j], number));
    if (intervals)
      for (std::size_t f = 0; f < k; ++f) {
        // an interval that reaches across zero: the sign of the loading is not settled by the data
        const bool across = boot.lower[j * k + f] <= 0.0 && boot.upper[j * k + f] >= 0.0;
        row.push_back(Cell::num(boot.lower[j * k + f], across ? faint : number));
        row.push_back(Cell::num(boot.upper[j * k + f], across ? faint : number));
      }
    ld.line(std::move(row));
  }
  std::vector<Cell> ssrow{Cell::txt("Sum of squared loadings", label)};
  for (std::size_t f = 0; f < k; ++f) ssrow.push_back(Cell::num(model.ss[f], number));
  ld.line(std::move(ssrow));
}

}  // namespace

Sheet layout_loadings(const Analysis& a) {
  const ModelResult& model = a.model;
  const BootResult& boot = a.boot;
  const bool intervals = a.bootstrap_asked() && boot.available;
  const std::size_t k = a.k();
  Sheet ld;
  ld.base_name = names::loadings;
  ld.column_widths = {5000, 3000, 3000, 3000, 3000, 3000, 3000, 3000};
  if (intervals) {  // the intervals beside the loadings, communality and uniqueness
    ld.column_widths.assign(1 + k + 2, 3000);
    ld.column_widths[0] = 5000;
    ld.column_widths.resize(1 + k + 2 + 2 * k, 3700);
  }
  ld.line({Cell::txt("Loadings", title)});
  ld.line({Cell::txt("Strong loadings (at least " + fmt_num(a.options.salient, 2) + ") are shaded; small ones are grey.", note)});
  if (!model.available) {
    ld.line({Cell::txt("Factor loadings: " + model.reason + ". Shown until then: each item's starting "
                       "communality estimate.",
                       note)});
  } else {
    ld.line({Cell::txt("Items are grouped by the factor they load on most, largest loading first.", note)});
    if (intervals)
      ld.line({Cell::txt("Beside the loadings: " + fmt_num(100.0 * boot.level, 0) + "% bootstrap intervals from " +
                             fmt_num(boot.used, 0) + " resamples (see " + names::overview + ", \"Bootstrap intervals\").",
                         note)});
    else if (a.bootstrap_asked())
      ld.line({Cell::txt("Bootstrap intervals: not computed: " + boot.reason, note)});
    ld.blank();
    loadings_table(ld, a);
    ld.blank();
  }
  const CorrelationFacts& c = a.corr;
  ld.line({Cell::txt("Item", heading), Cell::txt("Starting communality (SMC)", heading),
           Cell::txt("Sampling adequacy (MSA)", heading)});
  for (std::size_t j = 0; j < a.p(); ++j)
    ld.line({Cell::txt(a.items.names[j], label), c.smc.empty() ? Cell::txt(c.smc_problem, note) : Cell::num(c.smc[j], number),
             c.msa.empty() ? Cell::txt(c.msa_reason, note) : Cell::num(c.msa[j], number)});
  return ld;
}

}  // namespace lode::addin::report
