// The replication sheet: does the structure replicate in random halves of the respondents? Per factor
// the congruence between the halves read against 0.85 and 0.95 (Lorenzo-Seva & ten Berge 2006), the
// share of splits whose halves suggest the same number of factors, per item how often it stays on one
// factor, the items salient nowhere, and the caution.
#include "report_layout.hpp"
#include "report_text.hpp"

#include <cmath>

namespace lode::addin::report {
namespace {

using namespace styles;

// Lode's marker for an item that changes factor between halves in many splits (Lode's own choice of
// 0.80, not a published cut-off; the sheet says so).
constexpr double kSteadyItem = 0.80;

std::string pct(double share) { return std::isfinite(share) ? fmt_num(100.0 * share, 0) + "%" : "not defined"; }

}  // namespace

// How one factor's congruence between halves reads (cut-offs after Lorenzo-Seva & ten Berge 2006).
std::string replication_words(double median) {
  if (!std::isfinite(median)) return "not defined";
  if (median >= 0.95) return "replicates: the two halves give practically the same factor";
  if (median >= 0.85) return "replicates fairly: the halves give a similar factor, not the same one";
  return "does not replicate: the halves disagree about this factor";
}

std::vector<std::size_t> salient_nowhere(const Analysis& a) {
  std::vector<std::size_t> out;
  const std::size_t p = a.p(), k = a.k();
  for (std::size_t j = 0; j < p; ++j) {
    double largest = 0.0;
    for (std::size_t f = 0; f < k; ++f) largest = std::max(largest, std::fabs(a.model.loadings[j * k + f]));
    if (largest < a.options.salient) out.push_back(j);
  }
  return out;
}

Sheet layout_replication(const Analysis& a) {
  const ReplicationResult& r = a.halves;
  Sheet s;
  s.base_name = names::replication;
  s.column_widths = {5000, 3400, 3400, 3400, 3400, 12000};
  s.line({Cell::txt("Does the structure replicate?", title)});
  if (!r.available) {
    s.line({Cell::txt("Replication in random halves: not computed: " + r.reason, note)});
    s.line({Cell::txt(kConfirmCaution, caution)});
    return s;
  }
  const std::size_t k = a.k(), p = a.p();
  s.line({Cell::txt("The respondents were split at random into two halves " + fmt_whole(r.splits) +
                        " times (split i shuffles them with stream i of the random seed " + std::to_string(a.options.seed) +
                        "). Each half was analysed as the whole sample was (same correlations, missing-answer rule, "
                        "extraction, rotation and " + std::to_string(k) + " factors), its factors matched to the whole "
                        "sample's, and the two halves' matched factors compared by Tucker's congruence (1: the same "
                        "column of loadings).",
                    note)});
  s.line({Cell::txt("Splits used", label), Cell::num(r.used)});
  s.line({Cell::txt("Splits in which a half could not be analysed", label), Cell::num(r.failed)});
  s.blank();

  heading_row(s, "Each factor in the two halves", 6);
  s.line({Cell::txt("Factor", label), Cell::txt("Median congruence", label), Cell::txt("5th percentile", label),
          Cell::txt("Splits at 0.85 or more", label), Cell::txt("Splits at 0.95 or more", label),
          Cell::txt("Reading", label)});
  std::size_t replicated = 0;
  for (std::size_t f = 0; f < k && f < r.median.size(); ++f) {
    const bool weak = !(r.median[f] >= 0.85);
    replicated += r.median[f] >= 0.85 ? 1 : 0;
    s.line({Cell::txt("Factor " + std::to_string(f + 1), label), Cell::num(r.median[f], weak ? flag : number),
            Cell::num(r.p5[f], number), Cell::num(r.fair[f], number), Cell::num(r.equal[f], number),
            Cell::txt(replication_words(r.median[f]), weak ? flag : note)});
  }
  s.line({Cell::txt("In short", label),
          Cell::txt(replicated == k ? "every factor replicates in random halves of these respondents"
                    : replicated == 0
                        ? "no factor replicates in random halves: the solution may describe this sample only"
                        : std::to_string(replicated) + " of " + std::to_string(k) +
                              " factors replicate; read the others as tentative",
                    note)});
  s.line({Cell::txt("Cut-offs: 0.85 a fair similarity, 0.95 factors taken as equal (Lorenzo-Seva & ten Berge 2006).",
                    note)});
  s.line({Cell::txt("Halves suggesting the same number of factors", label), Cell::num(r.share_same_count, number),
          Cell::txt(pct(r.share_same_count) + " of splits, by the empirical Kaiser criterion (the whole sample: " +
                        fmt_whole(r.suggested_full) + ")",
                    note)});
  s.blank();

  heading_row(s, "Each item in the two halves", 3);
  s.line({Cell::txt("Item", label), Cell::txt("Same factor in both halves", label), Cell::txt("Factor (whole sample)", label)});
  for (std::size_t j : loading_order(a.model.loadings, p, k)) {
    std::size_t best = 0;
    for (std::size_t f = 1; f < k; ++f)
      if (std::fabs(a.model.loadings[j * k + f]) > std::fabs(a.model.loadings[j * k + best])) best = f;
    const double share = j < r.stability.size() ? r.stability[j] : kNaN;
    s.line({Cell::txt(a.items.names[j], label), Cell::num(share, share < kSteadyItem ? flag : number),
            Cell::num(static_cast<double>(best + 1))});
  }
  s.line({Cell::txt("Shares under " + fmt_num(kSteadyItem, 2) +
                        " are marked: such an item changes factor between halves in many splits (Lode's marker, not a "
                        "published cut-off).",
                    note)});
  s.blank();

  heading_row(s, "Items salient nowhere", 2);
  const std::vector<std::size_t> nowhere = salient_nowhere(a);
  if (nowhere.empty())
    s.line({Cell::txt("none: every item loads at least " + fmt_num(a.options.salient, 2) + " on some factor", note)});
  for (std::size_t j : nowhere)
    s.line({Cell::txt(a.items.names[j], label),
            Cell::txt("no loading reaches " + fmt_num(a.options.salient, 2) + " in the whole sample", note)});
  for (const std::string& f : r.failures) s.line({Cell::txt("Split not used", flag), Cell::txt(f, note)});
  for (const std::string& n : r.notes) s.line({Cell::txt("Note", label), Cell::txt(n, note)});
  s.blank();
  s.line({Cell::txt(kConfirmCaution, caution)});
  return s;
}

}  // namespace lode::addin::report
