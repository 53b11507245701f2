#include "lode/scores.hpp"

#include "lode/correlation.hpp"

#include <fmt/format.h>

#include <cmath>
#include <limits>
#include <map>
#include <optional>

namespace lode {

const char* to_string(ScoreMethod method) noexcept {
  switch (method) {
    case ScoreMethod::regression: return "regression";
    case ScoreMethod::bartlett: return "bartlett";
    case ScoreMethod::correlation_preserving: return "correlation_preserving";
  }
  return "unknown";
}

const char* to_string(MissingItemRule rule) noexcept {
  return rule == MissingItemRule::score_from_answered ? "score_from_answered" : "leave_missing";
}

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// Phi, or the identity when empty.
Matrix phi_or_identity(const Matrix& phi, Index k) { return phi.size() == 0 ? Matrix::Identity(k, k) : phi; }

void check_solution(const Matrix& r, const Matrix& loadings, const Matrix& phi, const Vector* uniquenesses,
                    const std::vector<std::string>& names) {
  const Index p = loadings.rows(), k = loadings.cols();
  if (p == 0 || k == 0) throw Error(ErrorCode::invalid_argument, "the loading matrix is empty");
  if (k > p)
    throw Error(ErrorCode::too_many_factors, fmt::format("the solution has {} factors but only {} items", k, p));
  for (Index i = 0; i < p; ++i)
    for (Index j = 0; j < k; ++j)
      if (!std::isfinite(loadings(i, j)))
        throw Error(ErrorCode::invalid_argument,
                    fmt::format("the loading of {} on factor {} is missing or infinite", item_label(names, i), j + 1));
  if (r.rows() != p || r.cols() != p)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the correlation matrix is {} x {}, but the loadings have {} items", r.rows(), r.cols(), p));
  if (!r.allFinite()) throw Error(ErrorCode::invalid_argument, "the correlation matrix contains a missing or infinite value");
  if ((r - r.transpose()).cwiseAbs().maxCoeff() > 1e-10)
    throw Error(ErrorCode::invalid_argument, "the correlation matrix is not symmetric");
  if (phi.size() != 0) {
    if (phi.rows() != k || phi.cols() != k)
      throw Error(ErrorCode::invalid_argument,
                  fmt::format("the factor correlation matrix is {} x {}, but there are {} factors", phi.rows(), phi.cols(), k));
    if (!phi.allFinite() || (phi - phi.transpose()).cwiseAbs().maxCoeff() > 1e-10)
      throw Error(ErrorCode::invalid_argument, "the factor correlation matrix is not a finite symmetric matrix");
    for (Index j = 0; j < k; ++j)
      if (std::abs(phi(j, j) - 1.0) > 1e-8)
        throw Error(ErrorCode::invalid_argument,
                    fmt::format("the factor correlation matrix has {} on its diagonal for factor {}; 1 is required",
                                phi(j, j), j + 1));
    if (!is_positive_definite(phi))
      throw Error(ErrorCode::not_positive_definite,
                  fmt::format("the factor correlation matrix is not positive definite (smallest eigenvalue {:.3g})",
                              eigenvalues_descending(phi).minCoeff()));
  }
  if (!is_positive_definite(r))
    throw Error(ErrorCode::not_positive_definite,
                fmt::format("the correlation matrix is not positive definite (smallest eigenvalue {:.3g}); factor "
                            "scores need its inverse",
                            eigenvalues_descending(r).minCoeff()));
  if (uniquenesses) {
    if (uniquenesses->size() != p)
      throw Error(ErrorCode::invalid_argument,
                  fmt::format("there are {} uniquenesses for {} items", uniquenesses->size(), p));
    for (Index i = 0; i < p; ++i)
      if (!std::isfinite((*uniquenesses)(i)))
        throw Error(ErrorCode::invalid_argument,
                    fmt::format("the uniqueness of {} is missing or infinite", item_label(names, i)));
  }
}

// Inverse square root (or square root) of a symmetric positive definite matrix; nullopt if not PD.
std::optional<Matrix> symmetric_power(const Matrix& m, double power) {
  Eigen::SelfAdjointEigenSolver<Matrix> es(m);
  if (es.info() != Eigen::Success) return std::nullopt;
  const Vector ev = es.eigenvalues();
  if (ev.minCoeff() <= 1e-12 * std::max(1.0, ev.maxCoeff())) return std::nullopt;
  return es.eigenvectors() * ev.array().pow(power).matrix().asDiagonal() * es.eigenvectors().transpose();
}

// Weights for one set of items; nullopt with a reason when they cannot be formed.
std::optional<Matrix> weights_for(const Matrix& r, const Matrix& l, const Matrix& phi, const Vector& psi,
                                  ScoreMethod method, std::string* why) {
  switch (method) {
    case ScoreMethod::regression: {
      Eigen::LLT<Matrix> llt(r);
      if (llt.info() != Eigen::Success) {
        *why = "the correlations of the answered items are not positive definite";
        return std::nullopt;
      }
      return Matrix(llt.solve(l * phi));
    }
    case ScoreMethod::bartlett: {
      if (psi.minCoeff() <= 0.0) {
        *why = "a uniqueness is zero or negative";
        return std::nullopt;
      }
      const Matrix pl = psi.cwiseInverse().asDiagonal() * l;  // Psi^-1 Lambda
      Eigen::LLT<Matrix> llt(l.transpose() * pl);
      if (llt.info() != Eigen::Success || l.rows() < l.cols()) {
        *why = "the answered items do not identify every factor";
        return std::nullopt;
      }
      return Matrix(llt.solve(pl.transpose()).transpose());
    }
    case ScoreMethod::correlation_preserving: {
      // W = R^-1 Lambda Phi^1/2 (Phi^1/2 Lambda' R^-1 Lambda Phi^1/2)^-1/2 Phi^1/2 (ten Berge et al. 1999),
      // so that W' R W = Phi exactly.
      Eigen::LLT<Matrix> llt(r);
      if (llt.info() != Eigen::Success) {
        *why = "the correlations of the answered items are not positive definite";
        return std::nullopt;
      }
      const auto ph = symmetric_power(phi, 0.5);
      if (!ph) {
        *why = "the factor correlation matrix is not positive definite";
        return std::nullopt;
      }
      const Matrix ril = llt.solve(l);
      const Matrix m = *ph * l.transpose() * ril * *ph;
      const auto mi = symmetric_power(0.5 * (m + m.transpose()), -0.5);
      if (!mi) {
        *why = "the answered items do not identify every factor";
        return std::nullopt;
      }
      return Matrix(ril * *ph * *mi * *ph);
    }
  }
  *why = "unknown scoring method";
  return std::nullopt;
}

}  // namespace

