#include "lode/factor_count.hpp"
#include "lode/distributions.hpp"

#include "lode/parallel.hpp"
#include "symmetric_eigen.hpp"

#include <fmt/format.h>

#include <algorithm>
#include <cmath>
#include <limits>
#include <numeric>
#include <random>

namespace lode {

using detail::QlState;

const char* to_string(RandomDataSource source) noexcept {
  switch (source) {
    case RandomDataSource::normal_theory: return "normal-theory";
    case RandomDataSource::permutation: return "permutation";
    case RandomDataSource::custom: return "custom";
  }
  return "unknown";
}


namespace {

constexpr Index kChunk = 8;  // replicates per parallel unit (one workspace per unit)

void check_options(const ParallelAnalysisOptions& o) {
  if (o.replicates < 1)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("parallel analysis needs at least 1 random data set; {} were asked for", o.replicates));
  if (!(o.percentile > 0.0 && o.percentile < 100.0))
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the percentile of random eigenvalues must lie strictly between 0 and 100; it is {}",
                            o.percentile));
  if (o.source == RandomDataSource::custom && !o.custom_source)
    throw Error(ErrorCode::invalid_argument, "the random-data source is 'custom' but no generator was given");
}

void check_sample_size(Index p, Index n_obs) {
  if (n_obs <= 0)
    throw Error(ErrorCode::insufficient_data,
                "the number of observations behind the correlation matrix is unknown (0); parallel analysis and the "
                "empirical Kaiser criterion need it");
  if (n_obs <= p)
    throw Error(ErrorCode::insufficient_data,
                fmt::format("parallel analysis needs more observations than items: {} observations for {} items", n_obs,
                            p));
}

// Runs `units` chunks of replicates over threads, translating progress from chunks to replicates.
void run_chunks(Index replicates, const ParallelAnalysisOptions& o, const std::function<void(Index, Index)>& chunk) {
  const Index units = (replicates + kChunk - 1) / kChunk;
  ProgressFn progress;
  if (o.progress)
    progress = [&](std::int64_t done, std::int64_t) {
      return o.progress(std::min<std::int64_t>(done * kChunk, replicates), replicates);
    };
  parallel_for(
      units, o.threads,
      [&](Index u) {
        const Index begin = u * kChunk;
        chunk(begin, std::min(begin + kChunk, replicates));
      },
      progress);
}

// Per-unit scratch space: allocated once per chunk of replicates. Eigenvalues are found eight matrices
// at a time (four replicates' component and factor versions, one per vector lane, in two sets of four):
// replicates are staged and the lanes run when full or when the chunk ends.
constexpr int kLanes = 2 * detail::TridiagonalLanes::lanes;

struct Workspace {
  explicit Workspace(Index p)
      : a(Matrix::Zero(p, p)), r(p, p), inv(p, p), d(p), dis(p), rinv(p), column(p), llt(p), lanes{detail::TridiagonalLanes(p), detail::TridiagonalLanes(p)},
        diag(static_cast<std::size_t>(p * kLanes)), off(static_cast<std::size_t>(p * kLanes)) {}
  Matrix a, r, inv;
  Vector d, dis, rinv, column;
  Eigen::LLT<Matrix> llt;
  detail::TridiagonalLanes lanes[2];
  std::vector<double> diag, off;
  int staged = 0;               // lanes filled
  double* out[kLanes] = {};     // where each lane's eigenvalues go (p each)
  double& at(Index i, Index j, int lane) { return lanes[lane / 4](i, j, lane % 4); }
};

// Eigenvalues, largest first, of every staged matrix, into their destinations: the lanes'
// Householder tridiagonalisation, then the root-free QL iteration on all of them at once.
void flush(Workspace& w) {
  if (w.staged == 0) return;
  const Index p = w.r.rows();
  const int sets = (w.staged + 3) / 4;
  for (int set = 0; set < sets; ++set) w.lanes[set].run();
  const int count = 4 * sets;  // the QL runs whole sets; a set's unused lanes are solved and dropped
  QlState q[kLanes];
  for (int l = 0; l < count; ++l) {
    double* diag = w.diag.data() + l * p;
    double* off = w.off.data() + l * p;
    w.lanes[l / 4].extract(l % 4, diag, off);
    q[l] = QlState{diag, off, p, 50};
  }
  if (!detail::tridiagonal_eigenvalues_lanes(q, count))
    throw Error(ErrorCode::internal, "the eigenvalues of a random correlation matrix did not converge in 50 "
                                     "iterations per eigenvalue");
  for (int l = 0; l < w.staged; ++l) {
    double* diag = w.diag.data() + l * p;
    std::sort(diag, diag + p, std::greater<double>());
    std::copy(diag, diag + p, w.out[l]);
  }
  w.staged = 0;
}

