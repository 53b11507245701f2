// Factor rotation, checked live against R's base stats::varimax and stats::promax and statsmodels'
// factor_rotation.rotate_factors, plus properties every rotation must have.
//
// The unrotated loadings are computed live: R's stats::factanal(covmat = Harman74.cor, factors = k,
// rotation = "none") on the 24 psychological tests of Holzinger & Swineford (1939) as given by Harman
// (1976), shipped in R's datasets package.
#include "lode/random.hpp"
#include "lode/rotation.hpp"
#include "support/external.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <limits>
#include <string>
#include <utility>
#include <vector>

using namespace lode;
using lode::testing::run_python;
using lode::testing::run_r;
using lode::testing::scalar;

namespace {

// Unrotated maximum likelihood loadings of Harman74.cor (R's datasets) with k factors, from R's
// stats::factanal, cached per process.
const Matrix& harman(int k) {
  static const Matrix three = run_r(R"(
    fa <- factanal(covmat = Harman74.cor, factors = 3, rotation = "none")
    emit("L", unclass(fa$loadings)))", {}).at("L");
  static const Matrix four = run_r(R"(
    fa <- factanal(covmat = Harman74.cor, factors = 4, rotation = "none")
    emit("L", unclass(fa$loadings)))", {}).at("L");
  return k == 3 ? three : four;
}

struct Presented {
  Matrix pattern;
  Matrix phi;
};

// A reference solution put into Lode's presentation order (order_and_reflect's convention).
Presented present(const Matrix& pattern, const Matrix& phi) {
  const FactorOrder f = presentation_order(pattern);
  return {apply_to_columns(pattern, f), apply_to_correlations(phi, f)};
}

double max_diff(const Matrix& a, const Matrix& b) { return (a - b).cwiseAbs().maxCoeff(); }

RotationOptions opts(RotationMethod m, bool normalize = true) {
  RotationOptions o;
  o.method = m;
  o.normalize = normalize;
  return o;
}

// A target built from the data (Browne 2001's use of a partially specified target): from the varimax
// solution, each item's largest loading rounded to one decimal and its loadings below 0.25 in absolute
// value set to 0; the full target sets the remaining entries to 0 as well, the partial one leaves them
// unspecified (NaN).
Matrix make_target(const Matrix& a, bool partial) {
  const Matrix v = rotate(a, opts(RotationMethod::varimax)).pattern;
  Matrix h = Matrix::Zero(v.rows(), v.cols());
  for (Index i = 0; i < v.rows(); ++i) {
    Index j = 0;
    v.row(i).cwiseAbs().maxCoeff(&j);
    h(i, j) = std::round(v(i, j) * 10.0) / 10.0;
    if (partial)
      for (Index k = 0; k < v.cols(); ++k)
        if (k != j && std::abs(v(i, k)) >= 0.25) h(i, k) = std::nan("");
  }
  return h;
}

}  // namespace

TEST(Rotation, VarimaxMatchesRStatsVarimax) {
  for (int k : {3, 4}) {
    const Matrix& a = harman(k);
    for (bool normalize : {true, false}) {
      // Reference: R's base stats::varimax, with eps far below its default 1e-5 for a tight comparison.
      const auto ref = run_r(R"(
        v <- varimax(A, normalize = N[1, 1] > 0, eps = 1e-14)
        emit("L", unclass(v$loadings))
        emit("T", v$rotmat))", {{"A", a}, {"N", scalar(normalize ? 1 : 0)}});
      const Presented r = present(ref.at("L"), Matrix::Identity(k, k));
      auto o = opts(RotationMethod::varimax, normalize);
      o.tolerance = 1e-10;
      const auto gpa = rotate(a, o);
      o.method = RotationMethod::varimax_kaiser;
      const auto kaiser = rotate(a, o);
      EXPECT_TRUE(gpa.convergence.converged);
      EXPECT_TRUE(kaiser.convergence.converged);
      EXPECT_LT(max_diff(gpa.pattern, r.pattern), 1e-6) << "k=" << k << " normalize=" << normalize;
      EXPECT_LT(max_diff(kaiser.pattern, r.pattern), 1e-6) << "k=" << k << " normalize=" << normalize;
      // The engine and Kaiser's pairwise algorithm agree with each other closely.
      EXPECT_LT(max_diff(gpa.pattern, kaiser.pattern), 1e-7);  // both run to a tight tolerance here
      // Same convention for the rotation matrix as R (loadings = A %*% rotmat) for orthogonal rotations.
      EXPECT_LT(max_diff(a * gpa.rotation, gpa.pattern), 1e-12);
    }
  }
}