Matrix factor_score_weights(const Matrix& r, const Matrix& loadings, const Matrix& phi, const Vector& uniquenesses,
                            ScoreMethod method, const std::vector<std::string>& item_names) {
  check_solution(r, loadings, phi, &uniquenesses, item_names);
  if (method == ScoreMethod::bartlett)
    for (Index i = 0; i < uniquenesses.size(); ++i)
      if (uniquenesses(i) <= 0.0)
        throw Error(ErrorCode::invalid_argument,
                    fmt::format("Bartlett scores need positive uniquenesses, but {} has uniqueness {:.3g} (a Heywood "
                                "case); use regression or correlation-preserving scores, or refit",
                                item_label(item_names, i), uniquenesses(i)));
  std::string why;
  auto w = weights_for(r, loadings, phi_or_identity(phi, loadings.cols()), uniquenesses, method, &why);
  if (!w) throw Error(ErrorCode::not_positive_definite, fmt::format("{} scores cannot be formed: {}", to_string(method), why));
  return *w;
}

Vector factor_determinacy(const Matrix& r, const Matrix& loadings, const Matrix& phi) {
  check_solution(r, loadings, phi, nullptr, {});
  const Matrix s = loadings * phi_or_identity(phi, loadings.cols());
  const Matrix ris = r.llt().solve(s);
  // Rounding can push a determinacy of (almost) 1 slightly above; clamp to the valid range.
  return (s.transpose() * ris).diagonal().cwiseMax(0.0).cwiseMin(1.0).cwiseSqrt();
}