// Stages w.r (into `pc`) and w.r with squared multiple correlations 1 - 1 / diag(R^-1) (given in
// w.rinv) on its diagonal (into `factor`); eigenvalues are written when the lanes are flushed.
void eigen_pair(Workspace& w, Eigen::Ref<Vector> pc, Eigen::Ref<Vector> factor) {
  const Index p = w.r.rows();
  const int l = w.staged;
  detail::TridiagonalLanes& set = w.lanes[l / 4];
  for (Index j = 0; j < p; ++j)
    for (Index i = j; i < p; ++i) set(i, j, l % 4) = set(i, j, l % 4 + 1) = w.r(i, j);
  for (Index j = 0; j < p; ++j) set(j, j, l % 4 + 1) = 1.0 - 1.0 / w.rinv(j);
  w.out[l] = pc.data();
  w.out[l + 1] = factor.data();
  w.staged += 2;
  if (w.staged == kLanes) flush(w);
}

// One normal-theory replicate. Bartlett decomposition: W = A A' with A lower triangular,
// A_ii^2 ~ chi-square(n - 1 - i) (i = 0..p-1), A_ij ~ N(0, 1) below the diagonal, is Wishart(I, n - 1),
// the distribution of the centred cross-product matrix of n normal rows. R = D^-1/2 W D^-1/2.
// Then L = D^-1/2 A is R's Cholesky factor, so diag(R^-1)_i = d_i * ||column i of A^-1||^2.
void wishart_into(Index p, Index n_obs, RandomEngine& engine, Workspace& w) {
  for (Index j = 0; j < p; ++j) {
    w.a(j, j) = std::sqrt(chi_square_draw(static_cast<double>(n_obs - 1 - j), engine));
    for (Index i = j + 1; i < p; ++i) w.a(i, j) = ziggurat_normal(engine);
  }
  // W = A A', lower triangle only; column j below the diagonal is A(j:, 0..j) A(j, 0..j)' since A is
  // lower triangular (a sixth of p^3 multiply-adds instead of half).
  for (Index j = 0; j < p; ++j)
    w.r.col(j).tail(p - j).noalias() = w.a.block(j, 0, p - j, j + 1) * w.a.row(j).head(j + 1).transpose();
  w.d = w.r.diagonal();
  for (Index j = 0; j < p; ++j) w.dis(j) = 1.0 / std::sqrt(w.d(j));
  for (Index j = 0; j < p; ++j) {
    w.r(j, j) = 1.0;
    for (Index i = j + 1; i < p; ++i) w.r(j, i) = w.r(i, j) *= w.dis(i) * w.dis(j);
  }
}

void normal_replicate(Index p, Index n_obs, RandomEngine& engine, Workspace& w, Eigen::Ref<Vector> pc,
                      Eigen::Ref<Vector> factor) {
  wishart_into(p, n_obs, engine, w);
  // A is overwritten by its inverse (lower triangular), column by column from the last, as in LAPACK's
  // dtrti2: X_jj = 1 / A_jj, X(j+1:, j) = -X_jj X(j+1:, j+1:) A(j+1:, j).
  for (Index j = p - 1; j >= 0; --j) {
    const double x = 1.0 / w.a(j, j);
    w.a(j, j) = x;
    const Index m = p - 1 - j;
    if (m > 0) {
      auto y = w.column.head(m);
      y.noalias() = w.a.bottomRightCorner(m, m).triangularView<Eigen::Lower>() * w.a.col(j).tail(m);
      w.a.col(j).tail(m) = -x * y;
    }
    w.rinv(j) = w.d(j) * w.a.col(j).tail(p - j).squaredNorm();
  }
  eigen_pair(w, pc, factor);
}

// Any random correlation matrix already in w.r: SMCs through a Cholesky factorisation.
void generic_replicate(Workspace& w, Index replicate, Eigen::Ref<Vector> pc, Eigen::Ref<Vector> factor) {
  w.llt.compute(w.r);
  if (w.llt.info() != Eigen::Success)
    throw Error(ErrorCode::not_positive_definite,
                fmt::format("the correlation matrix of random data set {} is not positive definite, so its squared "
                            "multiple correlations are undefined (pairwise deletion can cause this; try listwise "
                            "deletion or smoothing)",
                            replicate + 1));
  w.inv.setIdentity();
  w.llt.matrixL().solveInPlace(w.inv);
  w.rinv = w.inv.colwise().squaredNorm().transpose();
  eigen_pair(w, pc, factor);
}

