// Factor rotation: the gradient projection engine, Kaiser's pairwise varimax, promax, Kaiser
// normalisation, random starts and the presentation convention. Criteria live in rotation_criteria.cpp.
#include "lode/rotation.hpp"

#include "scaling.hpp"

#include "lode/correlation.hpp"
#include "lode/parallel.hpp"
#include "lode/random.hpp"
#include "rotation_internal.hpp"

#include <fmt/format.h>
#include <fmt/ranges.h>

#include <algorithm>
#include <array>
#include <cctype>
#include <cmath>
#include <limits>
#include <numeric>

namespace lode {

namespace {

struct NameEntry {
  RotationMethod method;
  const char* name;
};

constexpr std::array<NameEntry, 14> kNames{{
    {RotationMethod::none, "none"},
    {RotationMethod::varimax, "varimax"},
    {RotationMethod::varimax_kaiser, "varimax_kaiser"},
    {RotationMethod::quartimax, "quartimax"},
    {RotationMethod::equamax, "equamax"},
    {RotationMethod::crawford_ferguson, "crawford_ferguson"},
    {RotationMethod::geomin_orthogonal, "geomin_orthogonal"},
    {RotationMethod::target_orthogonal, "target_orthogonal"},
    {RotationMethod::oblimin, "oblimin"},
    {RotationMethod::quartimin, "quartimin"},
    {RotationMethod::crawford_ferguson_oblique, "crawford_ferguson_oblique"},
    {RotationMethod::geomin, "geomin"},
    {RotationMethod::target_oblique, "target_oblique"},
    {RotationMethod::promax, "promax"},
}};

bool uses_gpa(RotationMethod m) {
  return m != RotationMethod::none && m != RotationMethod::varimax_kaiser && m != RotationMethod::promax;
}

bool is_target(RotationMethod m) {
  return m == RotationMethod::target_orthogonal || m == RotationMethod::target_oblique;
}

int effective_random_starts(const RotationOptions& o) {
  if (!uses_gpa(o.method)) return 0;
  if (o.random_starts >= 0) return o.random_starts;
  switch (o.method) {
    case RotationMethod::geomin:
    case RotationMethod::geomin_orthogonal:
    case RotationMethod::oblimin:
    case RotationMethod::quartimin:
    case RotationMethod::crawford_ferguson_oblique:
      return 10;
    default:
      return 0;
  }
}

}  // namespace

int rotation_start_count(const RotationOptions& options) noexcept {
  return uses_gpa(options.method) ? 1 + std::max(0, effective_random_starts(options)) : 1;
}

namespace {

void validate(const Matrix& a, const RotationOptions& o) {
  if (a.cols() < 2)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("rotation needs at least two factors; the loadings have {} factor column{}", a.cols(),
                            a.cols() == 1 ? "" : "s"));
  if (a.rows() < a.cols())
    throw Error(ErrorCode::invalid_argument,
                fmt::format("rotation needs at least as many items as factors; the loadings have {} item rows "
                            "and {} factors",
                            a.rows(), a.cols()));
  for (Index j = 0; j < a.cols(); ++j)
    for (Index i = 0; i < a.rows(); ++i)
      if (!std::isfinite(a(i, j)))
        throw Error(ErrorCode::invalid_argument,
                    fmt::format("the loading of {} on factor {} is not a finite number ({})",
                                item_label(o.item_names, i), j + 1, a(i, j)));
  if (o.max_iterations < 1)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("max_iterations must be at least 1 (got {})", o.max_iterations));
  if (!(o.tolerance > 0.0) || !std::isfinite(o.tolerance))
    throw Error(ErrorCode::invalid_argument, fmt::format("tolerance must be positive (got {})", o.tolerance));
  if (o.random_starts < -1)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("random_starts must be 0 or more, or -1 for the method's default (got {})",
                            o.random_starts));
  if (!(o.best_tolerance >= 0.0) || !(o.distinct_tolerance >= 0.0))
    throw Error(ErrorCode::invalid_argument, "best_tolerance and distinct_tolerance must not be negative");
  if (o.start.size() != 0) {
    if (o.start.rows() != a.cols() || o.start.cols() != a.cols())
      throw Error(ErrorCode::invalid_argument,
                  fmt::format("the starting rotation is {} x {} but there are {} factors; it must be {} x {}",
                              o.start.rows(), o.start.cols(), a.cols(), a.cols(), a.cols()));
    if (!o.start.allFinite())
      throw Error(ErrorCode::invalid_argument, "the starting rotation contains a missing or infinite value");
    if (Eigen::FullPivLU<Matrix>(o.start).rank() < a.cols())
      throw Error(ErrorCode::invalid_argument, "the starting rotation is singular; it must be invertible");
  }
  switch (o.method) {
    case RotationMethod::oblimin:
      if (!std::isfinite(o.gamma))
        throw Error(ErrorCode::invalid_argument, fmt::format("oblimin's gamma must be finite (got {})", o.gamma));
      break;
    case RotationMethod::crawford_ferguson:
    case RotationMethod::crawford_ferguson_oblique:
      if (!(o.kappa >= 0.0 && o.kappa <= 1.0))
        throw Error(ErrorCode::invalid_argument,
                    fmt::format("Crawford-Ferguson kappa must lie between 0 and 1 (got {})", o.kappa));
      break;
    case RotationMethod::geomin:
    case RotationMethod::geomin_orthogonal:
      if (!(o.epsilon > 0.0) || !std::isfinite(o.epsilon))
        throw Error(ErrorCode::invalid_argument, fmt::format("geomin's epsilon must be positive (got {})", o.epsilon));
      break;
    case RotationMethod::promax:
      if (!(o.power >= 1.0) || !std::isfinite(o.power))
        throw Error(ErrorCode::invalid_argument, fmt::format("promax power must be at least 1 (got {})", o.power));
      break;
    case RotationMethod::target_orthogonal:
    case RotationMethod::target_oblique: {
      if (o.target.size() == 0)
        throw Error(ErrorCode::invalid_argument, "target rotation needs a target matrix (items x factors)");
      if (o.target.rows() != a.rows() || o.target.cols() != a.cols())
        throw Error(ErrorCode::invalid_argument,
                    fmt::format("the target has {} rows and {} columns but the loadings have {} items and {} "
                                "factors; they must match",
                                o.target.rows(), o.target.cols(), a.rows(), a.cols()));
      Index specified = 0;
      for (Index j = 0; j < a.cols(); ++j)
        for (Index i = 0; i < a.rows(); ++i) {
          const double h = o.target(i, j);
          if (std::isinf(h))
            throw Error(ErrorCode::invalid_argument,
                        fmt::format("the target entry for {} on factor {} is infinite; use a number, or NaN to "
                                    "leave it unspecified",
                                    item_label(o.item_names, i), j + 1));
          if (!std::isnan(h)) ++specified;
        }
      if (specified == 0)
        throw Error(ErrorCode::invalid_argument, "the target specifies no entries (all are NaN)");
      break;
    }
    default:
      break;
  }
}