TEST(Rotation, PromaxMatchesRStatsPromax) {
  const Matrix& a = harman(4);
  for (double power : {4.0, 3.0}) {
    // Reference: R's base stats::promax applied to a tightly converged stats::varimax solution (promax
    // calls varimax itself with its default eps = 1e-5; starting from the optimum it stays there).
    // Factor correlations as R's factanal computes them from the rotation matrix:
    // solve(rotmat) %*% t(solve(rotmat)).
    const auto ref = run_r(R"(
      v <- varimax(A, eps = 1e-14)
      p <- promax(unclass(v$loadings), m = M[1, 1])
      U <- v$rotmat %*% p$rotmat
      Ui <- solve(U)
      emit("L", unclass(p$loadings))
      emit("Phi", Ui %*% t(Ui)))", {{"A", a}, {"M", scalar(power)}});
    const Presented r = present(ref.at("L"), ref.at("Phi"));
    auto o = opts(RotationMethod::promax);
    o.power = power;
    const auto ours = rotate(a, o);
    EXPECT_TRUE(ours.oblique);
    EXPECT_LT(max_diff(ours.pattern, r.pattern), 1e-6) << "power " << power;
    EXPECT_LT(max_diff(ours.factor_correlations, r.phi), 1e-6) << "power " << power;
  }
}