// Index of the first position where observed does not exceed the threshold (= leading count above it).
Index leading_above(const Vector& observed, const Vector& threshold) {
  Index k = 0;
  while (k < observed.size() && observed(k) > threshold(k)) ++k;
  return k;
}

ParallelAnalysisResult summarise(const Vector& observed_pc, const Vector& observed_factor, const RandomEigenvalues& rnd,
                                 Index n_obs, const ParallelAnalysisOptions& o) {
  ParallelAnalysisResult res;
  res.observed_pc = observed_pc;
  res.observed_factor = observed_factor;
  res.replicates = o.replicates;
  res.n_obs = n_obs;
  res.threshold = o.threshold;
  res.percentile = o.percentile;
  res.source = o.source;
  res.seed = o.seed;
  const Index p = observed_pc.size();
  res.random_pc_mean = rnd.pc.rowwise().mean();
  res.random_factor_mean = rnd.factor.rowwise().mean();
  res.random_pc_percentile.resize(p);
  res.random_factor_percentile.resize(p);
  std::vector<double> buf(static_cast<std::size_t>(rnd.pc.cols()));
  for (Index k = 0; k < p; ++k) {
    for (Index c = 0; c < rnd.pc.cols(); ++c) buf[static_cast<std::size_t>(c)] = rnd.pc(k, c);
    res.random_pc_percentile(k) = quantile_type7(buf, o.percentile / 100.0);
    for (Index c = 0; c < rnd.pc.cols(); ++c) buf[static_cast<std::size_t>(c)] = rnd.factor(k, c);
    res.random_factor_percentile(k) = quantile_type7(buf, o.percentile / 100.0);
  }
  res.suggested_pc = leading_above(observed_pc, res.random_pc_threshold());
  res.suggested_factor = leading_above(observed_factor, res.random_factor_threshold());
  return res;
}

// Positions of the answered cells of each column.
std::vector<std::vector<Index>> answered_rows(const Matrix& data) {
  std::vector<std::vector<Index>> rows(static_cast<std::size_t>(data.cols()));
  for (Index j = 0; j < data.cols(); ++j)
    for (Index i = 0; i < data.rows(); ++i)
      if (!std::isnan(data(i, j))) rows[static_cast<std::size_t>(j)].push_back(i);
  return rows;
}


}  // namespace

Matrix wishart_correlation(Index p, Index n_obs, RandomEngine& engine) {
  if (p < 1) throw Error(ErrorCode::invalid_argument, fmt::format("the number of items must be positive; it is {}", p));
  check_sample_size(p, n_obs);
  Workspace w(p);
  wishart_into(p, n_obs, engine, w);
  return w.r;
}

RandomEigenvalues random_eigenvalues(Index p, Index n_obs, const ParallelAnalysisOptions& o) {
  check_options(o);
  if (o.source == RandomDataSource::permutation)
    throw Error(ErrorCode::invalid_argument,
                "permutation parallel analysis needs the raw data; a correlation matrix alone allows only "
                "normal-theory random data");
  if (p < 3)
    throw Error(ErrorCode::insufficient_data, fmt::format("factor analysis needs at least 3 items; there are {}", p));
  check_sample_size(p, n_obs);
  RandomEigenvalues out{Matrix(p, o.replicates), Matrix(p, o.replicates)};
  run_chunks(o.replicates, o, [&](Index begin, Index end) {
    Workspace w(p);
    for (Index k = begin; k < end; ++k) {
      RandomEngine engine = random_stream(o.seed, static_cast<std::uint64_t>(k));
      if (o.source == RandomDataSource::normal_theory) {
        normal_replicate(p, n_obs, engine, w, out.pc.col(k), out.factor.col(k));
      } else {
        o.custom_source(engine, w.r);
        if (w.r.rows() != p || w.r.cols() != p)
          throw Error(ErrorCode::invalid_argument,
                      fmt::format("the custom random-data source returned a {} x {} matrix; {} x {} was expected",
                                  w.r.rows(), w.r.cols(), p, p));
        generic_replicate(w, k, out.pc.col(k), out.factor.col(k));
      }
    }
    flush(w);
  });
  return out;
}