// Kaiser (1958) row weights: 1 / sqrt(communality); rows with zero communality keep weight 1.
Vector row_weights(const Matrix& a, bool normalize) {
  Vector w = Vector::Ones(a.rows());
  if (!normalize) return w;
  for (Index i = 0; i < a.rows(); ++i) {
    const double h = a.row(i).stableNorm();
    if (h > 0.0 && std::isfinite(1.0 / h)) w(i) = 1.0 / h;
  }
  return w;
}

Matrix rotated(const Matrix& a, const Matrix& t, bool oblique) {
  if (!oblique) return a * t;
  return a * t.inverse().transpose();
}

struct StartResult {
  Matrix t;
  double value = 0.0;
  Convergence convergence;
};

// Gradient projection for orthogonal rotation (Jennrich 2001) and oblique rotation (Jennrich 2002),
// with the step-size search of Bernaards & Jennrich (2005): halve the step until the criterion falls by
// at least half the squared gradient norm times the step (at most 10 halvings). Each iteration's first
// trial step is the Barzilai-Borwein step (below) rather than Bernaards & Jennrich's doubling of the
// last one: the same iteration and stopping rule, about a tenth of the iterations. Stops when the
// Frobenius norm of the projected gradient is below the tolerance.
StartResult gpa(const Matrix& a, Matrix t, const RotationOptions& o, bool oblique) {
  auto gradient_wrt_t = [&](const Matrix& tt, const Matrix& l, const Matrix& gq) -> Matrix {
    if (!oblique) return a.transpose() * gq;
    return -(l.transpose() * gq * tt.inverse()).transpose();
  };
  auto project = [&](const Matrix& tt, const Matrix& g) -> Matrix {
    if (!oblique) {
      const Matrix m = tt.transpose() * g;
      return g - tt * (0.5 * (m + m.transpose()));
    }
    const Vector d = tt.cwiseProduct(g).colwise().sum().transpose();
    return g - tt * d.asDiagonal();
  };

  Matrix l = rotated(a, t, oblique);
  CriterionValue cv = detail::evaluate_criterion(l, o);
  Matrix g = gradient_wrt_t(t, l, cv.gradient);
  double alpha = 1.0;
  StartResult r;
  r.convergence.max_iterations = o.max_iterations;
  r.convergence.tolerance = o.tolerance;
  int it = 0;
  double s = 0.0;
  Matrix previous_t, previous_gp;
  for (;;) {
    const Matrix gp = project(t, g);
    s = gp.norm();
    if (s < o.tolerance) {
      r.convergence.converged = true;
      break;
    }
    if (it >= o.max_iterations) break;
    // The first trial step: Barzilai & Borwein's (1988) <dT, dT> / <dT, dG> from the last step's change
    // of T and of the projected gradient (as on the Stiefel manifold by Wen & Yin 2013), which follows
    // the curvature; where that is not positive, or at the first iteration, twice the last step.
    double bb = 0.0;
    if (it > 0) {
      const Matrix dt = t - previous_t, dg = gp - previous_gp;
      const double sy = dt.cwiseProduct(dg).sum();
      if (sy > 0.0) bb = std::min(dt.squaredNorm() / sy, 1e6);
    }
    previous_t = t;
    previous_gp = gp;
    alpha = bb > 0.0 ? bb : 2.0 * alpha;
    Matrix tt;
    Matrix lt;
    CriterionValue ct;
    for (int half = 0; half <= 10; ++half) {
      const Matrix x = t - alpha * gp;
      if (!oblique) {
        Eigen::JacobiSVD<Matrix> svd(x, Eigen::ComputeFullU | Eigen::ComputeFullV);
        tt = svd.matrixU() * svd.matrixV().transpose();
      } else {
        const Vector norms = x.colwise().norm().transpose();
        tt = x * norms.cwiseInverse().asDiagonal();
      }
      lt = rotated(a, tt, oblique);
      ct = detail::evaluate_criterion(lt, o);
      if (ct.value < cv.value - 0.5 * s * s * alpha) break;
      // Near the optimum the decrease falls to the level of rounding noise in the criterion while
      // the gradient is still accurate: there also accept a step that does not raise the criterion
      // beyond that noise and shrinks the projected gradient.
      const double noise = 64.0 * std::numeric_limits<double>::epsilon() * (1.0 + std::abs(cv.value));
      if (ct.value <= cv.value + noise &&
          project(tt, gradient_wrt_t(tt, lt, ct.gradient)).norm() < s)
        break;
      alpha *= 0.5;
    }
    // A step that degenerates (an oblique T near singular) ends the start, reported unconverged.
    if (!std::isfinite(ct.value) || !tt.allFinite()) break;
    t = std::move(tt);
    l = std::move(lt);
    cv = std::move(ct);
    g = gradient_wrt_t(t, l, cv.gradient);
    ++it;
  }
  r.convergence.iterations = it;
  r.convergence.final_change = s;
  r.t = std::move(t);
  r.value = cv.value;
  return r;
}

