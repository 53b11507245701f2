// Data simulated from a known common factor model, for the tests of scores, reliability and bootstrap:
// X = F L' + E diag(sqrt(psi)), F ~ N(0, Phi), E ~ N(0, I), with psi = 1 - diag(L Phi L') so that the items
// have unit variance. Seeded through lode::random_stream.
#pragma once

#include "lode/random.hpp"

#include <cmath>

namespace lode::testing {

struct SimulatedFactorData {
  Matrix x;        // n x p
  Matrix factors;  // n x k, the true factor values
};

inline SimulatedFactorData simulate_factor_data(const Matrix& loadings, const Matrix& phi, Index n, std::uint64_t seed,
                                                std::uint64_t stream = 0) {
  auto rng = random_stream(seed, stream);
  const Index p = loadings.rows(), k = loadings.cols();
  const Matrix chol = phi.llt().matrixL();
  SimulatedFactorData out;
  out.factors = standard_normal_matrix(n, k, rng) * chol.transpose();
  const Vector psi = (Vector::Ones(p) - (loadings * phi * loadings.transpose()).diagonal()).cwiseSqrt();
  out.x = out.factors * loadings.transpose() + standard_normal_matrix(n, p, rng) * psi.asDiagonal();
  return out;
}

// Two correlated factors, four items each, loadings between 0.5 and 0.8, one mild cross-loading.
inline Matrix two_factor_loadings() {
  Matrix l(8, 2);
  l << 0.80, 0.00,  //
      0.70, 0.10,   //
      0.60, 0.00,   //
      0.55, 0.00,   //
      0.00, 0.75,   //
      0.05, 0.65,   //
      0.00, 0.60,   //
      0.00, 0.50;
  return l;
}

inline Matrix two_factor_phi(double rho = 0.3) {
  Matrix phi(2, 2);
  phi << 1.0, rho, rho, 1.0;
  return phi;
}

}  // namespace lode::testing