TEST(Rotation, GpaCriteriaMatchStatsmodelsRotateFactors) {
  const Matrix& a = harman(4);
  const Index p = a.rows(), m = a.cols();
  const Matrix full_target = make_target(a, false);
  Matrix partial = make_target(a, true);
  Matrix partial_h = partial, partial_w = Matrix::Ones(p, m);
  for (Index j = 0; j < m; ++j)
    for (Index i = 0; i < p; ++i)
      if (std::isnan(partial(i, j))) partial_h(i, j) = 0.0, partial_w(i, j) = 0.0;
  ASSERT_GT((partial_w.array() == 0.0).count(), 0);  // the partial target really leaves entries free

  // Reference: statsmodels.multivariate.factor_rotation.rotate_factors (gradient projection, no row
  // normalisation, so Lode runs with normalize = false), with a far tighter tol than its default.
  // Its 'equamax' uses orthomax gamma = 1/items, not the usual factors/2 (Saunders 1962), and its
  // 'orthomax' refuses gamma > 1, so equamax is compared with its Crawford-Ferguson orthogonal at
  // kappa = factors/(2 items), the same criterion up to a constant for orthogonal rotations
  // (Crawford & Ferguson 1970). Its tol is the projected-gradient norm; near 1e-7 its line search
  // stalls for oblique target rotation, which therefore runs at 3e-7. Oblique results give Phi = T'T.
  const auto ref = run_python(R"(
from statsmodels.multivariate.factor_rotation import rotate_factors
kw = dict(tol=1e-7, max_tries=20000)
k = A.shape[1]
def out(name, L, T, oblique):
    emit(name + '_L', L)
    emit(name + '_Phi', T.T @ T if oblique else np.eye(k))
out('oblimin', *rotate_factors(A, 'oblimin', -0.5, 'oblique', **kw), True)
out('quartimin', *rotate_factors(A, 'quartimin', **kw), True)
out('quartimax', *rotate_factors(A, 'quartimax', **kw), False)
out('varimax', *rotate_factors(A, 'varimax', **kw), False)
out('equamax', *rotate_factors(A, 'CF', k / (2.0 * A.shape[0]), 'orthogonal', **kw), False)
out('cf_obl', *rotate_factors(A, 'CF', 0.2, 'oblique', **kw), True)
out('cf_orth', *rotate_factors(A, 'CF', 0.2, 'orthogonal', **kw), False)
out('target_orth', *rotate_factors(A, 'target', H, 'orthogonal', **kw), False)
out('target_obl', *rotate_factors(A, 'target', H, 'oblique', tol=3e-7, max_tries=20000), True)
out('partial', *rotate_factors(A, 'partial_target', PH, PW, **kw), False)
)", {{"A", a}, {"H", full_target}, {"PH", partial_h}, {"PW", partial_w}});

  struct Case {
    const char* ref;
    RotationMethod method;
    double gamma, kappa;
    bool target, partial;
  };
  const Case cases[] = {
      {"oblimin", RotationMethod::oblimin, -0.5, 0, false, false},
      {"quartimin", RotationMethod::quartimin, 0, 0, false, false},
      {"quartimax", RotationMethod::quartimax, 0, 0, false, false},
      {"varimax", RotationMethod::varimax, 0, 0, false, false},
      {"equamax", RotationMethod::equamax, 0, 0, false, false},
      {"cf_obl", RotationMethod::crawford_ferguson_oblique, 0, 0.2, false, false},
      {"cf_orth", RotationMethod::crawford_ferguson, 0, 0.2, false, false},
      {"target_orth", RotationMethod::target_orthogonal, 0, 0, true, false},
      {"target_obl", RotationMethod::target_oblique, 0, 0, true, false},
      {"partial", RotationMethod::target_orthogonal, 0, 0, true, true},
  };
  for (const auto& c : cases) {
    auto o = opts(c.method, false);
    o.gamma = c.gamma;
    o.kappa = c.kappa;
    if (c.target) o.target = c.partial ? partial : full_target;
    const auto ours = rotate(a, o);
    EXPECT_TRUE(ours.convergence.converged) << c.ref;
    const Matrix& rl = ref.at(std::string(c.ref) + "_L");
    const Matrix& rphi = ref.at(std::string(c.ref) + "_Phi");
    if (c.target) {
      // Target rotations keep the target's order and signs: compare directly.
      EXPECT_LT(max_diff(ours.pattern, rl), 1e-4) << c.ref;
      EXPECT_LT(max_diff(ours.factor_correlations, rphi), 1e-4) << c.ref;
    } else {
      const Presented r = present(rl, rphi);
      EXPECT_LT(max_diff(ours.pattern, r.pattern), 1e-4) << c.ref;
      EXPECT_LT(max_diff(ours.factor_correlations, r.phi), 1e-4) << c.ref;
    }
  }
}