RandomEigenvalues permuted_eigenvalues(const Matrix& data, const CorrelationOptions& copts,
                                       const ParallelAnalysisOptions& o) {
  check_options(o);
  validate_data(data, copts);
  const Index n = data.rows(), p = data.cols();
  const bool complete = !data.array().isNaN().any();
  RandomEigenvalues out{Matrix(p, o.replicates), Matrix(p, o.replicates)};

  if (complete && copts.kind != CorrelationKind::polychoric) {
    // Fast path. Pearson and Spearman coefficients of complete data are Z'Z for columns standardised
    // to unit length (of the ranks, for Spearman); permuting rows within a column permutes Z's column,
    // so Z is computed once.
    Matrix z(n, p);
    for (Index j = 0; j < p; ++j) {
      Vector x = copts.kind == CorrelationKind::spearman ? average_ranks(data.col(j)) : Vector(data.col(j));
      x.array() -= x.mean();
      z.col(j) = x / x.norm();
    }
    run_chunks(o.replicates, o, [&](Index begin, Index end) {
      Workspace w(p);
      Matrix zp(n, p);
      std::vector<Index> perm(static_cast<std::size_t>(n));
      for (Index k = begin; k < end; ++k) {
        RandomEngine engine = random_stream(o.seed, static_cast<std::uint64_t>(k));
        for (Index j = 0; j < p; ++j) {
          std::iota(perm.begin(), perm.end(), Index{0});
          std::shuffle(perm.begin(), perm.end(), engine);
          for (Index i = 0; i < n; ++i) zp(i, j) = z(perm[static_cast<std::size_t>(i)], j);
        }
        w.r.setZero();
        w.r.selfadjointView<Eigen::Lower>().rankUpdate(zp.transpose());
        for (Index j = 0; j < p; ++j) {
          w.r(j, j) = 1.0;
          for (Index i = j + 1; i < p; ++i) w.r(j, i) = w.r(i, j);
        }
        generic_replicate(w, k, out.pc.col(k), out.factor.col(k));
      }
      flush(w);
    });
    return out;
  }

  // With missing values, or polychoric correlations: each column's answers are shuffled among that
  // column's answered rows (the missing-value pattern and each item's category frequencies stay
  // exactly as observed), then correlated with the same options.
  const auto rows = answered_rows(data);
  CorrelationOptions inner = copts;
  inner.threads = 1;  // the replicates are already spread over the threads
  run_chunks(o.replicates, o, [&](Index begin, Index end) {
    Workspace w(p);
    Matrix shuffled = data;
    std::vector<double> values;
    for (Index k = begin; k < end; ++k) {
      RandomEngine engine = random_stream(o.seed, static_cast<std::uint64_t>(k));
      for (Index j = 0; j < p; ++j) {
        const auto& rj = rows[static_cast<std::size_t>(j)];
        values.resize(rj.size());
        for (std::size_t t = 0; t < rj.size(); ++t) values[t] = data(rj[t], j);
        std::shuffle(values.begin(), values.end(), engine);
        for (std::size_t t = 0; t < rj.size(); ++t) shuffled(rj[t], j) = values[t];
      }
      w.r = correlation(shuffled, inner).matrix;
      generic_replicate(w, k, out.pc.col(k), out.factor.col(k));
    }
    flush(w);
  });
  return out;
}

ParallelAnalysisResult parallel_analysis(const Matrix& r, Index n_obs, const ParallelAnalysisOptions& o) {
  check_options(o);
  const CorrelationResult checked = correlation_from_matrix(r, n_obs);
  const RandomEigenvalues rnd = random_eigenvalues(r.rows(), n_obs, o);
  return summarise(eigenvalues_descending(checked.matrix), reduced_eigenvalues(checked.matrix), rnd, n_obs, o);
}

ParallelAnalysisResult parallel_analysis(const Matrix& data, const CorrelationOptions& copts,
                                         const ParallelAnalysisOptions& o) {
  check_options(o);
  const CorrelationResult observed = correlation(data, copts);
  const Vector pc = eigenvalues_descending(observed.matrix);
  const Vector factor = reduced_eigenvalues(observed.matrix);
  if (o.source == RandomDataSource::permutation)
    return summarise(pc, factor, permuted_eigenvalues(data, copts, o), observed.n_obs, o);
  return summarise(pc, factor, random_eigenvalues(data.cols(), observed.n_obs, o), observed.n_obs, o);
}