// Varimax by Kaiser's (1958) pairwise planar rotations: each sweep rotates every pair of factors by
// the angle phi with tan(4 phi) = (D - 2AB/p) / (C - (A^2 - B^2)/p), where u = x^2 - y^2, v = 2xy,
// A = sum u, B = sum v, C = sum(u^2 - v^2), D = 2 sum(uv) over items. Stops when no angle in a sweep
// exceeds the tolerance (radians).
StartResult kaiser_varimax(const Matrix& a, const RotationOptions& o) {
  const Index m = a.cols();
  const double p = static_cast<double>(a.rows());
  Matrix l = a;
  Matrix t = Matrix::Identity(m, m);
  StartResult r;
  r.convergence.max_iterations = o.max_iterations;
  r.convergence.tolerance = o.tolerance;
  int sweep = 0;
  double largest = 0.0;
  while (sweep < o.max_iterations) {
    largest = 0.0;
    for (Index j = 0; j < m - 1; ++j)
      for (Index k = j + 1; k < m; ++k) {
        const Eigen::ArrayXd x = l.col(j).array();
        const Eigen::ArrayXd y = l.col(k).array();
        const Eigen::ArrayXd u = x * x - y * y;
        const Eigen::ArrayXd v = 2.0 * x * y;
        const double A = u.sum(), B = v.sum();
        const double C = (u * u - v * v).sum(), D = 2.0 * (u * v).sum();
        const double phi = 0.25 * std::atan2(D - 2.0 * A * B / p, C - (A * A - B * B) / p);
        largest = std::max(largest, std::abs(phi));
        const double c = std::cos(phi), s = std::sin(phi);
        const Vector lj = l.col(j), lk = l.col(k);
        l.col(j) = c * lj + s * lk;
        l.col(k) = -s * lj + c * lk;
        const Vector tj = t.col(j), tk = t.col(k);
        t.col(j) = c * tj + s * tk;
        t.col(k) = -s * tj + c * tk;
      }
    ++sweep;
    if (largest < o.tolerance) {
      r.convergence.converged = true;
      break;
    }
  }
  r.convergence.iterations = sweep;
  r.convergence.final_change = largest;
  r.t = t;
  RotationOptions vo = o;
  vo.method = RotationMethod::varimax;
  r.value = detail::evaluate_criterion(l, vo).value;
  return r;
}

