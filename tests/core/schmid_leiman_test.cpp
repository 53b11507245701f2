// The Schmid-Leiman transformation (Schmid & Leiman 1957) and the omegas of a general factor (McDonald
// 1999; Zinbarg, Revelle, Yovel & Li 2005): the identity g g' + B B' = L Phi L' (exact with three
// factors), a bifactor population built here recovered through extraction and oblique rotation, and the
// omegas against numpy implementing the published formulas with the closed-form second-order loadings
// of three factors (gamma_a^2 = phi_ab phi_ac / phi_bc, Spearman's triad).
#include "lode/extraction.hpp"
#include "lode/rotation.hpp"
#include "lode/schmid_leiman.hpp"

#include "../support/errors.hpp"
#include "../support/external.hpp"

#include <gtest/gtest.h>

using namespace lode;
using lode::testing::error_message;
using lode::testing::run_python;

namespace {

// 12 items, 4 per group factor, simple structure.
Matrix simple_pattern(Index k = 3, Index per = 4) {
  Matrix l = Matrix::Zero(k * per, k);
  const double values[4] = {0.7, 0.6, 0.65, 0.55};
  for (Index f = 0; f < k; ++f)
    for (Index j = 0; j < per; ++j) l(f * per + j, f) = values[j % 4];
  return l;
}

// Factor correlations of factors that are a general factor plus their own part: Phi = gamma gamma' + diag(1 - gamma^2).
Matrix hierarchical_phi(const Vector& gamma) {
  Matrix phi = gamma * gamma.transpose();
  phi.diagonal().setOnes();
  return phi;
}

}  // namespace

TEST(SchmidLeiman, ReproducesTheCommonPartOfTheObliqueSolution) {
  Matrix l = simple_pattern();
  l(1, 1) = 0.2;  // a cross-loading
  l(6, 2) = -0.15;
  Matrix phi(3, 3);
  phi << 1.0, 0.45, 0.3, 0.45, 1.0, 0.5, 0.3, 0.5, 1.0;
  const SchmidLeimanResult r = schmid_leiman(l, phi);
  ASSERT_TRUE(r.second_order_convergence.converged);
  // Three factors: the one-factor model of Phi is just identified, so it reproduces Phi up to the
  // fit's convergence criterion (1e-10 on the gradient).
  EXPECT_LT(r.second_order_max_residual, 1e-8);
  const Matrix common = l * phi * l.transpose();
  const Matrix sl = r.general * r.general.transpose() + r.group * r.group.transpose();
  // Each entry is a sum over 3 factors of loadings below 1: the residual of Phi times (row sums of |L|)^2.
  const double rows = l.cwiseAbs().rowwise().sum().maxCoeff();
  EXPECT_LE((sl - common).cwiseAbs().maxCoeff(), rows * rows * 1e-8);
  // Four factors: the identity holds exactly against the second-order model's implied Phi.
  Matrix l4 = simple_pattern(4, 3);
  Vector gamma(4);
  gamma << 0.8, 0.6, 0.7, 0.5;
  Matrix phi4 = hierarchical_phi(gamma);
  phi4(0, 3) = phi4(3, 0) = 0.55;  // not exactly one general factor
  const SchmidLeimanResult r4 = schmid_leiman(l4, phi4);
  Matrix implied = r4.second_order_loadings * r4.second_order_loadings.transpose();
  implied.diagonal().setOnes();
  const Matrix sl4 = r4.general * r4.general.transpose() + r4.group * r4.group.transpose();
  EXPECT_LE((sl4 - l4 * implied * l4.transpose()).cwiseAbs().maxCoeff(), 1e-14);
  EXPECT_GT(r4.second_order_max_residual, 0.01);  // and it is reported
}

