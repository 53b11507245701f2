#include "lode/bootstrap.hpp"
#include "lode/distributions.hpp"

#include "lode/congruence.hpp"
#include "lode/parallel.hpp"
#include "lode/random.hpp"
#include "correlation_detail.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <map>

namespace lode {


namespace {

struct Replicate {
  bool ok = false;
  std::string problem;
  Matrix loadings;
  Vector uniquenesses;
  Matrix phi;
  double min_congruence = 0.0;
};

Matrix phi_or_identity(const Matrix& phi, Index k) { return phi.size() == 0 ? Matrix::Identity(k, k) : phi; }

}  // namespace

namespace {

// The bootstrap's inputs, checked: the options, the fitting procedure and the full-sample solution
// against the data's shape.
void check_bootstrap_inputs(const Matrix& data, const FactorSolution& full, const SolutionFitter& fit,
                            const BootstrapOptions& options) {
  const Index n = data.rows(), p = data.cols();
  const Index k = full.loadings.cols();
  const Index b = options.replicates;
  if (b < 2) throw Error(ErrorCode::invalid_argument, fmt::format("the bootstrap needs at least 2 replicates, not {}", b));
  if (!(options.level > 0.0 && options.level < 1.0))
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the confidence level must lie strictly between 0 and 1, not {}", options.level));
  if (!fit) throw Error(ErrorCode::invalid_argument, "the bootstrap needs a fitting procedure");
  if (full.loadings.rows() != p || k == 0)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the full-sample solution has {} items x {} factors, but the data have {} items",
                            full.loadings.rows(), k, p));
  if (full.uniquenesses.size() != p)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the full-sample solution has {} uniquenesses for {} items", full.uniquenesses.size(), p));
  if (full.factor_correlations.size() != 0 && (full.factor_correlations.rows() != k || full.factor_correlations.cols() != k))
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the full-sample factor correlations are {} x {} for {} factors",
                            full.factor_correlations.rows(), full.factor_correlations.cols(), k));
  if (!full.loadings.allFinite() || !full.uniquenesses.allFinite())
    throw Error(ErrorCode::invalid_argument, "the full-sample solution contains a missing or infinite value");
  if (n < 3) throw Error(ErrorCode::insufficient_data, fmt::format("the data have {} rows; the bootstrap needs at least 3", n));
}

}  // namespace

