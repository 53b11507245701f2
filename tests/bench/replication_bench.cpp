// Split-sample replication (ML + oblimin, 100 random halvings of n = 2000, p = 30, k = 5) through Lode's
// pipeline (replicate_halves with its defaults, splits spread over all cores), and the restricted ML fit
// of the generating simple structure to the p = 60, k = 6 correlation matrix (n = 2000).
#include "bench_inputs.hpp"

#if LODE_BENCH_HAS_REPLICATION && LODE_BENCH_HAS_RESTRICTED_FIT
#include "lode/replication.hpp"
#include "lode/restricted_fit.hpp"

#include <benchmark/benchmark.h>

namespace {

using lode::Index;
using lode::Matrix;

void BM_Replication(benchmark::State& state, const char* input, int factors, Index splits) {
  const Matrix& x = lode::bench::input(input);
  lode::ExtractionOptions eo;  // maximum likelihood
  lode::RotationOptions ro;
  ro.method = lode::RotationMethod::oblimin;
  lode::ReplicationOptions options;
  options.splits = splits;
  lode::ReplicationResult result;
  for (auto _ : state) {
    result = lode::replicate_halves(x, factors, eo, ro, options);
    benchmark::DoNotOptimize(result.congruence.data());
  }
  state.counters["splits"] = static_cast<double>(result.splits_used);
  state.counters["median_congruence_min"] = result.congruence_median.minCoeff();
}

// The pattern of make_inputs.py's factor_data: item j on factor j mod k.
void BM_RestrictedFit(benchmark::State& state, const char* input, int factors) {
  const Matrix& r = lode::bench::input(input);
  Matrix pattern = Matrix::Zero(r.rows(), factors);
  for (Index j = 0; j < r.rows(); ++j) pattern(j, j % factors) = 1.0;
  lode::RestrictedFitOptions options;
  options.n_obs = 2000;
  lode::RestrictedFitResult result;
  for (auto _ : state) {
    result = lode::fit_restricted(r, pattern, options);
    benchmark::DoNotOptimize(result.loadings.data());
  }
  state.counters["iterations"] = result.convergence.iterations;
  state.counters["converged"] = result.convergence.converged ? 1.0 : 0.0;
}

}  // namespace

BENCHMARK_CAPTURE(BM_Replication, replication_n2000_p30_k5_s100, "rep_n2000_p30_k5_X", 5, 100)
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime()
    ->MeasureProcessCPUTime();
BENCHMARK_CAPTURE(BM_RestrictedFit, restricted_p60_k6, "fa_p60_k6_R", 6)
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime()
    ->MeasureProcessCPUTime();

#endif