void fill_derived(RotationResult& r) {
  r.structure = r.pattern * r.factor_correlations;
  r.ss_pattern = r.pattern.cwiseProduct(r.pattern).colwise().sum().transpose();
  r.ss_structure = r.structure.cwiseProduct(r.structure).colwise().sum().transpose();
}

}  // namespace

bool is_oblique(RotationMethod method) noexcept {
  switch (method) {
    case RotationMethod::oblimin:
    case RotationMethod::quartimin:
    case RotationMethod::crawford_ferguson_oblique:
    case RotationMethod::geomin:
    case RotationMethod::target_oblique:
    case RotationMethod::promax:
      return true;
    default:
      return false;
  }
}

const char* rotation_name(RotationMethod method) noexcept {
  for (const auto& e : kNames)
    if (e.method == method) return e.name;
  return "unknown";
}

std::vector<std::string> rotation_names() {
  std::vector<std::string> out;
  for (const auto& e : kNames) out.emplace_back(e.name);
  return out;
}

RotationMethod rotation_from_name(std::string_view name) {
  // Surrounding white space never matters (" varimax\t" is varimax), nor case, hyphens or spaces.
  const auto space = [](char c) { return std::isspace(static_cast<unsigned char>(c)) != 0; };
  std::string_view trimmed = name;
  while (!trimmed.empty() && space(trimmed.front())) trimmed.remove_prefix(1);
  while (!trimmed.empty() && space(trimmed.back())) trimmed.remove_suffix(1);
  std::string key;
  for (char c : trimmed) {
    if (c == '-' || c == ' ') c = '_';
    key.push_back(static_cast<char>(std::tolower(static_cast<unsigned char>(c))));
  }
  const auto first = key.find_first_not_of('_');
  const auto last = key.find_last_not_of('_');
  key = first == std::string::npos ? std::string() : key.substr(first, last - first + 1);
  if (key == "cf" || key == "cf_orthogonal" || key == "crawford_ferguson_orthogonal")
    return RotationMethod::crawford_ferguson;
  if (key == "cf_oblique") return RotationMethod::crawford_ferguson_oblique;
  if (key == "target") return RotationMethod::target_orthogonal;
  if (key == "geomin_oblique") return RotationMethod::geomin;
  for (const auto& e : kNames)
    if (key == e.name) return e.method;
  throw Error(ErrorCode::invalid_argument,
              fmt::format("unknown rotation '{}'; use one of: {}", name, fmt::join(rotation_names(), ", ")));
}

