// The report's sheets, one layout function per sheet (one file each, layout_*.cpp), from the plain
// Analysis value. UNO-free: report_uno.cpp writes what these return.
#pragma once

#include "report_analysis.hpp"

namespace lode::addin::report {

Sheet layout_overview(const Analysis& a);   // layout_overview.cpp
Sheet layout_loadings(const Analysis& a);   // layout_loadings.cpp
Sheet layout_factors(const Analysis& a);    // layout_factors.cpp
Sheet layout_scree(const Analysis& a);      // layout_scree.cpp
Sheet layout_record(const Analysis& a);     // layout_record.cpp
Sheet layout_general(const Analysis& a);    // layout_general.cpp: when a.general.available
Sheet layout_groups(const Analysis& a);     // layout_groups.cpp: when a.groups.asked
// The factor scores (layout_scores.cpp): on a sheet of their own, or as columns beside the data.
// Only when the scores were computed (a.scores.available) and placed there.
Sheet layout_scores(const Analysis& a);
Beside layout_scores_beside(const Analysis& a);
// Replication in random halves (layout_replication.cpp) and the confirmatory check on held-out
// respondents (layout_holdout.cpp): each on a sheet of its own when asked for.
Sheet layout_replication(const Analysis& a);
Sheet layout_holdout(const Analysis& a);
// How a factor's median congruence between halves reads (0.85 and 0.95, Lorenzo-Seva & ten Berge 2006).
std::string replication_words(double median);
// How the count of CFI, TLI, RMSEA and SRMR meeting the cut-offs of Hu & Bentler (1999) reads.
std::string holdout_words(std::size_t met, std::size_t defined);
// The analysed items whose largest absolute loading stays under the strong-loading cut.
std::vector<std::size_t> salient_nowhere(const Analysis& a);

// A heading row: `text` in the first cell, then cells-1 empty cells in the heading style.
inline void heading_row(Sheet& sheet, std::string text, std::size_t cells) {
  std::vector<Cell> row{Cell::txt(std::move(text), styles::heading)};
  for (std::size_t c = 1; c < cells; ++c) row.push_back(Cell::txt("", styles::heading));
  sheet.line(std::move(row));
}

// Tucker's congruence in words (layout_groups.cpp; Lorenzo-Seva & ten Berge 2006): "the same factor"
// (0.95 and above), "fair similarity" (0.85 to 0.95), "differs" (below).
std::string congruence_words(double c);
// A p-value as a reader wants it: "< 0.001" below 0.001, else a number shown with three decimals
// (never a bare 0 or fifteen digits).
inline Cell p_cell(double p) {
  if (!(p >= 0.001)) return Cell::txt(p < 0.001 ? "< 0.001" : "");
  return Cell::num(p, styles::number);
}

// "Random data (95th percentile of 100)": the heading of parallel analysis's column (overview, scree).
std::string random_data_words(const CountResult& count);

}  // namespace lode::addin::report
