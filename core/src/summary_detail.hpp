// Internals of summaries shared by summary.cpp, summary_bytes.cpp and summary_correlation.cpp.
#pragma once

#include "lode/summary.hpp"

#include <cstddef>
#include <vector>

namespace lode::detail {

// Position of pair a < b in Summary::tables.
std::size_t pair_index(Index a, Index b, Index p);

// Whether pair (a, b) keeps a contingency table (both items under the category limit).
bool has_table(const Summary& s, Index a, Index b);

// Joins the sorted values `seen[j]` into item j's categories (items with over[j] pass the limit and
// lose their counts and tables) and widens the tables to match.
void join_categories(Summary& s, const std::vector<std::vector<double>>& seen, const std::vector<bool>& over);

}  // namespace lode::detail
