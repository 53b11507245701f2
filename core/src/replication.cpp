// Split-sample replication and the confirmatory check on held-out respondents (see replication.hpp).
#include "lode/replication.hpp"

#include "lode/congruence.hpp"
#include "lode/distributions.hpp"
#include "lode/factor_count.hpp"
#include "lode/parallel.hpp"
#include "lode/random.hpp"
#include "correlation_detail.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <map>
#include <numeric>

namespace lode {

namespace {

struct Split {
  bool ok = false;
  std::string problem;
  Vector congruence;          // per factor, between the halves
  std::vector<bool> same_factor;  // per item
  Index count_a = 0, count_b = 0;
};

// The suggested count of one half: the empirical Kaiser criterion (cheap, needs only the eigenvalues).
Index suggested_count(const Matrix& r, Index n) { return eigenvalue_rules(eigenvalues_descending(r), n).empirical_kaiser; }

Index primary_factor(const Matrix& loadings, Index item) {
  Index best = 0;
  loadings.row(item).cwiseAbs().maxCoeff(&best);
  return best;
}

// A random permutation of 0..n-1 from the engine (Fisher-Yates via std::shuffle).
std::vector<Index> shuffled_rows(Index n, RandomEngine& rng) {
  std::vector<Index> rows(static_cast<std::size_t>(n));
  std::iota(rows.begin(), rows.end(), Index{0});
  std::shuffle(rows.begin(), rows.end(), rng);
  return rows;
}

std::vector<std::string> count_failures(const std::map<std::string, Index>& reasons, const char* unit) {
  std::vector<std::pair<std::string, Index>> sorted(reasons.begin(), reasons.end());
  std::stable_sort(sorted.begin(), sorted.end(), [](const auto& a, const auto& b) { return a.second > b.second; });
  std::vector<std::string> out;
  for (const auto& [why, count] : sorted) out.push_back(fmt::format("{} {}{}: {}", count, unit, count == 1 ? "" : "s", why));
  return out;
}

}  // namespace

HalvesComparison compare_halves(const Matrix& reference, const Matrix& a, const Matrix& b) {
  const Matrix aligned_a = match_factors(reference, a).aligned, aligned_b = match_factors(reference, b).aligned;
  HalvesComparison c;
  const Index k = reference.cols();
  c.congruence.resize(k);
  for (Index j = 0; j < k; ++j) c.congruence(j) = tucker_congruence(aligned_a.col(j), aligned_b.col(j))(0, 0);
  for (Index item = 0; item < reference.rows(); ++item)
    c.same_factor.push_back(primary_factor(aligned_a, item) == primary_factor(aligned_b, item));
  return c;
}

ReplicationResult replicate_halves(const Matrix& data, int factors, const ExtractionOptions& extraction,
                                   const RotationOptions& rotation, const ReplicationOptions& options) {
  const Index n = data.rows(), p = data.cols(), splits = options.splits;
  if (splits < 2) throw Error(ErrorCode::invalid_argument, fmt::format("replication needs at least 2 splits, not {}", splits));
  if (n / 2 <= p)
    throw Error(ErrorCode::insufficient_data,
                fmt::format("halves of {} respondents have {} each, but {} items need more respondents than items in "
                            "each half (at least {} in all)",
                            n, n / 2, p, 2 * (p + 1)));
  const CorrelationResult full_r = correlation(data, options.correlation);
  ExtractionOptions ext = extraction;
  ext.n_obs = full_r.n_obs;
  const FactorSolution full = fit_factor_solution(full_r.matrix, factors, ext, rotation);
  if (!full.converged)
    throw Error(ErrorCode::not_converged,
                fmt::format("the full-sample solution did not converge ({}); there is nothing to replicate", full.problem));
  const Index k = full.loadings.cols();
  ExtractionOptions half_ext = extraction;
  if (half_ext.method == ExtractionMethod::maximum_likelihood || half_ext.method == ExtractionMethod::minimum_residual)
    half_ext.start_uniquenesses = full.uniquenesses;  // a start near the optimum; the criterion is unchanged
  RotationOptions rot = rotation;
  rot.threads = 1;    // the splits are the parallel units
  rot.progress = {};
  CorrelationOptions corr = options.correlation;
  corr.threads = 1;
  corr.polychoric.progress = {};
  const detail::ResampleCorrelation subsets(data, corr);

  std::vector<Split> results(static_cast<std::size_t>(splits));
  parallel_for(
      splits, options.threads,
      [&](Index i) {
        Split& s = results[static_cast<std::size_t>(i)];
        auto rng = random_stream(options.seed, static_cast<std::uint64_t>(i));
        const std::vector<Index> rows = shuffled_rows(n, rng);
        const auto half = static_cast<std::ptrdiff_t>(n / 2);
        std::vector<Index> a(rows.begin(), rows.begin() + half), b(rows.begin() + half, rows.end());
        try {
          Matrix half_loadings[2];
          Index counts[2];
          const std::vector<Index>* parts[2] = {&a, &b};
          for (int h = 0; h < 2; ++h) {
            const CorrelationResult r = subsets.resample(*parts[h]);
            ExtractionOptions e = half_ext;
            e.n_obs = r.n_obs;
            const FactorSolution sol = fit_factor_solution(r.matrix, factors, e, rot);
            if (!sol.converged) {
              s.problem = sol.problem.empty() ? std::string("a half's fit did not converge") : sol.problem;
              return;
            }
            half_loadings[h] = sol.loadings;
            counts[h] = suggested_count(r.matrix, r.n_obs);
          }
          HalvesComparison c = compare_halves(full.loadings, half_loadings[0], half_loadings[1]);
          s.congruence = std::move(c.congruence);
          s.same_factor = std::move(c.same_factor);
          s.count_a = counts[0];
          s.count_b = counts[1];
          s.ok = s.congruence.allFinite();
          if (!s.ok) s.problem = "a half gave a factor with no loadings";
        } catch (const Error& e) {
          if (e.code() == ErrorCode::cancelled || e.code() == ErrorCode::internal) throw;
          s.problem = e.what();
        }
      },
      options.progress);

  ReplicationResult out;
  out.splits_requested = splits;
  out.factors = factors;
  out.loadings = full.loadings;
  out.suggested_full = suggested_count(full_r.matrix, full_r.n_obs);
  std::map<std::string, Index> reasons;
  std::vector<const Split*> used;
  for (const auto& s : results) {
    if (s.ok) used.push_back(&s);
    else ++reasons[s.problem];
  }
  out.failures = count_failures(reasons, "split");
  out.splits_used = static_cast<Index>(used.size());
  out.splits_failed = splits - out.splits_used;
  if (out.splits_used == 0)
    throw Error(ErrorCode::insufficient_data,
                fmt::format("none of the {} splits could be fitted in both halves; {}", splits, out.failures.front()));
  const Index m = out.splits_used;
  out.congruence.resize(m, k);
  for (Index r = 0; r < m; ++r) out.congruence.row(r) = used[static_cast<std::size_t>(r)]->congruence.transpose();
  out.congruence_median.resize(k);
  out.congruence_p5.resize(k);
  out.share_fair.resize(k);
  out.share_equal.resize(k);
  for (Index j = 0; j < k; ++j) {
    std::vector<double> v(out.congruence.col(j).data(), out.congruence.col(j).data() + m);
    out.congruence_median(j) = quantile_type7(v, 0.5);
    out.congruence_p5(j) = quantile_type7(v, 0.05);
    out.share_fair(j) = (out.congruence.col(j).array() >= 0.85).cast<double>().mean();
    out.share_equal(j) = (out.congruence.col(j).array() >= 0.95).cast<double>().mean();
  }
  double same = 0.0, full_count = 0.0;
  out.item_stability = Vector::Zero(p);
  for (const Split* s : used) {
    same += s->count_a == s->count_b;
    full_count += s->count_a == out.suggested_full && s->count_b == out.suggested_full;
    for (Index item = 0; item < p; ++item) out.item_stability(item) += s->same_factor[static_cast<std::size_t>(item)];
  }
  out.share_same_count = same / static_cast<double>(m);
  out.share_full_count = full_count / static_cast<double>(m);
  out.item_stability /= static_cast<double>(m);

  out.notes.push_back(fmt::format("{} of {} random splits into halves of {} and {} respondents (seed {}); each half "
                                  "analysed as the full sample ({} extraction of {} factor{}, {} rotation) and aligned "
                                  "to the full-sample solution before the halves were compared.",
                                  m, splits, n / 2, n - n / 2, options.seed, to_string(extraction.method), factors,
                                  factors == 1 ? "" : "s", rotation_name(rotation.method)));
  if (out.splits_failed > 0)
    for (const auto& f : out.failures) out.notes.push_back("Left out: " + f);
  for (Index j = 0; j < k; ++j) {
    const double med = out.congruence_median(j);
    out.notes.push_back(fmt::format("Factor {}: median congruence between halves {:.3f} (5th percentile {:.3f}): {}.", j + 1,
                                    med, out.congruence_p5(j),
                                    med >= 0.95   ? "the factor replicates (0.95 or more: equal; Lorenzo-Seva & ten Berge 2006)"
                                    : med >= 0.85 ? "fair similarity between halves (0.85 to 0.95)"
                                                  : "the factor does not replicate (below 0.85: not the same factor)"));
  }
  out.notes.push_back(fmt::format("Factor count by the empirical Kaiser criterion: the halves agreed in {:.0f}% of splits; "
                                  "both suggested the full sample's {} in {:.0f}%.",
                                  100.0 * out.share_same_count, out.suggested_full, 100.0 * out.share_full_count));
  return out;
}

HoldoutResult holdout_check(const Matrix& data, int factors, const ExtractionOptions& extraction,
                            const RotationOptions& rotation, const HoldoutOptions& options) {
  const Index n = data.rows(), p = data.cols();
  if (!(options.share > 0.0 && options.share < 1.0))
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the share of respondents held out must lie strictly between 0 and 1, not {}", options.share));
  const auto held = static_cast<Index>(std::llround(options.share * static_cast<double>(n)));
  if (held <= p || n - held <= p) {
    const double smallest = static_cast<double>(p + 1) / static_cast<double>(n);
    if (n < 2 * (p + 1))
      throw Error(ErrorCode::insufficient_data,
                  fmt::format("{} respondents cannot be split for a confirmatory check of {} items: each part needs more "
                              "respondents than items (at least {} in all)",
                              n, p, 2 * (p + 1)));
    throw Error(ErrorCode::insufficient_data,
                fmt::format("holding out {:.0f}% of {} respondents leaves {} for the {} part, but {} items need at least "
                            "{}; the workable shares run from {:.3f} to {:.3f}",
                            100.0 * options.share, n, held <= p ? held : n - held,
                            held <= p ? "held-out" : "exploratory", p, p + 1, std::ceil(smallest * 1000.0) / 1000.0,
                            std::floor((1.0 - smallest) * 1000.0) / 1000.0));
  }
  auto rng = random_stream(options.seed, 0);
  std::vector<Index> rows = shuffled_rows(n, rng);
  HoldoutResult out;
  out.holdout_rows.assign(rows.begin(), rows.begin() + static_cast<std::ptrdiff_t>(held));
  std::vector<Index> rest(rows.begin() + static_cast<std::ptrdiff_t>(held), rows.end());
  std::sort(out.holdout_rows.begin(), out.holdout_rows.end());
  std::sort(rest.begin(), rest.end());
  const detail::ResampleCorrelation subsets(data, options.correlation);
  const CorrelationResult r_explore = subsets.resample(rest);
  const CorrelationResult r_hold = subsets.resample(out.holdout_rows);
  out.n_explore = r_explore.n_obs;
  out.n_holdout = r_hold.n_obs;
  ExtractionOptions ext = extraction;
  ext.n_obs = r_explore.n_obs;
  out.exploratory = fit_factor_solution(r_explore.matrix, factors, ext, rotation);
  if (!out.exploratory.converged)
    throw Error(ErrorCode::not_converged,
                fmt::format("the exploratory fit on the {} remaining respondents did not converge ({})", out.n_explore,
                            out.exploratory.problem));
  const SimpleStructure s = simple_structure(out.exploratory.loadings, options.salient);
  out.pattern = s.pattern;
  out.items_left_out = s.unassigned;
  for (Index a = 0; a < p; ++a)
    if (s.pattern.row(a).sum() > 0.0) out.items_fitted.push_back(a);
  const auto pf = static_cast<Index>(out.items_fitted.size());
  Matrix r_sub(pf, pf), pattern_sub(pf, s.pattern.cols());
  RestrictedFitOptions ro = options.restricted;
  ro.n_obs = r_hold.n_obs;
  ro.item_names.clear();
  for (Index i = 0; i < pf; ++i) {
    const Index a = out.items_fitted[static_cast<std::size_t>(i)];
    pattern_sub.row(i) = s.pattern.row(a);
    for (Index j = 0; j < pf; ++j) r_sub(i, j) = r_hold.matrix(a, out.items_fitted[static_cast<std::size_t>(j)]);
    const auto& names = options.correlation.item_names;
    const bool named = static_cast<std::size_t>(a) < names.size() && !names[static_cast<std::size_t>(a)].empty();
    ro.item_names.push_back(named ? names[static_cast<std::size_t>(a)] : fmt::format("column {}", a + 1));
  }
  for (Index f = 0; f < s.pattern.cols(); ++f)
    if (s.pattern.col(f).sum() < 2.0)
      throw Error(ErrorCode::invalid_argument,
                  fmt::format("at the cut {:.2f}, factor {} of the exploratory solution has {} item{} as its largest "
                              "loading; the restricted model needs at least two per factor (extract fewer factors or "
                              "lower the cut)",
                              options.salient, f + 1, s.pattern.col(f).sum(), s.pattern.col(f).sum() == 1.0 ? "" : "s"));
  out.confirmatory = fit_restricted(r_sub, pattern_sub, ro);
  out.notes.push_back(fmt::format("{} respondents held out at random (seed {}); the exploratory analysis used the other "
                                  "{}; its simple structure (largest loading at or above {:.2f}) was fitted to the "
                                  "held-out respondents by maximum likelihood.",
                                  held, options.seed, n - held, options.salient));
  if (!out.items_left_out.empty()) {
    std::string names;
    for (Index a : out.items_left_out) names += (names.empty() ? "" : ", ") + item_label(options.correlation.item_names, a);
    out.notes.push_back(fmt::format("Salient on no factor and left out of the confirmatory fit: {}.", names));
  }
  out.notes.push_back("A good fit on held-out respondents of the same survey shows the structure is not an accident of "
                      "one sample; it is not evidence of validity for decisions about people.");
  return out;
}

}  // namespace lode
