// How many factors: parallel analysis (Horn 1965) on component and on reduced-matrix (factor)
// eigenvalues, Velicer's (1976) minimum average partial test with its fourth-power variant
// (Velicer, Eaton & Fava 2000), the eigenvalue-above-one rule, the empirical Kaiser criterion
// (Braeken & van Assen 2017), scree data and a consensus table.
#pragma once

#include "lode/common.hpp"
#include "lode/correlation.hpp"
#include "lode/random.hpp"

#include <cstdint>
#include <functional>
#include <string>
#include <vector>

namespace lode {

// Where parallel analysis gets its random data. New sources (e.g. resampling each ordinal item to its
// observed category frequencies) are added as new values here and a new case in factor_count.cpp's
// replicate generator; `custom` lets a caller plug in any generator without touching the core.
enum class RandomDataSource {
  normal_theory,  // each replicate's correlation matrix drawn from the Wishart distribution (Bartlett)
  permutation,    // each item's answers shuffled independently (keeps every item's distribution)
  custom,         // ParallelAnalysisOptions::custom_source draws each replicate's correlation matrix
};

const char* to_string(RandomDataSource source) noexcept;

// What random eigenvalues the observed ones are compared with.
enum class RandomThreshold { percentile, mean };

// Draws one random correlation matrix (p x p, written into `out`, already sized) from `engine`.
// Called concurrently from several threads: it must not touch shared mutable state.
using RandomCorrelationFn = std::function<void(RandomEngine& engine, Matrix& out)>;

struct ParallelAnalysisOptions {
  Index replicates = 500;  // random data sets
  RandomThreshold threshold = RandomThreshold::percentile;
  double percentile = 95.0;  // in (0, 100); quantiles interpolate linearly (Hyndman & Fan 1996, type 7)
  RandomDataSource source = RandomDataSource::normal_theory;
  RandomCorrelationFn custom_source;  // used when source == custom
  std::uint64_t seed = 20260101;      // replicate i draws from random_stream(seed, i)
  int threads = 0;                    // 0 = all cores; the result does not depend on it
  ProgressFn progress;                // replicates done / total; return false to cancel
};

// Random eigenvalues: one column per replicate, positions (largest first) down the rows.
struct RandomEigenvalues {
  Matrix pc;      // eigenvalues of the random correlation matrices
  Matrix factor;  // eigenvalues of the same matrices with squared multiple correlations on the diagonal
};

struct ParallelAnalysisResult {
  Vector observed_pc;      // eigenvalues of R, largest first
  Vector observed_factor;  // eigenvalues of the reduced R (SMC diagonal), largest first
  Vector random_pc_mean, random_pc_percentile;
  Vector random_factor_mean, random_factor_percentile;
  Index suggested_pc = 0;      // leading observed PC eigenvalues above their random threshold
  Index suggested_factor = 0;  // same for reduced-matrix eigenvalues
  Index replicates = 0;
  Index n_obs = 0;
  RandomThreshold threshold = RandomThreshold::percentile;
  double percentile = 95.0;
  RandomDataSource source = RandomDataSource::normal_theory;
  std::uint64_t seed = 0;
  // The thresholds actually compared against (mean or percentile, per `threshold`).
  const Vector& random_pc_threshold() const {
    return threshold == RandomThreshold::mean ? random_pc_mean : random_pc_percentile;
  }
  const Vector& random_factor_threshold() const {
    return threshold == RandomThreshold::mean ? random_factor_mean : random_factor_percentile;
  }
};

// Velicer's minimum average partial test. Entry m (m = 0 .. p-1) is the average over item pairs of the
// squared (or fourth power of the) partial correlations after removing the first m principal
// components; entry 0 uses the correlations themselves. The suggestion is the m of the minimum.
struct MapResult {
  Vector average_squared;  // Velicer (1976)
  Vector average_fourth;   // Velicer, Eaton & Fava (2000)
  Index suggested_squared = 0;
  Index suggested_fourth = 0;
};

// Eigenvalue-based rules on the observed PC eigenvalues.
struct EigenvalueRules {
  Index kaiser = 0;           // eigenvalues above one
  Vector ekc_reference;       // empirical Kaiser criterion reference value for each position
  Index empirical_kaiser = 0; // leading eigenvalues above their reference
};

// Everything a scree plot needs, by position 1..p.
struct ScreeData {
  Vector position;         // 1, 2, ..., p
  Vector observed_pc;
  Vector random_pc;        // the threshold used (mean or percentile)
  Vector observed_factor;
  Vector random_factor;
};

// One line of the consensus table.
struct CountSuggestion {
  std::string rule;       // e.g. "parallel analysis, factor eigenvalues"
  Index factors = 0;
  std::string basis;      // what the rule compared, in plain words
  bool primary = false;   // the rule the suggested count follows
};

struct FactorCountOptions {
  ParallelAnalysisOptions parallel;
};

struct FactorCountResult {
  Index items = 0;
  Index n_obs = 0;
  ParallelAnalysisResult parallel;
  MapResult map;
  EigenvalueRules eigen;
  ScreeData scree;
  std::vector<CountSuggestion> table;  // each rule side by side
  Index suggested = 0;
  std::string reason;               // plain-language reason for `suggested`
  std::vector<std::string> notes;   // cautions (disagreement, correlation notes)
};

// --- Whole analysis ---------------------------------------------------------------------------

// From raw data (rows = respondents, columns = items, NaN = missing); correlations per `correlation`.
// Both random-data sources are available.
FactorCountResult count_factors(const Matrix& data, const CorrelationOptions& correlation_options = {},
                                const FactorCountOptions& options = {});

// From a correlation matrix and its sample size (needed for the random data and the empirical Kaiser
// criterion). The permutation source needs raw data and is refused here.
FactorCountResult count_factors_from_correlation(const Matrix& r, Index n_obs, const FactorCountOptions& options = {});

// --- The parts ------------------------------------------------------------------------------------

// Parallel analysis (Horn 1965) of an observed correlation matrix with normal-theory or custom random
// data (Humphreys & Ilgen 1969 for the reduced-matrix version).
ParallelAnalysisResult parallel_analysis(const Matrix& r, Index n_obs, const ParallelAnalysisOptions& options = {});

// Parallel analysis from raw data; any source, correlations per `correlation_options` in the observed
// and in every permuted data set.
ParallelAnalysisResult parallel_analysis(const Matrix& data, const CorrelationOptions& correlation_options,
                                         const ParallelAnalysisOptions& options);

// Random eigenvalues of p items and n_obs observations, normal theory or custom source.
RandomEigenvalues random_eigenvalues(Index p, Index n_obs, const ParallelAnalysisOptions& options);

// Random eigenvalues by permuting each column of `data` (within its answered rows, so every item keeps
// its missing-value pattern and its distribution) and correlating per `correlation_options`.
RandomEigenvalues permuted_eigenvalues(const Matrix& data, const CorrelationOptions& correlation_options,
                                       const ParallelAnalysisOptions& options);

// One correlation matrix of p uncorrelated normal variables observed n_obs times, drawn directly as a
// Wishart(I, n_obs - 1) matrix by the Bartlett decomposition (Bartlett 1933; Odell & Feiveson 1966)
// and scaled to unit diagonal. Cost does not depend on n_obs. Needs n_obs > p.
Matrix wishart_correlation(Index p, Index n_obs, RandomEngine& engine);

// Minimum average partial test (Velicer 1976; Velicer, Eaton & Fava 2000) of a correlation matrix.
MapResult minimum_average_partial(const Matrix& r);

// Eigenvalue above one (common practice since Kaiser 1960) and the empirical Kaiser criterion
// (Braeken & van Assen 2017): reference l_j = max((1 + sqrt(p/n))^2 (p - sum_{i<j} lambda_i) / (p - j + 1), 1).
EigenvalueRules eigenvalue_rules(const Vector& eigenvalues_desc, Index n_obs);


}  // namespace lode