BootstrapResult bootstrap_solution(const Matrix& data, const FactorSolution& full, const SolutionFitter& fit,
                                   const BootstrapOptions& options) {
  const Index n = data.rows(), p = data.cols();
  const Index k = full.loadings.cols();
  const Index b = options.replicates;
  check_bootstrap_inputs(data, full, fit, options);

  CorrelationOptions corr = options.correlation;
  corr.threads = 1;               // the replicates are the parallel units
  corr.polychoric.progress = {};  // progress is reported per replicate, from the calling thread only
  const Matrix full_phi = phi_or_identity(full.factor_correlations, k);
  const detail::ResampleCorrelation resampled(data, corr);

  std::vector<Replicate> reps(static_cast<std::size_t>(b));
  parallel_for(
      b, options.threads,
      [&](Index i) {
        Replicate& rep = reps[static_cast<std::size_t>(i)];
        auto rng = random_stream(options.seed, static_cast<std::uint64_t>(i));
        std::uniform_int_distribution<Index> pick(0, n - 1);
        std::vector<Index> rows(static_cast<std::size_t>(n));
        for (auto& r : rows) r = pick(rng);
        try {
          const CorrelationResult r = resampled.resample(rows);
          FactorSolution s = fit(r.matrix);
          if (!s.converged) {
            rep.problem = s.problem.empty() ? std::string("the fit did not converge") : s.problem;
            return;
          }
          if (s.loadings.rows() != p || s.loadings.cols() != k || s.uniquenesses.size() != p ||
              !s.loadings.allFinite() || !s.uniquenesses.allFinite()) {
            rep.problem = "the fit returned a solution of the wrong shape or with missing values";
            return;
          }
          const FactorMatch m = match_factors(full.loadings, s.loadings);
          rep.loadings = m.aligned;
          rep.uniquenesses = s.uniquenesses;
          rep.phi = align_factor_correlations(phi_or_identity(s.factor_correlations, k), m);
          rep.min_congruence = m.matched_congruence.minCoeff();
          rep.ok = true;
        } catch (const Error& e) {
          if (e.code() == ErrorCode::cancelled || e.code() == ErrorCode::internal) throw;
          rep.problem = e.what();
        }
      },
      options.progress);

  BootstrapResult out;
  out.replicates_requested = b;
  out.level = options.level;
  out.alignment =
      "each replicate's factors were matched to the full-sample factors by the largest total |Tucker congruence| of "
      "the pattern loadings (Hungarian assignment) and reflected where that congruence was negative; factor "
      "correlations follow the same order and signs; no further rotation";
  out.loadings = full.loadings;
  out.uniquenesses = full.uniquenesses;
  out.factor_correlations = full_phi;

  std::map<std::string, Index> reasons;
  std::vector<const Replicate*> used;
  for (const auto& rep : reps) {
    if (rep.ok) used.push_back(&rep);
    else ++reasons[rep.problem];
  }
  out.replicates_used = static_cast<Index>(used.size());
  out.replicates_failed = b - out.replicates_used;
  std::vector<std::pair<std::string, Index>> sorted(reasons.begin(), reasons.end());
  std::stable_sort(sorted.begin(), sorted.end(), [](const auto& a, const auto& c) { return a.second > c.second; });
  for (const auto& [why, count] : sorted)
    out.failures.push_back(fmt::format("{} replicate{}: {}", count, count == 1 ? "" : "s", why));
  if (out.replicates_used < 2)
    throw Error(ErrorCode::insufficient_data,
                fmt::format("only {} of {} bootstrap replicates could be fitted; the commonest failure: {}",
                            out.replicates_used, b, sorted.empty() ? std::string("none") : sorted.front().first));

  const double lo_q = (1.0 - options.level) / 2.0, hi_q = 1.0 - lo_q;
  const auto m = used.size();
  std::vector<double> values(m);
  auto summarise = [&](auto get, double& lower, double& upper, double& se) {
    double sum = 0.0;
    for (std::size_t r = 0; r < m; ++r) sum += values[r] = get(*used[r]);
    const double mean = sum / static_cast<double>(m);
    double ss = 0.0;
    for (double v : values) ss += (v - mean) * (v - mean);
    se = std::sqrt(ss / static_cast<double>(m - 1));
    lower = quantile_type7(values, lo_q);
    upper = quantile_type7(values, hi_q);
  };
  out.loadings_lower.resize(p, k);
  out.loadings_upper.resize(p, k);
  out.loadings_se.resize(p, k);
  for (Index i = 0; i < p; ++i)
    for (Index j = 0; j < k; ++j)
      summarise([&](const Replicate& r) { return r.loadings(i, j); }, out.loadings_lower(i, j), out.loadings_upper(i, j),
                out.loadings_se(i, j));
  out.uniquenesses_lower.resize(p);
  out.uniquenesses_upper.resize(p);
  out.uniquenesses_se.resize(p);
  for (Index i = 0; i < p; ++i)
    summarise([&](const Replicate& r) { return r.uniquenesses(i); }, out.uniquenesses_lower(i),
              out.uniquenesses_upper(i), out.uniquenesses_se(i));
  out.factor_correlations_lower.resize(k, k);
  out.factor_correlations_upper.resize(k, k);
  out.factor_correlations_se.resize(k, k);
  for (Index i = 0; i < k; ++i)
    for (Index j = 0; j < k; ++j)
      summarise([&](const Replicate& r) { return r.phi(i, j); }, out.factor_correlations_lower(i, j),
                out.factor_correlations_upper(i, j), out.factor_correlations_se(i, j));

  out.min_matched_congruence.resize(static_cast<Index>(m));
  for (std::size_t r = 0; r < m; ++r) {
    out.min_matched_congruence(static_cast<Index>(r)) = used[r]->min_congruence;
    if (used[r]->min_congruence < 0.85) ++out.replicates_poorly_matched;
  }
  if (options.keep_replicates)
    for (const auto* r : used) {
      out.replicate_loadings.push_back(r->loadings);
      out.replicate_uniquenesses.push_back(r->uniquenesses);
      out.replicate_factor_correlations.push_back(r->phi);
    }

  out.notes.push_back(fmt::format("{:.0f}% percentile intervals from {} of {} bootstrap replicates (seed {}).",
                                  100.0 * options.level, out.replicates_used, b, options.seed));
  if (out.replicates_failed > 0) {
    out.notes.push_back(fmt::format("{} replicate{} failed and {} excluded from the intervals:", out.replicates_failed,
                                    out.replicates_failed == 1 ? "" : "s", out.replicates_failed == 1 ? "is" : "are"));
    for (const auto& f : out.failures) out.notes.push_back("  " + f);
  }
  out.notes.push_back("Alignment: " + out.alignment + ".");
  if (out.replicates_poorly_matched > 0)
    out.notes.push_back(fmt::format("In {} replicate{} some factor matched the full-sample factor with congruence below "
                                    "0.85 (not the same factor; Lorenzo-Seva & ten Berge 2006): the factors are not "
                                    "stable across resamples and their intervals should be read with care.",
                                    out.replicates_poorly_matched, out.replicates_poorly_matched == 1 ? "" : "s"));
  if (out.replicates_used < 200)
    out.notes.push_back(fmt::format("Only {} replicates were used; percentile intervals are rough below a few hundred "
                                    "(common practice: 1000 or more).",
                                    out.replicates_used));
  return out;
}