CriterionValue rotation_criterion(const Matrix& rotated_loadings, const RotationOptions& options) {
  return detail::evaluate_criterion(rotated_loadings, options);
}

Matrix projected_gradient(const Matrix& loadings, const Matrix& rotation, const RotationOptions& options) {
  if (options.method == RotationMethod::promax || options.method == RotationMethod::none)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("{} does not minimise a criterion, so it has no projected gradient",
                            rotation_name(options.method)));
  const bool oblique = is_oblique(options.method);
  const Matrix a = row_weights(loadings, options.normalize).asDiagonal() * loadings;
  const Matrix l = rotated(a, rotation, oblique);
  const CriterionValue cv = detail::evaluate_criterion(l, options);
  if (!oblique) {
    const Matrix g = a.transpose() * cv.gradient;
    const Matrix m = rotation.transpose() * g;
    return g - rotation * (0.5 * (m + m.transpose()));
  }
  const Matrix g = -(l.transpose() * cv.gradient * rotation.inverse()).transpose();
  const Vector d = rotation.cwiseProduct(g).colwise().sum().transpose();
  return g - rotation * d.asDiagonal();
}

FactorOrder presentation_order(const Matrix& pattern) {
  const Index m = pattern.cols();
  const Vector ss = pattern.cwiseProduct(pattern).colwise().sum().transpose();
  FactorOrder f;
  f.order.resize(static_cast<std::size_t>(m));
  std::iota(f.order.begin(), f.order.end(), Index{0});
  std::stable_sort(f.order.begin(), f.order.end(), [&](Index x, Index y) { return ss(x) > ss(y); });
  f.signs.resize(m);
  for (Index k = 0; k < m; ++k) f.signs(k) = pattern.col(f.order[static_cast<std::size_t>(k)]).sum() < 0.0 ? -1.0 : 1.0;
  return f;
}

Matrix apply_to_columns(const Matrix& mat, const FactorOrder& f) {
  Matrix out(mat.rows(), mat.cols());
  for (Index k = 0; k < mat.cols(); ++k) out.col(k) = f.signs(k) * mat.col(f.order[static_cast<std::size_t>(k)]);
  return out;
}

Matrix apply_to_correlations(const Matrix& phi, const FactorOrder& f) {
  Matrix out(phi.rows(), phi.cols());
  for (Index a = 0; a < phi.rows(); ++a)
    for (Index b = 0; b < phi.cols(); ++b)
      out(a, b) = f.signs(a) * f.signs(b) *
                  phi(f.order[static_cast<std::size_t>(a)], f.order[static_cast<std::size_t>(b)]);
  return out;
}