MapResult minimum_average_partial(const Matrix& r) {
  const Index p = r.rows();
  if (r.cols() != p || p < 3)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the minimum average partial test needs a square correlation matrix of at least 3 items; "
                            "this one is {} x {}",
                            r.rows(), r.cols()));
  Eigen::SelfAdjointEigenSolver<Matrix> eig(r);
  if (eig.info() != Eigen::Success)
    throw Error(ErrorCode::internal, "the eigen decomposition of the correlation matrix failed");
  const Vector values = eig.eigenvalues().reverse();
  const Matrix vectors = eig.eigenvectors().rowwise().reverse();
  const double pairs = static_cast<double>(p * (p - 1));
  MapResult res;
  res.average_squared = Vector::Constant(p, std::numeric_limits<double>::quiet_NaN());
  res.average_fourth = res.average_squared;
  // Partial covariances after removing m components: C_m = R - sum_{k<m} lambda_k v_k v_k'.
  Matrix c = r;
  for (Index m = 0; m < p; ++m) {
    if (m > 0) {
      if (!(values(m - 1) > 0.0)) break;  // a zero component: nothing more to partial out
      c.noalias() -= values(m - 1) * vectors.col(m - 1) * vectors.col(m - 1).transpose();
    }
    const Vector d = c.diagonal();
    if (!(d.minCoeff() > 0.0)) break;
    const Vector s = d.cwiseSqrt().cwiseInverse();
    double sq = 0.0, fourth = 0.0;
    for (Index j = 0; j < p; ++j)
      for (Index i = 0; i < p; ++i) {
        if (i == j) continue;
        const double pr = c(i, j) * s(i) * s(j);
        const double pr2 = pr * pr;
        sq += pr2;
        fourth += pr2 * pr2;
      }
    res.average_squared(m) = sq / pairs;
    res.average_fourth(m) = fourth / pairs;
  }
  auto argmin = [](const Vector& v) {
    Index best = 0;
    for (Index m = 1; m < v.size(); ++m)
      if (std::isfinite(v(m)) && v(m) < v(best)) best = m;
    return best;
  };
  res.suggested_squared = argmin(res.average_squared);
  res.suggested_fourth = argmin(res.average_fourth);
  return res;
}

EigenvalueRules eigenvalue_rules(const Vector& ev, Index n_obs) {
  const Index p = ev.size();
  if (p < 1) throw Error(ErrorCode::invalid_argument, "no eigenvalues were given");
  if (n_obs <= 0)
    throw Error(ErrorCode::insufficient_data,
                "the empirical Kaiser criterion needs the number of observations; it is unknown (0)");
  EigenvalueRules res;
  while (res.kaiser < p && ev(res.kaiser) > 1.0) ++res.kaiser;
  const double edge = std::pow(1.0 + std::sqrt(static_cast<double>(p) / static_cast<double>(n_obs)), 2);
  res.ekc_reference.resize(p);
  double before = 0.0;  // sum of the eigenvalues before position j
  for (Index j = 0; j < p; ++j) {
    res.ekc_reference(j) = std::max(edge * (static_cast<double>(p) - before) / static_cast<double>(p - j), 1.0);
    before += ev(j);
  }
  while (res.empirical_kaiser < p && ev(res.empirical_kaiser) > res.ekc_reference(res.empirical_kaiser))
    ++res.empirical_kaiser;
  return res;
}

