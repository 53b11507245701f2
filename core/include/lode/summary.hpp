// Mergeable summaries of survey answers: what every correlation Lode offers needs, and nothing per
// respondent, so that the heavy pass over millions of rows can run where the data live (a database,
// a cluster) and come back small. A summary of a block of rows holds
//   - per item and per pair of items: the rows answering both, each item's mean and sum of squares
//     about that mean over those rows, and the pair's co-moment (pairwise deletion exactly);
//   - per item with at most `max_categories` distinct values: the count of each value, and per pair
//     of such items the contingency table (the sufficient statistics of Spearman's coefficient, whose
//     midranks come from the margins, and of the polychoric correlation).
// Summaries merge exactly up to rounding, associatively and commutatively: moments by the pairwise
// update of Chan, Golub & LeVeque (1979, "Updating formulae and a pairwise algorithm for computing
// sample variances"), counts and tables by addition. The portable byte form is described beside
// summary_to_bytes and in README ("Summaries").
#pragma once

#include "lode/common.hpp"
#include "lode/correlation.hpp"
#include "lode/polychoric.hpp"

#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

namespace lode {

// The version of the byte form summary_to_bytes writes; summary_from_bytes reads this one only.
inline constexpr std::uint32_t kSummaryFormatVersion = 1;
// The largest category limit a summary may keep tables for.
inline constexpr int kSummaryMaxCategoriesLimit = 100;

struct SummaryOptions {
  // Items with at most this many distinct values keep their category counts and pair tables
  // (11 covers a 0-10 scale); an item with more keeps moments only. 2..100.
  int max_categories = 11;
  // Listwise deletion: only rows with every item answered contribute (a listwise summary gives
  // listwise correlations). Rows are still counted in rows_total and the missing cells.
  bool listwise = false;
};

// One item's distinct values (ascending) and how often each was given.
struct SummaryCategories {
  bool over_limit = false;  // more than max_categories distinct values were seen: no counts kept
  std::vector<double> values;
  std::vector<std::int64_t> counts;
};

struct Summary {
  std::vector<std::string> item_names;  // one per item; "" = unnamed (messages say "column j")
  SummaryOptions options;
  std::int64_t rows_total = 0;     // rows added (listwise too)
  std::int64_t rows_complete = 0;  // rows with every item answered
  std::int64_t rows_any = 0;       // rows with at least one item answered
  std::int64_t missing_cells = 0;  // unanswered cells of all rows added
  IndexMatrix n;     // items x items, symmetric: rows answering both (diagonal: the item's answers)
  Matrix mean;       // (i, j): mean of item i over the rows answering i and j
  Matrix m2;         // (i, j): sum of squares of item i about mean(i, j) over those rows
  Matrix comoment;   // symmetric: sum of products of the deviations about the pair's means; diagonal = m2's
  std::vector<SummaryCategories> categories;  // per item
  // Per pair a < b in the order (0,1), (0,2), ..., (1,2), ...: the contingency table, row-major,
  // rows the categories of a, columns those of b. Empty when either item is over the limit.
  std::vector<std::vector<std::int64_t>> tables;

  Index items() const { return static_cast<Index>(item_names.size()); }
};

// An empty summary of `items` items (names may be empty: "column j" in messages).
Summary make_summary(std::vector<std::string> item_names, const SummaryOptions& options = {});

// Adds a block of rows (respondents x items, NaN = skipped). Infinite values are refused.
void summary_add(Summary& summary, const Matrix& rows);

// Adds `other` into `into`. Refuses (naming the difference) summaries of different items, category
// limits or missing-value policies.
void summary_merge(Summary& into, const Summary& other);

// The portable byte form (little-endian throughout):
//   "LODESUMM", u32 format version (1), u32 flags (bit 0 = listwise; others 0), u32 items p,
//   u32 max_categories, u64 rows_total, rows_complete, rows_any, missing_cells,
//   per item: u32 byte length + UTF-8 name,
//   u64 n(i, j) for i <= j (row by row), f64 mean(i, j) and then f64 m2(i, j) for all i, j (row-major),
//   f64 comoment(i, j) for i < j,
//   per item: u32 k (0xFFFFFFFF = over the limit, nothing follows), k f64 values ascending, k u64 counts,
//   per pair a < b with both items under the limit: k_a * k_b u64 counts, row-major,
//   u64 FNV-1a (64-bit) hash of every byte before it.
std::vector<std::uint8_t> summary_to_bytes(const Summary& summary);

// Reads the byte form, checking everything it can (length, hash, version, counts that agree with
// each other); a truncated or corrupted form is an error naming what is wrong.
Summary summary_from_bytes(const std::uint8_t* bytes, std::size_t size);

// The contingency table of items a and b (a != b, both under the category limit): rows the
// categories of a, columns those of b.
Matrix summary_table(const Summary& summary, Index a, Index b);

// Correlations from a summary, exactly as correlation() gives them from the rows the summary was made
// of (same checks and messages where they apply). options.missing must match the summary's policy.
// Pearson works for every item; Spearman and polychoric need the category counts.
CorrelationResult correlation_from_summary(const Summary& summary, const CorrelationOptions& options = {});
PolychoricResult polychoric_from_summary(const Summary& summary, const CorrelationOptions& options = {});

}  // namespace lode