// Properties of every method on both data sets, normalised and not.
TEST(Rotation, PropertiesHoldForEveryMethod) {
  for (int k : {3, 4}) {
    const Matrix& a = harman(k);
    const Matrix common = a * a.transpose();
    const Vector communality = a.rowwise().squaredNorm();
    for (const std::string& name : rotation_names()) {
      for (bool normalize : {true, false}) {
        auto o = opts(rotation_from_name(name), normalize);
        if (name.rfind("target", 0) == 0) o.target = make_target(a, true);
        if (name == "crawford_ferguson" || name == "crawford_ferguson_oblique") o.kappa = 0.3;
        if (name == "oblimin") o.gamma = -0.3;
        const auto r = rotate(a, o);
        const std::string what = name + (normalize ? " normalised" : " raw") + " k=" + std::to_string(k);
        EXPECT_TRUE(r.convergence.converged) << what;
        EXPECT_EQ(r.oblique, is_oblique(o.method)) << what;
        // The common part A A' = P Phi P' is unchanged (common practice: a rotation only re-expresses it).
        EXPECT_LT(max_diff(r.pattern * r.factor_correlations * r.pattern.transpose(), common), 1e-10) << what;
        // Structure = pattern * Phi; Phi has a unit diagonal and is symmetric.
        EXPECT_LT(max_diff(r.structure, r.pattern * r.factor_correlations), 1e-12) << what;
        EXPECT_LT((r.factor_correlations.diagonal().array() - 1.0).abs().maxCoeff(), 1e-10) << what;
        EXPECT_LT(max_diff(r.factor_correlations, r.factor_correlations.transpose()), 1e-12) << what;
        // The rotation matrix reproduces the pattern under the stated convention.
        const Matrix back = r.oblique ? Matrix(a * r.rotation.inverse().transpose()) : Matrix(a * r.rotation);
        EXPECT_LT(max_diff(back, r.pattern), 1e-10) << what;
        if (!r.oblique) {
          // Orthogonal rotations keep each item's communality.
          EXPECT_LT((r.pattern.rowwise().squaredNorm() - communality).cwiseAbs().maxCoeff(), 1e-10) << what;
          EXPECT_LT(max_diff(r.rotation.transpose() * r.rotation, Matrix::Identity(k, k)), 1e-10) << what;
        }
        // The projected gradient vanishes at the reported solution (Jennrich 2001, 2002).
        if (o.method != RotationMethod::promax && o.method != RotationMethod::none) {
          EXPECT_LT(projected_gradient(a, r.rotation, o).norm(), 1.001 * o.tolerance) << what;
        }
        // Presentation: variance accounted for non-increasing, each factor's loadings sum positive
        // (target rotations keep the target's order instead).
        EXPECT_LT(max_diff(r.ss_pattern, r.pattern.cwiseProduct(r.pattern).colwise().sum().transpose()), 1e-12);
        EXPECT_LT(max_diff(r.ss_structure, r.structure.cwiseProduct(r.structure).colwise().sum().transpose()),
                  1e-12);
        if (name.rfind("target", 0) != 0) {
          for (Index j = 0; j < k; ++j) {
            EXPECT_GT(r.pattern.col(j).sum(), 0.0) << what;
            if (j > 0) {
              EXPECT_GE(r.ss_pattern(j - 1), r.ss_pattern(j)) << what;
            }
          }
        }
        if (!r.oblique) {
          EXPECT_LT(max_diff(r.ss_pattern, r.ss_structure), 1e-12) << what;
        }
      }
    }
  }
}

// The criterion at the reported solution is no worse than at 50 random orthogonal rotations of the
// loadings, nor than the best of 50 optimised random starts.
TEST(Rotation, SolutionNoWorseThanFiftyRandomStarts) {
  const Matrix& a = harman(4);
  for (RotationMethod m : {RotationMethod::geomin, RotationMethod::geomin_orthogonal, RotationMethod::oblimin,
                           RotationMethod::quartimin, RotationMethod::varimax, RotationMethod::quartimax}) {
    auto o = opts(m);
    const auto r = rotate(a, o);
    Vector w = a.rowwise().norm().cwiseInverse();
    const Matrix an = w.asDiagonal() * a;
    const Matrix rn = w.asDiagonal() * r.pattern;
    // The reported criterion is the criterion of the (normalised) reported pattern.
    EXPECT_NEAR(rotation_criterion(rn, o).value, r.criterion, 1e-10) << rotation_name(m);
    for (std::uint64_t i = 0; i < 50; ++i) {
      auto rng = random_stream(99, i);
      const Matrix t = random_orthogonal(4, rng);
      EXPECT_LE(r.criterion, rotation_criterion(an * t, o).value + 1e-12) << rotation_name(m);
    }
    auto many = o;
    many.random_starts = 50;
    many.threads = 2;
    const auto best = rotate(a, many);
    EXPECT_EQ(best.starts.starts, 51);
    ASSERT_EQ(best.starts.criteria.size(), 51u);
    for (double c : best.starts.criteria) EXPECT_LE(best.criterion, c + 1e-12);
    EXPECT_LE(r.criterion, best.criterion + 1e-6 * std::max(1.0, std::abs(best.criterion))) << rotation_name(m);
    EXPECT_GE(best.starts.reached_best, 1);
    EXPECT_LE(best.starts.reached_best, best.starts.converged);
    EXPECT_GE(best.starts.distinct_solutions, 1);
  }
}

