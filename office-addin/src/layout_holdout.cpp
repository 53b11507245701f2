// The sheet of the confirmatory check: does the simple structure found on some respondents fit the
// respondents set aside? Fit indices read against the cut-offs of Hu & Bentler (1999), the restricted
// model's loadings with standard errors and factor correlations, the items left out, and the caution.
#include "report_layout.hpp"
#include "report_text.hpp"

#include <cmath>

namespace lode::addin::report {
namespace {

using namespace styles;

struct CutOff {
  const char* index;
  double value;
  double cut;
  bool at_most;  // the index should be at most `cut` (RMSEA, SRMR), else at least
};

}  // namespace

// How many of CFI, TLI, RMSEA and SRMR meet the cut-offs of Hu & Bentler (1999), in words.
std::string holdout_words(std::size_t met, std::size_t defined) {
  if (defined == 0) return "the fit indices are not defined for this model (no degrees of freedom)";
  if (met == defined) return "the simple structure fits the new respondents: every index meets its cut-off";
  if (met == 0) return "the simple structure does not fit the new respondents: no index meets its cut-off";
  return "the simple structure fits the new respondents in part: " + std::to_string(met) + " of " +
         std::to_string(defined) + " indices meet their cut-offs";
}

Sheet layout_holdout(const Analysis& a) {
  const HoldoutResult& h = a.holdout;
  Sheet s;
  s.base_name = names::holdout;
  s.column_widths = {5000, 3400, 3400, 3400, 3400, 12000};
  s.line({Cell::txt("Does the simple structure fit new respondents?", title)});
  if (!h.available) {
    s.line({Cell::txt("Confirmatory check on held-out respondents: not computed: " + h.reason, note)});
    s.line({Cell::txt(kConfirmCaution, caution)});
    return s;
  }
  const std::size_t k = a.k();
  s.line({Cell::txt(fmt_whole(h.n_holdout) + " respondents (a share of " + fmt_num(h.share, 2) +
                        ", drawn with the random seed " + std::to_string(a.options.seed) +
                        ") were set aside before anything else. The factors were explored on the other " +
                        fmt_whole(h.n_explore) + " with " + std::to_string(k) +
                        " factors; each item was then tied to the factor of its largest loading there (at least " +
                        fmt_num(h.salient, 2) + "), every other loading fixed at zero, the factor correlations left "
                        "free, and this model fitted by maximum likelihood to the respondents set aside.",
                    note)});
  s.blank();

  heading_row(s, "Fit on the respondents set aside", 4);
  s.line({Cell::txt("Index", label), Cell::txt("Value", label), Cell::txt("Cut-off", label), Cell::txt("Met", label)});
  const CutOff cuts[] = {{"CFI", h.cfi, 0.95, false}, {"TLI", h.tli, 0.95, false}, {"RMSEA", h.rmsea, 0.06, true},
                         {"SRMR", h.srmr, 0.08, true}};
  std::size_t met = 0, defined = 0;
  for (const CutOff& c : cuts) {
    if (!std::isfinite(c.value)) {
      s.line({Cell::txt(c.index, label), Cell::txt("not defined", note)});
      continue;
    }
    const bool ok = c.at_most ? c.value <= c.cut : c.value >= c.cut;
    ++defined;
    met += ok ? 1 : 0;
    s.line({Cell::txt(c.index, label), Cell::num(c.value, ok ? number : flag),
            Cell::txt(std::string(c.at_most ? "at most " : "at least ") + fmt_num(c.cut, 2)),
            Cell::txt(ok ? "yes" : "no", ok ? note : flag)});
  }
  s.line({Cell::txt("Reading", label), Cell::txt(holdout_words(met, defined), note)});
  s.line({Cell::txt("Cut-offs as in Hu & Bentler (1999), who proposed them for judging one model's fit by several "
                    "indices together; they are guides, not a test.",
                    note)});
  s.line({Cell::txt("RMSEA 90% interval", label), Cell::num(h.rmsea_lo, number), Cell::num(h.rmsea_hi, number)});
  s.line({Cell::txt("Chi-square", label), Cell::num(h.chi2, number),
          Cell::txt("(N - 1) times the minimised discrepancy (Joreskog 1969)", note)});
  s.line({Cell::txt("Degrees of freedom", label), Cell::num(h.df)});
  s.line({Cell::txt("p-value", label), Cell::num(h.p)});
  s.line({Cell::txt("BIC", label), Cell::num(h.bic, number)});
  s.line({Cell::txt("Converged", label),
          Cell::txt(h.converged ? "yes, in " + fmt_whole(h.iterations) + " iterations"
                                : "no: stopped after " + fmt_whole(h.iterations) + " iterations; read nothing here",
                    h.converged ? "" : flag)});
  s.line({Cell::txt("Heywood cases", label), Cell::num(h.heywood, h.heywood > 0 ? flag : ""),
          Cell::txt(h.heywood > 0 ? "uniquenesses held at their lower bound: an improper solution" : "", note)});
  s.blank();

  heading_row(s, "The model fitted to the respondents set aside", 5);
  s.line({Cell::txt("Item", label), Cell::txt("Factor", label), Cell::txt("Loading", label),
          Cell::txt("Standard error", label), Cell::txt("Uniqueness", label)});
  for (std::size_t i = 0; i < h.fitted.size(); ++i) {
    std::size_t f = 0;
    while (f + 1 < k && h.loadings[i * k + f] == 0.0) ++f;  // the one free loading of the item's row
    s.line({Cell::txt(a.items.names[h.fitted[i]], label), Cell::num(static_cast<double>(f + 1)),
            Cell::num(h.loadings[i * k + f], std::fabs(h.loadings[i * k + f]) >= a.options.salient ? salient : faint),
            Cell::num(h.se[i * k + f], number), Cell::num(h.uniquenesses[i], number)});
  }
  if (k > 1) {
    s.blank();
    std::vector<Cell> hdr{Cell::txt("Factor correlations", label)};
    for (std::size_t g = 0; g < k; ++g) hdr.push_back(Cell::txt("Factor " + std::to_string(g + 1), label));
    s.line(std::move(hdr));
    for (std::size_t f = 0; f < k; ++f) {
      std::vector<Cell> row{Cell::txt("Factor " + std::to_string(f + 1), label)};
      for (std::size_t g = 0; g < k; ++g) row.push_back(Cell::num(h.phi[f * k + g], number));
      s.line(std::move(row));
    }
  }
  s.blank();

  heading_row(s, "Items left out (salient nowhere)", 2);
  if (h.left_out.empty()) s.line({Cell::txt("none: every item had a loading of at least " + fmt_num(h.salient, 2), note)});
  for (std::size_t j : h.left_out)
    s.line({Cell::txt(a.items.names[j], label),
            Cell::txt("no loading reached " + fmt_num(h.salient, 2) + " on the explored respondents; not fitted", note)});
  for (const std::string& n : h.notes) s.line({Cell::txt("Note", label), Cell::txt(n, note)});
  s.blank();
  s.line({Cell::txt(kConfirmCaution, caution)});
  return s;
}

}  // namespace lode::addin::report