namespace {

// The means and standard deviations (n - 1) the scores standardise with: the caller's (those behind
// R) or the data's own, over each item's answered values; checked.
void standardise(FactorScores& out, const Matrix& data, const ScoreOptions& options) {
  const auto& names = options.item_names;
  const Index p = data.cols(), n = data.rows();
  if (options.means.size() != 0 || options.sds.size() != 0) {
    if (options.means.size() != p || options.sds.size() != p)
      throw Error(ErrorCode::invalid_argument,
                  fmt::format("{} means and {} standard deviations were given for {} items", options.means.size(),
                              options.sds.size(), p));
    out.means = options.means;
    out.sds = options.sds;
  } else {
    out.means.resize(p);
    out.sds.resize(p);
    for (Index j = 0; j < p; ++j) {
      double sum = 0.0;
      Index m = 0;
      for (Index i = 0; i < n; ++i)
        if (!std::isnan(data(i, j))) {
          sum += data(i, j);
          ++m;
        }
      if (m < 2)
        throw Error(ErrorCode::insufficient_data,
                    fmt::format("{} has {} answered value(s); at least 2 are needed to standardise it",
                                item_label(names, j), m));
      const double mean = sum / static_cast<double>(m);
      double ss = 0.0;
      for (Index i = 0; i < n; ++i)
        if (!std::isnan(data(i, j))) ss += (data(i, j) - mean) * (data(i, j) - mean);
      out.means(j) = mean;
      out.sds(j) = std::sqrt(ss / static_cast<double>(m - 1));
    }
  }
  for (Index j = 0; j < p; ++j)
    if (!(std::isfinite(out.means(j)) && std::isfinite(out.sds(j)) && out.sds(j) > 0.0))
      throw Error(ErrorCode::insufficient_data,
                  fmt::format("{} cannot be standardised (mean {}, standard deviation {}); a constant item cannot be "
                              "scored",
                              item_label(names, j), out.means(j), out.sds(j)));
}

}  // namespace

