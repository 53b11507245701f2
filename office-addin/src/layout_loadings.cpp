// The loadings sheet: what each factor explains in a band above the factors, then the items grouped
// by their factor, each with where it belongs, communality, uniqueness, loadings and (when asked for)
// bootstrap intervals; then each item's starting communality and sampling adequacy.
#include "report_layout.hpp"
#include "report_text.hpp"

#include <cmath>

namespace lode::addin::report {
namespace {

using namespace styles;

// Where an item belongs, in words: the factor(s) its loading reaches the strong-loading cut on.
std::string belongs_to(const std::vector<double>& L, std::size_t j, std::size_t k, double cut) {
  std::string list;
  std::size_t n = 0;
  for (std::size_t f = 0; f < k; ++f)
    if (std::fabs(L[j * k + f]) >= cut) {
      list += (list.empty() ? "" : " and ") + std::to_string(f + 1);
      ++n;
    }
  if (n == 0) return "none clearly";
  return (n == 1 ? "factor " : "factors ") + list;
}

// The table: a band above the factors with the share of the items' variance each explains, then one
// row per item: where it belongs, how much of it the factors explain and leave, its loadings and
// (when asked for) their bootstrap intervals.
void loadings_table(Sheet& ld, const Analysis& a) {
  const ModelResult& model = a.model;
  const BootResult& boot = a.boot;
  const std::size_t p = a.p(), k = a.k();
  const bool intervals = a.bootstrap_asked() && boot.available;
  std::vector<Cell> band{Cell::txt("Share of all the items' variance", label), Cell::txt(""), Cell::txt(""), Cell::txt("")};
  for (std::size_t f = 0; f < k; ++f) band.push_back(Cell::num(model.ss[f] / static_cast<double>(p), number));
  ld.line(std::move(band));
  std::vector<Cell> hdr{Cell::txt("Item", heading), Cell::txt("Belongs to", heading),
                        Cell::txt("Explained by the factors (communality)", heading),
                        Cell::txt("Left to the item (uniqueness)", heading)};
  for (std::size_t f = 0; f < k; ++f) hdr.push_back(Cell::txt("Factor " + std::to_string(f + 1), heading));
  const std::string pct = intervals ? fmt_num(100.0 * boot.level, 0) + "%" : "";
  if (intervals)
    for (std::size_t f = 0; f < k; ++f) {
      hdr.push_back(Cell::txt("Factor " + std::to_string(f + 1) + " " + pct + " from", heading));
      hdr.push_back(Cell::txt("Factor " + std::to_string(f + 1) + " " + pct + " to", heading));
    }
  ld.line(std::move(hdr));
  for (std::size_t j : loading_order(model.loadings, p, k)) {
    std::vector<Cell> row{Cell::txt(a.items.names[j], label), Cell::txt(belongs_to(model.loadings, j, k, a.options.salient)),
                          Cell::num(model.communalities[j], number), Cell::num(model.uniquenesses[j], number)};
    for (std::size_t f = 0; f < k; ++f) {
      const double v = model.loadings[j * k + f];
      row.push_back(Cell::num(v, std::fabs(v) >= a.options.salient ? salient : faint));
    }
    if (intervals)
      for (std::size_t f = 0; f < k; ++f) {
        // an interval that reaches across zero: the sign of the loading is not settled by the data
        const bool across = boot.lower[j * k + f] <= 0.0 && boot.upper[j * k + f] >= 0.0;
        row.push_back(Cell::num(boot.lower[j * k + f], across ? faint : number));
        row.push_back(Cell::num(boot.upper[j * k + f], across ? faint : number));
      }
    ld.line(std::move(row));
  }
}

}  // namespace

Sheet layout_loadings(const Analysis& a) {
  const ModelResult& model = a.model;
  const BootResult& boot = a.boot;
  const bool intervals = a.bootstrap_asked() && boot.available;
  const std::size_t k = a.k();
  Sheet ld;
  ld.base_name = names::loadings;
  ld.column_widths.assign(4 + k, 3000);
  ld.column_widths[0] = 5000;
  ld.column_widths[1] = 3400;
  ld.column_widths[2] = ld.column_widths[3] = 4600;  // room for the two headings in words
  if (intervals) ld.column_widths.resize(4 + k + 2 * k, 3700);  // the intervals right of the loadings
  ld.line({Cell::txt("Loadings", title)});
  ld.line({Cell::txt("Strong loadings (at least " + fmt_num(a.options.salient, 2) +
                     ", a cut of common practice; some use 0.30) are shaded; small ones are grey.",
                     note)});
  if (!model.available) {
    ld.line({Cell::txt("Factor loadings: " + model.reason + ". Shown until then: each item's starting "
                       "communality estimate.",
                       note)});
  } else {
    ld.line({Cell::txt("Items are grouped by the factor they load on most, largest loading first. The band above the "
                       "factors gives the share of all the items' variance each factor explains (its squared loadings "
                       "over the number of items)" +
                           std::string(model.oblique ? "; the factors correlate, so the shares overlap and do not add up."
                                                     : "."),
                       note)});
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
  ld.line({Cell::txt("Before the fit: each item's squared multiple correlation with the others (under 0.20 it shares "
                     "little with them; common practice) and its sampling adequacy (under 0.50 unacceptable; Kaiser "
                     "1974).",
                     note)});
  ld.line({Cell::txt("Item", heading), Cell::txt("Starting communality (SMC)", heading),
           Cell::txt("Sampling adequacy (MSA)", heading)});
  for (std::size_t j = 0; j < a.p(); ++j)
    ld.line({Cell::txt(a.items.names[j], label), c.smc.empty() ? Cell::txt(c.smc_problem, note) : Cell::num(c.smc[j], number),
             c.msa.empty() ? Cell::txt(c.msa_reason, note) : Cell::num(c.msa[j], number)});
  return ld;
}

}  // namespace lode::addin::report
