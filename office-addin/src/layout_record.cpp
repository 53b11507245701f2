// The run record sheet: everything needed to repeat the analysis exactly.
#include "option_table.hpp"
#include "report_layout.hpp"

#include <cstdio>

namespace lode::addin::report {

using namespace styles;

Sheet layout_record(const Analysis& a) {
  const Options& o = a.options;
  Sheet rr;
  rr.base_name = names::record;
  rr.column_widths = {6000, 9000};
  char hash[32];
  std::snprintf(hash, sizeof hash, "%016llx", static_cast<unsigned long long>(a.values_hash));
  std::string items_text;
  for (const std::string& n : a.items.names) items_text += (items_text.empty() ? "" : ", ") + n;
  rr.line({Cell::txt("Run record", title)});
  rr.line({Cell::txt("Everything needed to repeat this analysis exactly.", note)});
  auto rec = [&rr](const char* k, Cell val) { rr.line({Cell::txt(k, label), std::move(val)}); };
  rec("Lode version", Cell::txt(a.library_version));
  rec("Written", Cell::txt(a.timestamp));
  rec("Source range", Cell::txt(a.address));
  rec("First row holds item names", Cell::txt(a.items.header ? "yes" : "no"));
  rec("Items", Cell::txt(items_text));
  rec("Values hash (FNV-1a 64)", Cell::txt(hash));
  // options in the dialog's words (never the option codes); each label names one word of its option
  for (const WordOption& w : word_options()) rec(w.record, Cell::txt(w.words[word_index(w, o.*(w.field))].label));
  if (o.missing == "em") {
    rec("EM iterations", Cell::num(a.corr.em_iterations));
    rec("EM met its criterion", Cell::txt(a.corr.em_converged == 1.0 ? "yes" : "no: the estimate may be off"));
    char change[64];
    std::snprintf(change, sizeof change, "%.3g (criterion %.3g)", a.corr.em_final_change, a.corr.em_tolerance);
    rec("EM last change", Cell::txt(change));
  }
  rec("Number of factors", o.factors > 0 ? Cell::num(o.factors) : Cell::txt("suggest"));
  rec("Rotation parameter", Cell::num(o.rotation_parameter));
  if (o.scores != "none") {
    rec("Factor scores written to", Cell::txt(a.scores.available ? a.scores.where : "not written: " + a.scores.reason));
    rec("Rule for skipped items (scores)", Cell::txt(a.scores.available ? a.scores.rule : ""));
  }
  rec("Scale membership (reliability)", Cell::txt("largest absolute loading; negative loaders reverse-scored"));
  rec("Bootstrap resamples", Cell::num(o.bootstrap));
  if (a.bootstrap_asked()) {
    rec("Bootstrap seed", Cell::txt(std::to_string(o.seed) + " (resample i draws from stream i of it)"));
    if (a.boot.available) {
      rec("Bootstrap resamples used", Cell::num(a.boot.used));
      rec("Bootstrap resamples failed", Cell::num(a.boot.failed));
      rec("Bootstrap interval level", Cell::num(a.boot.level));
    } else {
      rec("Bootstrap intervals", Cell::txt("not computed: " + a.boot.reason));
    }
  }
  rec("Random splits into halves", Cell::num(o.halves));
  if (a.halves_asked() && a.halves.available) {
    rec("Splits used", Cell::num(a.halves.used));
    rec("Splits failed", Cell::num(a.halves.failed));
  }
  rec("Share held out (confirmatory check)", Cell::num(o.holdout));
  if (a.holdout_asked() && a.holdout.available) {
    rec("Respondents held out", Cell::num(a.holdout.n_holdout));
    rec("Held-out draw", Cell::txt("stream 0 of the random seed " + std::to_string(o.seed)));
  }
  rec("General factor (Schmid-Leiman)", Cell::txt(a.general.available ? "computed (oblique, at least 3 factors)"
                                                                       : "not computed: " + a.general.reason));
  rec(kGroupColumnOption.record, Cell::txt(o.group_column.empty() ? "none" : o.group_column));
  if (!o.group_column.empty()) {
    rec(kMinGroupOption.record, Cell::num(o.min_group));
    rec("Smallest group compared (with items + 1)", Cell::num(static_cast<double>(a.groups.needed)));
    if (!a.groups.available) rec("Group comparison", Cell::txt("not made: " + a.groups.reason));
  }
  rec("Strong loading from", Cell::num(o.salient));
  rec("Random seed", Cell::txt(std::to_string(o.seed)));
  return rr;
}

}  // namespace lode::addin::report
