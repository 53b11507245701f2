// Means and covariance matrix of data with missing answers by maximum likelihood under missing at
// random: the EM algorithm for the multivariate normal (Dempster, Laird & Rubin 1977; Little & Rubin
// 2002, section 11.2).
#pragma once

#include "lode/common.hpp"

#include <string>
#include <vector>

namespace lode {

struct EmOptions {
  // Stop when no mean or covariance of the standardised items changes by more than this between two
  // iterations (the items are scaled by their observed standard deviations, so the criterion is free
  // of the answer scale).
  double tolerance = 1e-10;
  int max_iterations = 1000;
  int threads = 0;       // rows in parallel; 0 = all hardware threads. Results do not depend on it.
  ProgressFn progress;   // iterations done / max_iterations; return false to cancel
};

struct EmEstimate {
  Vector means;        // items
  Matrix covariance;   // maximum likelihood (divisor: rows used), items x items
  Index rows_used = 0; // rows with at least one answer (rows with none carry no information)
  Convergence convergence;
};

// The EM estimate of data (rows = respondents, columns = items, NaN = missing). Fails when fewer than
// 2 rows carry an answer, an item is constant in its answers or never answered, or the covariance
// becomes singular (items that are exact linear combinations of others). Not converging within
// max_iterations is reported in `convergence`, not thrown.
EmEstimate em_estimate(const Matrix& data, const EmOptions& options = {},
                       const std::vector<std::string>& item_names = {});

}  // namespace lode
