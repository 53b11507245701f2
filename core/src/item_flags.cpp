#include "lode/item_flags.hpp"

#include "lode/correlation.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <numeric>

namespace lode {

const char* to_string(ItemFlagKind kind) noexcept {
  switch (kind) {
    case ItemFlagKind::cross_loading: return "cross_loading";
    case ItemFlagKind::no_salient_loading: return "no_salient_loading";
    case ItemFlagKind::low_communality: return "low_communality";
    case ItemFlagKind::heywood_case: return "heywood_case";
  }
  return "unknown";
}

std::vector<ItemFlag> flag_items(const Matrix& loadings, const Matrix& phi_in, const Vector& uniquenesses,
                                 const ItemFlagOptions& o) {
  const auto& names = o.item_names;
  const Index p = loadings.rows(), k = loadings.cols();
  if (p == 0 || k == 0) throw Error(ErrorCode::invalid_argument, "the loading matrix is empty");
  if (!loadings.allFinite()) throw Error(ErrorCode::invalid_argument, "the loading matrix contains a missing or infinite value");
  if (phi_in.size() != 0 && (phi_in.rows() != k || phi_in.cols() != k || !phi_in.allFinite()))
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the factor correlation matrix must be a finite {} x {} matrix, not {} x {}", k, k,
                            phi_in.rows(), phi_in.cols()));
  if (uniquenesses.size() != 0 && (uniquenesses.size() != p || !uniquenesses.allFinite()))
    throw Error(ErrorCode::invalid_argument,
                fmt::format("there must be {} finite uniquenesses, one per item; {} were given", p, uniquenesses.size()));
  auto in_unit = [](double v) { return v >= 0.0 && v <= 1.0; };
  if (!(in_unit(o.salient) && in_unit(o.cross_loading_gap) && in_unit(o.low_communality) && in_unit(o.heywood_uniqueness)))
    throw Error(ErrorCode::invalid_argument,
                fmt::format("item flag thresholds must lie in [0, 1] (salient {}, cross-loading gap {}, low communality "
                            "{}, Heywood uniqueness {})",
                            o.salient, o.cross_loading_gap, o.low_communality, o.heywood_uniqueness));
  const Matrix phi = phi_in.size() == 0 ? Matrix::Identity(k, k) : phi_in;
  const Vector communality = uniquenesses.size() != 0 ? Vector(Vector::Ones(p) - uniquenesses)
                                                      : Vector((loadings * phi * loadings.transpose()).diagonal());

  std::vector<ItemFlag> flags;
  for (Index i = 0; i < p; ++i) {
    const std::string item = item_label(names, i);
    std::vector<Index> order(static_cast<std::size_t>(k));
    std::iota(order.begin(), order.end(), Index{0});
    std::stable_sort(order.begin(), order.end(),
                     [&](Index a, Index b) { return std::abs(loadings(i, a)) > std::abs(loadings(i, b)); });
    const Index f1 = order[0];
    const double l1 = loadings(i, f1);
    if (std::abs(l1) < o.salient) {
      flags.push_back({i, ItemFlagKind::no_salient_loading, {f1}, l1,
                       fmt::format("{} has no salient loading: its largest is {:.2f} on factor {}, below {:.2f} "
                                   "(common practice). It may not belong to any factor.",
                                   item, l1, f1 + 1, o.salient)});
    } else if (k > 1) {
      const Index f2 = order[1];
      const double l2 = loadings(i, f2);
      const bool both_salient = std::abs(l2) >= o.salient;
      const bool close = std::abs(l1) - std::abs(l2) < o.cross_loading_gap;
      if (both_salient || close)
        flags.push_back({i, ItemFlagKind::cross_loading, {f1, f2}, l2,
                         fmt::format("{} cross-loads: {:.2f} on factor {} and {:.2f} on factor {} ({}; common practice). "
                                     "It does not clearly belong to one factor.",
                                     item, l1, f1 + 1, l2, f2 + 1,
                                     both_salient ? fmt::format("both at least {:.2f}", o.salient)
                                                  : fmt::format("within {:.2f} of each other", o.cross_loading_gap))});
    }
    const double h2 = communality(i);
    const double psi = uniquenesses.size() != 0 ? uniquenesses(i) : 1.0 - h2;
    if (psi < 0.0) {
      flags.push_back({i, ItemFlagKind::heywood_case, {}, psi,
                       fmt::format("{} has communality {:.3f}, above 1 (uniqueness {:.3f}): an improper solution "
                                   "(ultra-Heywood case). Too many factors, too few items per factor or a small sample "
                                   "are the usual causes; the solution should not be interpreted as it is.",
                                   item, h2, psi)});
    } else if (psi <= o.heywood_uniqueness + 1e-12) {  // rounding of a value held at the bound
      flags.push_back({i, ItemFlagKind::heywood_case, {}, psi,
                       fmt::format("{} has uniqueness {:.3f}, at or below {:.3f} (a Heywood case; the bound is common "
                                   "practice): the item is "
                                   "treated as measured without error, which is rarely credible.",
                                   item, psi, o.heywood_uniqueness)});
    }
    if (h2 < o.low_communality)
      flags.push_back({i, ItemFlagKind::low_communality, {}, h2,
                       fmt::format("{} has low communality {:.2f}, below {:.2f} (common practice): the factors explain "
                                   "little of it.",
                                   item, h2, o.low_communality)});
  }
  return flags;
}

}  // namespace lode