TEST(Rotation, RandomStartsAreDeterministicAndThreadIndependent) {
  const Matrix& a = harman(4);
  auto o = opts(RotationMethod::geomin);
  o.epsilon = 0.001;  // a small epsilon gives geomin more local minima (Browne 2001)
  o.random_starts = 30;
  o.seed = 7;
  o.threads = 1;
  const auto one = rotate(a, o);
  o.threads = 2;
  const auto two = rotate(a, o);
  EXPECT_EQ(one.starts.criteria, two.starts.criteria);
  EXPECT_EQ(one.pattern, two.pattern);
  EXPECT_EQ(one.starts.best_start, two.starts.best_start);
  EXPECT_EQ(one.starts.distinct_solutions, two.starts.distinct_solutions);
  // With epsilon = 0.001 geomin has several local minima on these loadings (Browne 2001 warns of
  // them for small epsilon): some starts end clearly above the best, and those are reported as
  // distinct solutions and not counted as reaching the best.
  int above = 0;
  for (double c : one.starts.criteria) above += c > one.criterion + 1e-4 ? 1 : 0;
  EXPECT_GE(above, 1);
  EXPECT_GE(one.starts.distinct_solutions, 2);
  EXPECT_LE(one.starts.reached_best + above, one.starts.converged);
  EXPECT_GE(one.starts.reached_best, 1);
  o.seed = 8;
  EXPECT_NE(rotate(a, o).starts.criteria, one.starts.criteria);
}

// Progress reports count the starts, never change the result, and a false return cancels.
TEST(Rotation, ProgressCountsStartsAndCancels) {
  const Matrix& a = harman(3);
  auto o = opts(RotationMethod::geomin);
  o.random_starts = 5;
  o.seed = 3;
  EXPECT_EQ(rotation_start_count(o), 6);
  EXPECT_EQ(rotation_start_count(opts(RotationMethod::geomin)), 11);  // the method's default: 10 random starts
  EXPECT_EQ(rotation_start_count(opts(RotationMethod::varimax)), 1);
  EXPECT_EQ(rotation_start_count(opts(RotationMethod::promax)), 1);
  const auto plain = rotate(a, o);
  std::vector<std::pair<std::int64_t, std::int64_t>> reports;
  o.progress = [&](std::int64_t done, std::int64_t total) {
    reports.emplace_back(done, total);
    return true;
  };
  const auto watched = rotate(a, o);
  EXPECT_EQ(watched.pattern, plain.pattern);
  EXPECT_EQ(watched.starts.criteria, plain.starts.criteria);
  ASSERT_GE(reports.size(), 2u);
  EXPECT_EQ(reports.front(), std::make_pair(std::int64_t{0}, std::int64_t{6}));
  EXPECT_EQ(reports.back(), std::make_pair(std::int64_t{6}, std::int64_t{6}));
  for (const auto& [done, total] : reports) EXPECT_TRUE(done >= 0 && done <= total && total == 6);
  o.progress = [](std::int64_t, std::int64_t) { return false; };
  try {
    rotate(a, o);
    ADD_FAILURE() << "a cancelled rotation returned";
  } catch (const Error& e) {
    EXPECT_EQ(e.code(), ErrorCode::cancelled);
  }
}

// Each criterion's analytic gradient agrees with central finite differences of its value.
TEST(Rotation, CriterionGradientsMatchFiniteDifferences) {
  const Matrix& a = harman(3);
  auto rng = random_stream(3, 0);
  const Matrix l = a * random_orthogonal(3, rng);
  for (const std::string& name : rotation_names()) {
    auto o = opts(rotation_from_name(name));
    if (o.method == RotationMethod::none) continue;
    o.kappa = 0.35;
    o.gamma = 0.4;
    o.target = make_target(a, true);
    const auto cv = rotation_criterion(l, o);
    const double h = 1e-6;
    double worst = 0.0;
    for (Index j = 0; j < l.cols(); ++j)
      for (Index i = 0; i < l.rows(); ++i) {
        Matrix lp = l, lm = l;
        lp(i, j) += h;
        lm(i, j) -= h;
        const double fd = (rotation_criterion(lp, o).value - rotation_criterion(lm, o).value) / (2 * h);
        worst = std::max(worst, std::abs(fd - cv.gradient(i, j)));
      }
    EXPECT_LT(worst, 1e-6) << name;
  }
}

