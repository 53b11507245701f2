// Items that need the analyst's attention in a fitted solution: cross-loadings, no salient loading, low
// communality, Heywood cases. Every threshold is a parameter; the defaults are common practice (rules of
// thumb of the trade, not results of a method), and the notes say so.
#pragma once

#include "lode/common.hpp"

#include <string>
#include <vector>

namespace lode {

struct ItemFlagOptions {
  // A loading is salient when its absolute value is at least this (common practice: 0.40).
  double salient = 0.40;
  // Cross-loading: a second loading that is itself salient, or within this distance of the item's
  // largest (salient) loading in absolute value (common practice: 0.20).
  double cross_loading_gap = 0.20;
  // Communality below this is low (common practice: 0.20).
  double low_communality = 0.20;
  // A uniqueness at or below this is a Heywood case; 0.005 is the lower bound R's stats::factanal
  // places on uniquenesses (its documented `lower` control). A negative uniqueness (communality above
  // 1) is flagged as an improper ("ultra-Heywood") solution.
  double heywood_uniqueness = 0.005;
  std::vector<std::string> item_names;  // optional, used in the notes
};

enum class ItemFlagKind { cross_loading, no_salient_loading, low_communality, heywood_case };

const char* to_string(ItemFlagKind kind) noexcept;

struct ItemFlag {
  Index item = 0;              // 0-based
  ItemFlagKind kind = ItemFlagKind::cross_loading;
  std::vector<Index> factors;  // the factors concerned (0-based), largest loading first
  double value = 0.0;          // the loading, communality or uniqueness that raised the flag
  std::string note;            // plain language, names the item and the threshold
};

// Flags for every item of a solution: pattern loadings (items x factors), factor correlations (empty =
// orthogonal) and uniquenesses (empty = 1 - communality). Communality is 1 - uniqueness when uniquenesses
// are given, else diag(Lambda Phi Lambda'). Flags come in item order.
std::vector<ItemFlag> flag_items(const Matrix& loadings, const Matrix& phi, const Vector& uniquenesses,
                                 const ItemFlagOptions& options = {});

}  // namespace lode