TEST(SchmidLeiman, RecoversABifactorPopulationThroughExtractionAndObliqueRotation) {
  // Population: group structure L, second-order loadings gamma; the bifactor loadings are g = L gamma
  // and B = L diag(sqrt(1 - gamma^2)), the correlation matrix L Phi L' + diag(u).
  const Matrix l = simple_pattern();
  Vector gamma(3);
  gamma << 0.8, 0.7, 0.6;
  const Matrix phi = hierarchical_phi(gamma);
  Matrix r = l * phi * l.transpose();
  r.diagonal().setOnes();
  ExtractionOptions eo;
  eo.tolerance = 1e-12;
  const ExtractionResult ex = extract_factors(r, 3, eo);
  RotationOptions ro;
  ro.method = RotationMethod::quartimin;  // exact simple structure: the criterion's minimum is zero there
  ro.tolerance = 1e-10;
  const RotationResult rot = rotate(ex.loadings, ro);
  const SchmidLeimanResult s = schmid_leiman(rot.pattern, rot.factor_correlations);
  // Factor order and signs follow the rotation's presentation: match each recovered factor to the
  // population factor by its largest loading.
  const Vector g_true = l * gamma;
  EXPECT_LE((s.general.cwiseAbs() - g_true).cwiseAbs().maxCoeff(), 1e-6);
  for (Index f = 0; f < 3; ++f) {
    Index item = 0;
    s.group.col(f).cwiseAbs().maxCoeff(&item);
    const Index truth = item / 4;
    const Vector b_true = l.col(truth) * std::sqrt(1.0 - gamma(truth) * gamma(truth));
    EXPECT_LE((s.group.col(f).cwiseAbs() - b_true).cwiseAbs().maxCoeff(), 1e-6) << f;
  }
  EXPECT_TRUE(s.notes.empty());
}

TEST(SchmidLeiman, OmegasMatchNumpyOfThePublishedFormulas) {
  Matrix l = simple_pattern();
  l(2, 1) = 0.25;
  l(9, 0) = 0.1;
  Matrix phi(3, 3);
  phi << 1.0, 0.5, 0.4, 0.5, 1.0, 0.35, 0.4, 0.35, 1.0;
  const SchmidLeimanResult s = schmid_leiman(l, phi);
  // numpy: Spearman's triad for gamma; g = L gamma, B = L diag(sqrt(1 - gamma^2)), u = 1 - h2;
  // omega_t, omega_h (McDonald 1999; Zinbarg et al. 2005), omega subscale per group factor over its
  // items (largest pattern loading), ECV = sum g^2 / (sum g^2 + sum B^2).
  const auto ref = run_python(R"(
L = X; P = Phi
g1 = np.sqrt(P[0,1]*P[0,2]/P[1,2]); g2 = np.sqrt(P[0,1]*P[1,2]/P[0,2]); g3 = np.sqrt(P[0,2]*P[1,2]/P[0,1])
gam = np.array([g1, g2, g3])
g = L @ gam
B = L * np.sqrt(1 - gam**2)
u = 1 - g**2 - (B**2).sum(axis=1)
V = g.sum()**2 + (B.sum(axis=0)**2).sum() + u.sum()
emit('omega_t', np.array([(g.sum()**2 + (B.sum(axis=0)**2).sum()) / V]))
emit('omega_h', np.array([g.sum()**2 / V]))
emit('ecv', np.array([(g**2).sum() / ((g**2).sum() + (B**2).sum())]))
a = np.abs(L).argmax(axis=1)
sub = []
for f in range(3):
    S = a == f
    VS = g[S].sum()**2 + (B[S].sum(axis=0)**2).sum() + u[S].sum()
    sub.append(B[S, f].sum()**2 / VS)
emit('sub', np.array(sub))
emit('gamma', gam)
)",
                              {{"X", l}, {"Phi", phi}});
  // The second-order fit meets its criterion (gradient 1e-10): loadings and omegas agree to ~1e-9.
  EXPECT_LE((s.second_order_loadings - ref.at("gamma")).cwiseAbs().maxCoeff(), 1e-8);
  EXPECT_NEAR(s.omega_total, ref.at("omega_t")(0, 0), 1e-8);
  EXPECT_NEAR(s.omega_hierarchical, ref.at("omega_h")(0, 0), 1e-8);
  EXPECT_NEAR(s.ecv, ref.at("ecv")(0, 0), 1e-8);
  EXPECT_LE((s.omega_subscales - ref.at("sub")).cwiseAbs().maxCoeff(), 1e-8);
  EXPECT_GT(s.omega_hierarchical, 0.0);
  EXPECT_LT(s.omega_hierarchical, s.omega_total);
}

TEST(SchmidLeiman, ErrorsNameTheProblem) {
  const Matrix l = simple_pattern();
  EXPECT_EQ(error_message([&] { schmid_leiman(l.leftCols(2), Matrix::Identity(2, 2)); }),
            "the Schmid-Leiman transformation needs an oblique solution with at least 3 factors; this one has 2");
  EXPECT_EQ(error_message([&] { schmid_leiman(l, Matrix::Identity(3, 3)); }),
            "the factors are uncorrelated (an orthogonal rotation): there is no general factor behind them; use an "
            "oblique rotation");
  EXPECT_EQ(error_message([&] { schmid_leiman(l, Matrix::Identity(4, 4)); }),
            "the factor correlations are 4 x 4; the loadings have 3 factors");
}