TEST(Rotation, OrderAndReflectPermutesEverythingConsistently) {
  const Matrix& a = harman(4);
  auto r = rotate(a, opts(RotationMethod::quartimin));
  // Scramble the presented solution: reverse the factors and flip two of them.
  FactorOrder scramble;
  scramble.order = {3, 2, 1, 0};
  scramble.signs = Vector::Ones(4);
  scramble.signs(0) = -1;
  scramble.signs(2) = -1;
  RotationResult s = r;
  s.pattern = apply_to_columns(r.pattern, scramble);
  s.structure = apply_to_columns(r.structure, scramble);
  s.rotation = apply_to_columns(r.rotation, scramble);
  s.factor_correlations = apply_to_correlations(r.factor_correlations, scramble);
  s.ss_pattern = r.ss_pattern.reverse();
  s.ss_structure = r.ss_structure.reverse();
  // The scrambled solution is still a valid one under the convention P = A inv(T)', Phi = T'T.
  EXPECT_LT(max_diff(a * s.rotation.inverse().transpose(), s.pattern), 1e-10);
  EXPECT_LT(max_diff(s.rotation.transpose() * s.rotation, s.factor_correlations), 1e-10);
  const FactorOrder f = order_and_reflect(s);
  EXPECT_EQ(f.order, (std::vector<Index>{3, 2, 1, 0}));
  EXPECT_LT(max_diff(s.pattern, r.pattern), 1e-14);
  EXPECT_LT(max_diff(s.structure, r.structure), 1e-14);
  EXPECT_LT(max_diff(s.rotation, r.rotation), 1e-14);
  EXPECT_LT(max_diff(s.factor_correlations, r.factor_correlations), 1e-14);
  EXPECT_LT(max_diff(s.ss_pattern, r.ss_pattern), 1e-14);
  EXPECT_LT(max_diff(s.ss_structure, r.ss_structure), 1e-14);
}

TEST(Rotation, NamesRoundTripAndUnknownNamesAreRefused) {
  for (const std::string& name : rotation_names())
    EXPECT_STREQ(rotation_name(rotation_from_name(name)), name.c_str());
  EXPECT_EQ(rotation_from_name("Geomin-Orthogonal"), RotationMethod::geomin_orthogonal);
  EXPECT_EQ(rotation_from_name(" VARIMAX "), RotationMethod::varimax);
  EXPECT_EQ(rotation_from_name("cf"), RotationMethod::crawford_ferguson);
  EXPECT_EQ(rotation_from_name("target"), RotationMethod::target_orthogonal);
  try {
    rotation_from_name("varimix");
    FAIL() << "no error";
  } catch (const Error& e) {
    EXPECT_EQ(e.code(), ErrorCode::invalid_argument);
    EXPECT_NE(std::string(e.what()).find("unknown rotation 'varimix'"), std::string::npos) << e.what();
    EXPECT_NE(std::string(e.what()).find("quartimin"), std::string::npos) << e.what();
  }
}

namespace {

void expect_error(const Matrix& a, const RotationOptions& o, const std::string& fragment) {
  try {
    rotate(a, o);
    ADD_FAILURE() << "no error, expected: " << fragment;
  } catch (const Error& e) {
    EXPECT_EQ(e.code(), ErrorCode::invalid_argument);
    EXPECT_NE(std::string(e.what()).find(fragment), std::string::npos) << e.what();
  }
}

}  // namespace

