// One general factor under correlated group factors: the Schmid-Leiman transformation (Schmid & Leiman
// 1957) of an oblique solution with at least three factors, from a one-factor (second-order) analysis
// of the factor correlations, with omega total, omega hierarchical and omega subscales (McDonald 1999;
// Zinbarg, Revelle, Yovel & Li 2005) and the explained common variance of the general factor.
#pragma once

#include "lode/common.hpp"
#include "lode/extraction.hpp"

#include <string>
#include <vector>

namespace lode {

struct SchmidLeimanOptions {
  // The second-order fit of the factor correlations Phi (one factor). Minimum residual by default: with
  // three factors the one-factor model of Phi has no degrees of freedom and any method reproduces Phi.
  ExtractionMethod second_order = ExtractionMethod::minimum_residual;
  int max_iterations = 1000;
  double tolerance = 1e-10;
  // Which group factor each item's subscale is (-1 = none); empty = the factor of the item's largest
  // absolute pattern loading.
  std::vector<Index> assignment;
  std::vector<std::string> item_names;
};

// With pattern loadings L (items x k), factor correlations Phi and the second-order loadings gamma of
// the k factors on the general factor (second-order uniquenesses v = 1 - gamma^2):
//   general loadings  g = L gamma;   group loadings  B = L diag(sqrt(v)),
// so g g' + B B' = L (gamma gamma' + diag(v)) L', which is L Phi L' wherever the second-order model
// reproduces Phi (always with three factors). Item uniquenesses u = 1 - g^2 - rowsum(B^2). The omegas are
// ratios to the model-implied variance of the unit-weighted sum, V = (1'g)^2 + sum_f (1'B_f)^2 + 1'u:
//   omega total          = ((1'g)^2 + sum_f (1'B_f)^2) / V
//   omega hierarchical   = (1'g)^2 / V
//   omega subscale of f  = (1_S'B_f)^2 / V_S over the items S of f, with V_S the same sum over S
//                          (the group factor's share of its subscale once the general factor is set apart);
//   subscale omega total = common part of V_S / V_S;
//   ECV                  = sum g^2 / (sum g^2 + sum B^2) (explained common variance of the general factor).
struct SchmidLeimanResult {
  Vector general;                   // items
  Matrix group;                     // items x k
  Vector uniquenesses;              // items
  Vector second_order_loadings;     // k: gamma (column sum made non-negative)
  Vector second_order_uniquenesses; // k: v
  double second_order_max_residual = 0.0;  // largest |Phi - gamma gamma' - diag(v)| off the diagonal
  Convergence second_order_convergence;
  double omega_total = 0.0;
  double omega_hierarchical = 0.0;
  double ecv = 0.0;
  Vector omega_subscales;        // k; NaN for a factor with no items
  Vector subscale_omega_total;   // k; NaN likewise
  std::vector<Index> assignment; // items: the group factor of each item's subscale (-1 = none)
  std::vector<std::string> notes;
};

// Fails (invalid_argument) with fewer than 3 factors, with uncorrelated factors (an orthogonal solution
// has no general factor to extract), or with malformed inputs; a Heywood case of the second-order fit
// and a second-order model that does not reproduce Phi are reported in the notes.
SchmidLeimanResult schmid_leiman(const Matrix& pattern, const Matrix& factor_correlations,
                                 const SchmidLeimanOptions& options = {});

}  // namespace lode