namespace {

std::string plural(Index k) { return k == 1 ? "factor" : "factors"; }

FactorCountResult assemble(const CorrelationResult& corr, ParallelAnalysisResult pa) {
  FactorCountResult out;
  const Index p = corr.matrix.rows();
  out.items = p;
  out.n_obs = corr.n_obs;
  out.map = minimum_average_partial(corr.matrix);
  out.eigen = eigenvalue_rules(pa.observed_pc, corr.n_obs);
  out.scree.position = Vector::LinSpaced(p, 1.0, static_cast<double>(p));
  out.scree.observed_pc = pa.observed_pc;
  out.scree.random_pc = pa.random_pc_threshold();
  out.scree.observed_factor = pa.observed_factor;
  out.scree.random_factor = pa.random_factor_threshold();

  const std::string against =
      pa.threshold == RandomThreshold::mean
          ? fmt::format("the mean of {} {} random data sets", pa.replicates, to_string(pa.source))
          : fmt::format("the {:g}th percentile of {} {} random data sets", pa.percentile, pa.replicates,
                        to_string(pa.source));
  out.table.push_back({"parallel analysis, factor eigenvalues", pa.suggested_factor,
                       fmt::format("eigenvalues of the correlation matrix with squared multiple correlations on the "
                                   "diagonal, above {}",
                                   against),
                       true});
  out.table.push_back({"parallel analysis, component eigenvalues", pa.suggested_pc,
                       fmt::format("eigenvalues of the correlation matrix above {}", against), false});
  out.table.push_back({"minimum average partial (squared)", out.map.suggested_squared,
                       "components whose removal makes the average squared partial correlation smallest", false});
  out.table.push_back({"minimum average partial (fourth power)", out.map.suggested_fourth,
                       "components whose removal makes the average fourth power of the partial correlations smallest",
                       false});
  out.table.push_back({"empirical Kaiser criterion", out.eigen.empirical_kaiser,
                       "leading eigenvalues above a reference that accounts for sample size and earlier eigenvalues",
                       false});
  out.table.push_back({"eigenvalue above one", out.eigen.kaiser, "eigenvalues of the correlation matrix above 1",
                       false});

  // The rule (common practice): parallel analysis on factor eigenvalues leads; the other rules are
  // shown beside it and any disagreement is reported.
  out.suggested = pa.suggested_factor;
  Index low = out.suggested, high = out.suggested;
  for (const auto& row : out.table) {
    low = std::min(low, row.factors);
    high = std::max(high, row.factors);
  }
  if (out.suggested == 0) {
    out.reason = fmt::format(
        "no factor stands out from random data: even the largest eigenvalue of the reduced correlation matrix "
        "({:.3f}) does not exceed {} ({:.3f}); the items may not share a common factor",
        pa.observed_factor(0), against, pa.random_factor_threshold()(0));
  } else if (out.suggested == p) {
    out.reason = fmt::format(
        "{} {}: parallel analysis on factor eigenvalues is the primary rule here (common practice), and all {} "
        "eigenvalues of the reduced correlation matrix exceed {}",
        out.suggested, plural(out.suggested), p, against);
  } else {
    out.reason = fmt::format(
        "{} {}: parallel analysis on factor eigenvalues is the primary rule here (common practice); the first {} "
        "eigenvalues of the reduced correlation matrix exceed {}, eigenvalue {} does not ({:.3f} against {:.3f})",
        out.suggested, plural(out.suggested), out.suggested, against, out.suggested + 1,
        pa.observed_factor(out.suggested), pa.random_factor_threshold()(out.suggested));
  }
  const Index map = out.map.suggested_squared;
  if (map == out.suggested)
    out.reason += "; the minimum average partial test agrees";
  else
    out.reason += fmt::format("; the minimum average partial test suggests {}", map);
  if (low != high)
    out.notes.push_back(fmt::format(
        "the rules suggest between {} and {} factors; compare the solutions with these numbers of factors and keep "
        "the one whose factors are interpretable and well defined (common practice)",
        low, high));
  if (out.eigen.kaiser > out.suggested)
    out.notes.push_back(fmt::format(
        "the eigenvalue-above-one rule suggests {} factors, more than parallel analysis; it is known to "
        "over-extract (Zwick & Velicer 1986) and is shown for comparison only",
        out.eigen.kaiser));
  for (const auto& note : corr.notes) out.notes.push_back(note);
  out.parallel = std::move(pa);
  return out;
}

}  // namespace

FactorCountResult count_factors(const Matrix& data, const CorrelationOptions& copts, const FactorCountOptions& options) {
  check_options(options.parallel);
  const CorrelationResult corr = correlation(data, copts);
  const Index p = corr.matrix.rows();
  check_sample_size(p, corr.n_obs);
  const Vector pc = eigenvalues_descending(corr.matrix);
  const Vector factor = reduced_eigenvalues(corr.matrix);
  const auto& o = options.parallel;
  RandomEigenvalues rnd = o.source == RandomDataSource::permutation ? permuted_eigenvalues(data, copts, o)
                                                                      : random_eigenvalues(p, corr.n_obs, o);
  return assemble(corr, summarise(pc, factor, rnd, corr.n_obs, o));
}

FactorCountResult count_factors_from_correlation(const Matrix& r, Index n_obs, const FactorCountOptions& options) {
  check_options(options.parallel);
  const CorrelationResult corr = correlation_from_matrix(r, n_obs);
  check_sample_size(corr.matrix.rows(), n_obs);
  const Vector pc = eigenvalues_descending(corr.matrix);
  const Vector factor = reduced_eigenvalues(corr.matrix);
  const RandomEigenvalues rnd = random_eigenvalues(corr.matrix.rows(), n_obs, options.parallel);
  return assemble(corr, summarise(pc, factor, rnd, n_obs, options.parallel));
}

}  // namespace lode