TEST(Rotation, BadInputGetsClearErrors) {
  const Matrix a = harman(3);
  Matrix bad = a;
  bad(4, 1) = std::numeric_limits<double>::quiet_NaN();
  auto o = opts(RotationMethod::varimax);
  expect_error(bad, o, "the loading of column 5 on factor 2 is not a finite number");
  o.item_names = {"a", "b", "c", "d", "speed"};
  bad(4, 1) = std::numeric_limits<double>::infinity();
  expect_error(bad, o, "the loading of item 'speed' on factor 2 is not a finite number (inf)");
  expect_error(a.leftCols(1), opts(RotationMethod::varimax),
               "rotation needs at least two factors; the loadings have 1 factor column");
  expect_error(a.topRows(2), opts(RotationMethod::varimax), "at least as many items as factors");
  auto t = opts(RotationMethod::target_oblique);
  expect_error(a, t, "target rotation needs a target matrix");
  t.target = Matrix::Zero(a.rows() - 1, 3);
  expect_error(a, t, "the target has 23 rows and 3 columns but the loadings have 24 items and 3 factors");
  t.target = Matrix::Constant(a.rows(), 3, std::nan(""));
  expect_error(a, t, "the target specifies no entries");
  auto cf = opts(RotationMethod::crawford_ferguson);
  cf.kappa = 1.5;
  expect_error(a, cf, "kappa must lie between 0 and 1 (got 1.5)");
  auto g = opts(RotationMethod::geomin);
  g.epsilon = 0;
  expect_error(a, g, "geomin's epsilon must be positive");
  auto p = opts(RotationMethod::promax);
  p.power = 0.5;
  expect_error(a, p, "promax power must be at least 1");
  auto it = opts(RotationMethod::varimax);
  it.max_iterations = 0;
  expect_error(a, it, "max_iterations must be at least 1");
  auto st = opts(RotationMethod::oblimin);
  st.start = Matrix::Identity(2, 2);
  expect_error(a, st, "the starting rotation is 2 x 2 but there are 3 factors; it must be 3 x 3");
  st.start = Matrix::Ones(3, 3);
  expect_error(a, st, "the starting rotation is singular; it must be invertible");
  st.start = Matrix::Identity(3, 3);
  st.start(1, 2) = std::nan("");
  expect_error(a, st, "the starting rotation contains a missing or infinite value");
}

TEST(Rotation, AStartingRotationNearTheSolutionReachesTheSameSolution) {
  // On the Harman74 loadings (R's datasets via factanal): starting from a solution's own rotation
  // matrix, or from it disturbed (and, for orthogonal methods, no longer orthogonal), reaches that
  // solution again, which is how a bootstrap replicate uses the full-sample rotation.
  const Matrix& a = harman(3);
  auto rng = random_stream(17, 0);
  for (auto m : {RotationMethod::oblimin, RotationMethod::quartimin, RotationMethod::geomin, RotationMethod::varimax,
                 RotationMethod::quartimax}) {
    SCOPED_TRACE(rotation_name(m));
    auto o = opts(m);
    o.random_starts = 0;
    const RotationResult solution = rotate(a, o);
    ASSERT_TRUE(solution.convergence.converged);
    o.start = solution.rotation;
    const RotationResult again = rotate(a, o);
    EXPECT_LT(max_diff(again.pattern, solution.pattern), 1e-5);
    EXPECT_LE(again.convergence.iterations, 3);
    o.start = solution.rotation + 0.05 * standard_normal_matrix(3, 3, rng);
    const RotationResult near = rotate(a, o);
    ASSERT_TRUE(near.convergence.converged);
    EXPECT_LT(max_diff(near.pattern, solution.pattern), 1e-5);
    EXPECT_LT(max_diff(near.factor_correlations, solution.factor_correlations), 1e-5);
  }
}

TEST(Rotation, NonConvergenceIsReported) {
  auto o = opts(RotationMethod::geomin);
  o.max_iterations = 3;
  o.random_starts = 2;
  const auto r = rotate(harman(4), o);
  EXPECT_FALSE(r.convergence.converged);
  EXPECT_EQ(r.convergence.iterations, 3);
  EXPECT_EQ(r.convergence.max_iterations, 3);
  EXPECT_GT(r.convergence.final_change, r.convergence.tolerance);
  EXPECT_EQ(r.starts.converged, 0);
  EXPECT_EQ(r.starts.reached_best, 0);
}
