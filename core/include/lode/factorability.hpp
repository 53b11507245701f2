// Is a correlation matrix worth factoring? Kaiser-Meyer-Olkin measure of sampling adequacy (overall
// and per item), Bartlett's test of sphericity, the determinant, squared multiple correlations.
#pragma once

#include "lode/common.hpp"

#include <optional>
#include <string>
#include <vector>

namespace lode {

// Kaiser-Meyer-Olkin measure of sampling adequacy (Kaiser 1970; Kaiser & Rice 1974), from the
// anti-image correlations -q_ij / sqrt(q_ii q_jj), Q = R^-1.
struct KmoResult {
  double overall = 0.0;
  Vector per_item;  // the measure of sampling adequacy (MSA) of each item
};

// Kaiser's (1974) verbal labels: >= .90 "marvelous", >= .80 "meritorious", >= .70 "middling",
// >= .60 "mediocre", >= .50 "miserable", below .50 "unacceptable".
const char* kmo_label(double value) noexcept;

// Throws not_positive_definite when R cannot be inverted.
KmoResult kaiser_meyer_olkin(const Matrix& r);

// Bartlett's (1950) test that the population correlation matrix is the identity:
// chi-square = -(n - 1 - (2p + 5) / 6) ln|R|, df = p (p - 1) / 2.
struct BartlettTest {
  double chi_square = 0.0;
  double df = 0.0;
  double p_value = 0.0;
  Index n_obs = 0;
};

// Throws insufficient_data when n_obs is 0 (unknown) or too small for the correction factor to be
// positive; not_positive_definite when |R| <= 0.
BartlettTest bartlett_sphericity(const Matrix& r, Index n_obs);

// log|R| of a symmetric positive-definite matrix (Cholesky); throws not_positive_definite otherwise.
double log_determinant(const Matrix& r);

// Everything at once. Bartlett's test is left empty (with a note) when n_obs is 0; KMO and SMCs are
// left empty (with a note) when R is not positive definite.
struct FactorabilityResult {
  std::optional<KmoResult> kmo;
  std::optional<BartlettTest> bartlett;
  double determinant = 0.0;      // of R (may be <= 0 for a matrix that is not positive definite)
  double log_determinant = 0.0;  // NaN when the determinant is not positive
  std::optional<Vector> smc;     // squared multiple correlations
  std::vector<std::string> notes;
};

FactorabilityResult assess_factorability(const Matrix& r, Index n_obs, const std::vector<std::string>& item_names = {});

}  // namespace lode