namespace {

// The orthogonal Q minimising ||a Q - target|| (Schoenemann 1966): U V' from the SVD of a' target.
Matrix procrustes_rotation(const Matrix& a, const Matrix& target) {
  Eigen::JacobiSVD<Matrix> svd(a.transpose() * target, Eigen::ComputeFullU | Eigen::ComputeFullV);
  return svd.matrixU() * svd.matrixV().transpose();
}

// A solution to start the rotation from: its unrotated loadings and its rotation matrix T.
struct CarriedRotation {
  const Matrix* unrotated = nullptr;
  const Matrix* rotation = nullptr;
};

// Extraction then rotation, as fit_factor_solution; the full results are kept when asked for. With
// `carry`, the rotation starts from carry's rotation turned onto these unrotated loadings, which differ
// from carry's by sampling error and an orthogonal turn Q: start T = Q T_carry.
FactorSolution fit_solution(const Matrix& correlation, int factors, const ExtractionOptions& extraction,
                            const RotationOptions& rotation, ExtractionResult* extraction_out = nullptr,
                            RotationResult* rotation_out = nullptr, CarriedRotation carry = {}) {
  ExtractionResult e = extract_factors(correlation, factors, extraction);
  FactorSolution s;
  s.uniquenesses = e.uniquenesses;
  s.converged = e.convergence.converged;
  if (!s.converged)
    s.problem = fmt::format("{} extraction did not converge within {} iterations", to_string(e.method),
                            e.convergence.max_iterations);
  if (factors >= 2 && rotation.method != RotationMethod::none) {
    RotationResult r;
    if (carry.unrotated && carry.rotation) {
      RotationOptions from = rotation;
      from.start = procrustes_rotation(e.loadings, *carry.unrotated) * *carry.rotation;
      r = rotate(e.loadings, from);
    } else {
      r = rotate(e.loadings, rotation);
    }
    s.loadings = r.pattern;
    s.factor_correlations = r.factor_correlations;
    if (!r.convergence.converged) {
      s.converged = false;
      if (s.problem.empty())
        s.problem = fmt::format("{} rotation did not converge within {} iterations", rotation_name(rotation.method),
                                r.convergence.max_iterations);
    }
    if (rotation_out) *rotation_out = std::move(r);
  } else {
    s.loadings = e.loadings;
    s.factor_correlations = Matrix::Identity(factors, factors);
  }
  if (extraction_out) *extraction_out = std::move(e);
  return s;
}

}  // namespace

FactorSolution fit_factor_solution(const Matrix& correlation, int factors, const ExtractionOptions& extraction,
                                   const RotationOptions& rotation) {
  return fit_solution(correlation, factors, extraction, rotation);
}

BootstrapResult bootstrap_factor_solution(const Matrix& data, int factors, const ExtractionOptions& extraction,
                                          const RotationOptions& rotation, const BootstrapOptions& options) {
  const CorrelationResult r = correlation(data, options.correlation);
  ExtractionOptions ext = extraction;
  if (ext.n_obs == 0) ext.n_obs = r.n_obs;
  ExtractionResult full_extraction;
  RotationResult full_rotation;
  const FactorSolution full = fit_solution(r.matrix, factors, ext, rotation, &full_extraction, &full_rotation);
  if (!full.converged)
    throw Error(ErrorCode::not_converged,
                fmt::format("the full-sample solution did not converge ({}); bootstrap intervals around it would mean "
                            "nothing",
                            full.problem));
  RotationOptions rot = rotation;
  rot.threads = 1;     // the replicates are the parallel units
  rot.progress = {};   // replicates run on worker threads; progress is reported per replicate instead
  if (options.replicate_random_starts >= 0) rot.random_starts = options.replicate_random_starts;
  const bool rotating = factors >= 2 && rotation.method != RotationMethod::none;
  const bool warm = options.replicate_warm_start;
  if (warm && (ext.method == ExtractionMethod::maximum_likelihood || ext.method == ExtractionMethod::minimum_residual)) {
    ext.start_uniquenesses = full_extraction.uniquenesses;
  }
  CarriedRotation carry;
  if (warm && rotating) carry = {&full_extraction.loadings, &full_rotation.rotation};
  auto fit = [&](const Matrix& rr) { return fit_solution(rr, factors, ext, rot, nullptr, nullptr, carry); };
  BootstrapResult out = bootstrap_solution(data, full, fit, options);
  out.notes.insert(out.notes.begin() + 1,
                   fmt::format("Each replicate: {} correlations, {} extraction of {} factor{}{}{}.",
                               to_string(options.correlation.kind), to_string(extraction.method), factors,
                               factors == 1 ? "" : "s",
                               rotating ? fmt::format(", {} rotation ({} random start{})", rotation_name(rotation.method),
                                                      rot.random_starts < 0 ? std::string("default")
                                                                            : std::to_string(rot.random_starts),
                                                      rot.random_starts == 1 ? "" : "s")
                                        : std::string(),
                               warm ? "; each fit started from the full-sample solution" : ""));
  return out;
}

}  // namespace lode