FactorOrder order_and_reflect(RotationResult& r) {
  const FactorOrder f = presentation_order(r.pattern);
  r.pattern = apply_to_columns(r.pattern, f);
  if (r.structure.size() != 0) r.structure = apply_to_columns(r.structure, f);
  if (r.rotation.size() != 0) r.rotation = apply_to_columns(r.rotation, f);
  if (r.factor_correlations.size() != 0) r.factor_correlations = apply_to_correlations(r.factor_correlations, f);
  Vector ssp(f.order.size()), sss(f.order.size());
  for (Index k = 0; k < static_cast<Index>(f.order.size()); ++k) {
    const Index from = f.order[static_cast<std::size_t>(k)];
    if (r.ss_pattern.size() > from) ssp(k) = r.ss_pattern(from);
    if (r.ss_structure.size() > from) sss(k) = r.ss_structure(from);
  }
  if (r.ss_pattern.size() != 0) r.ss_pattern = ssp;
  if (r.ss_structure.size() != 0) r.ss_structure = sss;
  return f;
}

RotationResult rotate(const Matrix& loadings, const RotationOptions& options) {
  validate(loadings, options);
  // Every criterion is homogeneous in the loadings (geomin with its epsilon scaled alike), so the
  // rotation matrix does not depend on their scale. Loadings near the ends of double precision are
  // rotated scaled by a power of two (exact), and the results scaled back.
  const double largest = loadings.cwiseAbs().maxCoeff();
  if (largest > 0.0 && (largest > 1e20 || largest < 1e-20)) {
    const double s = detail::power_of_two_scale(largest);
    RotationOptions scaled = options;
    if (!options.normalize) {  // (normalised rows are free of the scale already)
      if (scaled.target.size() != 0) scaled.target *= s;
      scaled.epsilon *= s * s;
      if (options.method == RotationMethod::geomin || options.method == RotationMethod::geomin_orthogonal)
        if (!(scaled.epsilon > 0.0) || !std::isfinite(scaled.epsilon))
          throw Error(ErrorCode::invalid_argument,
                      fmt::format("the largest loading is {:.3g}, and geomin's epsilon ({}) cannot be carried to that "
                                  "scale in double precision; normalise the rows or rescale the loadings",
                                  largest, options.epsilon));
    }
    RotationResult r = rotate(loadings * s, scaled);
    r.pattern /= s;
    r.structure /= s;
    r.ss_pattern /= s * s;
    r.ss_structure /= s * s;
    return r;
  }
  const Index m = loadings.cols();
  const bool oblique = is_oblique(options.method);
  const Vector w = row_weights(loadings, options.normalize);
  const Matrix a = w.asDiagonal() * loadings;

  RotationResult r;
  r.method = options.method;
  r.oblique = oblique;
  r.normalized = options.normalize && options.method != RotationMethod::none;

  if (options.method == RotationMethod::none) {
    r.rotation = Matrix::Identity(m, m);
    r.pattern = loadings;
    r.factor_correlations = Matrix::Identity(m, m);
    r.criterion = 0.0;
    r.convergence.converged = true;
    r.normalized = false;
    r.starts.criteria = {0.0};
    r.starts.converged = r.starts.reached_best = r.starts.distinct_solutions = 1;
  } else if (options.method == RotationMethod::varimax_kaiser) {
    const StartResult s = kaiser_varimax(a, options);
    r.rotation = s.t;
    r.pattern = loadings * s.t;
    r.factor_correlations = Matrix::Identity(m, m);
    r.criterion = s.value;
    r.convergence = s.convergence;
    r.starts.criteria = {s.value};
    r.starts.converged = r.starts.reached_best = s.convergence.converged ? 1 : 0;
    r.starts.distinct_solutions = r.starts.converged;
  } else if (options.method == RotationMethod::promax) {
    // Promax as in R's stats::promax: varimax (normalised as the options say), then the oblique
    // Procrustes fit of the varimax loadings V to the target V o |V|^(power-1), columns of the
    // transformation scaled so the factor variances are 1 (Hendrickson & White 1964).
    RotationOptions vo = options;
    vo.method = RotationMethod::varimax;
    vo.random_starts = 0;
    const StartResult s = gpa(a, Matrix::Identity(m, m), vo, false);
    const Matrix v = loadings * s.t;
    const Matrix q = v.cwiseProduct(v.cwiseAbs().array().pow(options.power - 1.0).matrix());
    const ProcrustesFit fit = procrustes_oblique(v, q);
    const Matrix total = s.t * fit.transformation;  // pattern = loadings * total
    r.rotation = total.inverse().transpose();
    r.pattern = fit.pattern;
    r.factor_correlations = r.rotation.transpose() * r.rotation;
    r.criterion = s.value;
    r.convergence = s.convergence;
    r.starts.criteria = {s.value};
    r.starts.converged = r.starts.reached_best = s.convergence.converged ? 1 : 0;
    r.starts.distinct_solutions = r.starts.converged;
  } else {
    const int extra = effective_random_starts(options);
    const Index n = 1 + extra;
    std::vector<StartResult> runs(static_cast<std::size_t>(n));
    Matrix first = Matrix::Identity(m, m);
    if (options.start.size() != 0) {
      if (oblique) {
        first = options.start * options.start.colwise().norm().cwiseInverse().asDiagonal();
      } else {
        Eigen::JacobiSVD<Matrix> svd(options.start, Eigen::ComputeFullU | Eigen::ComputeFullV);
        first = svd.matrixU() * svd.matrixV().transpose();
      }
    }
    parallel_for(
        n, options.threads,
        [&](Index i) {
          Matrix t0 = first;
          if (i > 0) {
            auto rng = random_stream(options.seed, static_cast<std::uint64_t>(i));
            t0 = random_orthogonal(m, rng);
          }
          runs[static_cast<std::size_t>(i)] = gpa(a, t0, options, oblique);
        },
        options.progress);
    // Best: the lowest criterion among converged starts (among all if none converged).
    std::size_t best = 0;
    bool best_converged = false;
    for (std::size_t i = 0; i < runs.size(); ++i) {
      const bool c = runs[i].convergence.converged;
      if ((c && !best_converged) || (c == best_converged && runs[i].value < runs[best].value)) {
        best = i;
        best_converged = c;
      }
    }
    RandomStartReport& rep = r.starts;
    rep.starts = static_cast<int>(n);
    rep.best_start = static_cast<int>(best);
    const double best_value = runs[best].value;
    const double slack = options.best_tolerance * std::max(1.0, std::abs(best_value));
    std::vector<Matrix> distinct;
    for (const auto& run : runs) {
      rep.criteria.push_back(run.value);
      if (!run.convergence.converged) continue;
      ++rep.converged;
      if (run.value <= best_value + slack) ++rep.reached_best;
      Matrix p = rotated(loadings, run.t, oblique);
      if (!is_target(options.method)) p = apply_to_columns(p, presentation_order(p));
      const bool seen = std::any_of(distinct.begin(), distinct.end(), [&](const Matrix& d) {
        return (d - p).cwiseAbs().maxCoeff() <= options.distinct_tolerance;
      });
      if (!seen) distinct.push_back(std::move(p));
    }
    rep.distinct_solutions = static_cast<int>(distinct.size());
    r.rotation = runs[best].t;
    r.pattern = rotated(loadings, r.rotation, oblique);
    r.factor_correlations = oblique ? Matrix(r.rotation.transpose() * r.rotation) : Matrix(Matrix::Identity(m, m));
    r.criterion = best_value;
    r.convergence = runs[best].convergence;
  }
  fill_derived(r);
  if (!is_target(options.method)) order_and_reflect(r);
  return r;
}

}  // namespace lode
