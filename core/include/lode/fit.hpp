// How well k factors reproduce a correlation matrix: residual correlations and their root mean
// square, the likelihood-ratio chi-square with Bartlett's correction, RMSEA with its interval,
// Tucker-Lewis index and BIC.
#pragma once

#include "lode/common.hpp"

#include <string>
#include <vector>

namespace lode {

// Needs no sample size.
struct ResidualFit {
  Matrix residuals;  // R - (L L' + diag(u)), items x items (the diagonal is R's minus the implied)
  double rmsr = 0.0; // root mean square of the off-diagonal residuals (each pair once)
  double max_abs_residual = 0.0;  // largest off-diagonal residual in absolute value
};

ResidualFit residual_fit(const Matrix& r, const Matrix& loadings, const Vector& uniquenesses);

struct FitOptions {
  double interval_level = 0.90;  // of the RMSEA interval
};

struct FitResult {
  Index n_obs = 0;
  Index items = 0;
  int factors = 0;
  double df = 0.0;               // ((p - k)^2 - (p + k)) / 2
  double discrepancy = 0.0;      // ML discrepancy F = log|S| - log|R| + tr(S^-1 R) - p at S = L L' + diag(u)
  double chi_square = 0.0;       // (n - 1 - (2p + 5)/6 - 2k/3) F (Bartlett 1950; Lawley & Maxwell 1971)
  double p_value = 0.0;          // upper tail of chi-square(df); NaN when df = 0
  double null_chi_square = 0.0;  // of the zero-factor model (Bartlett's sphericity statistic)
  double null_df = 0.0;          // p (p - 1) / 2
  double rmsea = 0.0;            // sqrt(max(chi2 - df, 0) / (df (n - 1))) (Steiger & Lind 1980); NaN when df = 0
  double rmsea_lower = 0.0;      // interval by inverting the noncentral chi-square (Browne & Cudeck 1993)
  double rmsea_upper = 0.0;
  double tli = 0.0;              // Tucker & Lewis (1973); NaN when df = 0
  double bic = 0.0;              // chi2 - df ln(n) (Raftery 1995)
  ResidualFit residual;
  std::vector<std::string> notes;
};

// For any extraction method (the chi-square is the ML statistic evaluated at the given solution; it
// is the likelihood-ratio test only for maximum likelihood). Throws insufficient_data when n_obs is 0
// (the residuals need no n: use residual_fit) or too small; too_many_factors when df < 0;
// not_positive_definite when R or the implied matrix is not.
FitResult assess_fit(const Matrix& r, const Matrix& loadings, const Vector& uniquenesses, Index n_obs,
                     const FitOptions& options = {});

// The ML discrepancy log|S| - log|R| + tr(S^-1 R) - p.
double ml_discrepancy(const Matrix& r, const Matrix& implied);

}  // namespace lode