FactorScores factor_scores(const Matrix& data, const Matrix& r, const Matrix& loadings, const Matrix& phi_in,
                           const Vector& uniquenesses, const ScoreOptions& options) {
  const auto& names = options.item_names;
  const Index p = loadings.rows(), k = loadings.cols(), n = data.rows();
  const Matrix w = factor_score_weights(r, loadings, phi_in, uniquenesses, options.method, names);
  const Matrix phi = phi_or_identity(phi_in, k);
  if (data.cols() != p)
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the data have {} columns, but the solution has {} items", data.cols(), p));
  if (n == 0) throw Error(ErrorCode::insufficient_data, "the data to score have no rows");
  if (!(options.min_answered_share >= 0.0 && options.min_answered_share <= 1.0))
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the minimum share of answered items must lie in [0, 1], not {}", options.min_answered_share));
  if (!(options.low_determinacy >= 0.0 && options.low_determinacy <= 1.0))
    throw Error(ErrorCode::invalid_argument,
                fmt::format("the determinacy threshold must lie in [0, 1], not {}", options.low_determinacy));
  for (Index i = 0; i < n; ++i)
    for (Index j = 0; j < p; ++j)
      if (std::isinf(data(i, j)))
        throw Error(ErrorCode::invalid_argument,
                    fmt::format("{} has an infinite value in row {}", item_label(names, j), i + 1));

  FactorScores out;
  out.method = options.method;
  out.missing = options.missing;
  out.weights = w;
  out.rows_total = n;

  standardise(out, data, options);

  // Quality of the complete-row scores.
  const Matrix s = loadings * phi;
  out.determinacy = factor_determinacy(r, loadings, phi_in);
  const Matrix cov = w.transpose() * r * w;
  const Vector sd = cov.diagonal().cwiseSqrt();
  out.validity = (w.transpose() * s).diagonal().cwiseQuotient(sd);
  out.score_correlations = sd.cwiseInverse().asDiagonal() * cov * sd.cwiseInverse().asDiagonal();
  out.low_determinacy.resize(static_cast<std::size_t>(k));
  for (Index j = 0; j < k; ++j) out.low_determinacy[static_cast<std::size_t>(j)] = out.determinacy(j) < options.low_determinacy;

  // Scores, row by row; weights for partial rows are computed once per pattern of answered items.
  out.scores = Matrix::Constant(n, k, kNaN);
  std::map<std::vector<bool>, std::optional<Matrix>> pattern_weights;
  Index not_estimable = 0, too_few = 0;
  const auto needed = static_cast<Index>(std::max(1.0, std::ceil(options.min_answered_share * static_cast<double>(p) - 1e-9)));
  Vector z(p);
  for (Index i = 0; i < n; ++i) {
    std::vector<bool> answered(static_cast<std::size_t>(p));
    Index count = 0;
    for (Index j = 0; j < p; ++j) {
      const bool a = !std::isnan(data(i, j));
      answered[static_cast<std::size_t>(j)] = a;
      if (a) {
        z(j) = (data(i, j) - out.means(j)) / out.sds(j);
        ++count;
      }
    }
    if (count == p) {
      out.scores.row(i) = z.transpose() * w;
      ++out.rows_complete;
      continue;
    }
    if (options.missing == MissingItemRule::leave_missing) {
      ++out.rows_missing;
      continue;
    }
    if (count < needed) {
      ++out.rows_missing;
      ++too_few;
      continue;
    }
    auto it = pattern_weights.find(answered);
    if (it == pattern_weights.end()) {
      std::vector<Index> idx;
      for (Index j = 0; j < p; ++j)
        if (answered[static_cast<std::size_t>(j)]) idx.push_back(j);
      const Matrix rs = r(idx, idx);
      const Matrix ls = loadings(idx, Eigen::all);
      const Vector ps = uniquenesses(idx);
      std::string why;
      it = pattern_weights.emplace(answered, weights_for(rs, ls, phi, ps, options.method, &why)).first;
    }
    if (!it->second) {
      ++out.rows_missing;
      ++not_estimable;
      continue;
    }
    const Matrix& ws = *it->second;
    Index a = 0;
    Vector row = Vector::Zero(k);
    for (Index j = 0; j < p; ++j)
      if (answered[static_cast<std::size_t>(j)]) row += z(j) * ws.row(a++).transpose();
    out.scores.row(i) = row.transpose();
    ++out.rows_partial;
  }

  // Notes.
  out.notes.push_back(fmt::format("Scores by the {} method, from items standardised with {}.", to_string(options.method),
                                  options.means.size() ? "the given means and standard deviations"
                                                       : "each item's mean and standard deviation over its answered values"));
  if (options.missing == MissingItemRule::leave_missing) {
    if (out.rows_missing > 0)
      out.notes.push_back(fmt::format("{} of {} rows had a missing item and were left without scores.", out.rows_missing, n));
  } else {
    if (out.rows_partial > 0)
      out.notes.push_back(fmt::format("{} of {} rows were scored from their answered items only (weights recomputed "
                                      "for those items); such scores are less precise than scores from all items.",
                                      out.rows_partial, n));
    if (too_few > 0)
      out.notes.push_back(fmt::format("{} rows answered fewer than {} of the {} items and were left without scores.",
                                      too_few, needed, p));
    if (not_estimable > 0)
      out.notes.push_back(fmt::format("{} rows were left without scores because their answered items do not identify "
                                      "every factor.",
                                      not_estimable));
  }
  for (Index j = 0; j < k; ++j)
    if (out.low_determinacy[static_cast<std::size_t>(j)])
      out.notes.push_back(fmt::format("Factor {} has determinacy {:.2f}, below {:.2f} (common practice): its scores "
                                      "are poorly determined by the items and should not be used for individuals.",
                                      j + 1, out.determinacy(j), options.low_determinacy));
  out.notes.push_back(score_cautions);
  return out;
}

}  // namespace lode
