// Bootstrap intervals of an ML + oblimin solution (n = 500, p = 30, k = 3): every replicate resamples
// the rows, recomputes the correlations, extracts by ML and rotates by oblimin with Lode's default
// random starts; replicates spread over all cores.
#include "bench_inputs.hpp"

#if LODE_BENCH_HAS_BOOTSTRAP && LODE_BENCH_HAS_EXTRACTION && LODE_BENCH_HAS_ROTATION
#include "lode/bootstrap.hpp"
#include "lode/correlation.hpp"
#include "lode/extraction.hpp"
#include "lode/rotation.hpp"

#include <benchmark/benchmark.h>

namespace {

using lode::Index;
using lode::Matrix;

lode::FactorSolution ml_oblimin(const Matrix& r, int factors, Index n_obs) {
  lode::ExtractionOptions eo;
  eo.n_obs = n_obs;
  const lode::ExtractionResult fa = lode::extract_factors(r, factors, eo);
  lode::RotationOptions ro;  // threads = 1 (the default): the replicates already use every core
  ro.method = lode::RotationMethod::oblimin;
  const lode::RotationResult rot = lode::rotate(fa.loadings, ro);
  lode::FactorSolution s;
  s.loadings = rot.pattern;
  s.factor_correlations = rot.factor_correlations;
  s.uniquenesses = fa.uniquenesses;
  s.converged = fa.convergence.converged && rot.convergence.converged;
  if (!s.converged) s.problem = fa.convergence.converged ? "rotation did not converge" : "ML did not converge";
  return s;
}

void BM_Bootstrap(benchmark::State& state, const char* input, int factors, Index replicates) {
  const Matrix& x = lode::bench::input(input);
  const Index n = x.rows();
  const lode::FactorSolution full = ml_oblimin(lode::correlation(x).matrix, factors, n);
  const lode::SolutionFitter fit = [factors, n](const Matrix& r) { return ml_oblimin(r, factors, n); };
  lode::BootstrapOptions options;
  options.replicates = replicates;
  lode::BootstrapResult result;
  for (auto _ : state) {
    result = lode::bootstrap_solution(x, full, fit, options);
    benchmark::DoNotOptimize(result.loadings_lower.data());
  }
  state.counters["replicates"] = static_cast<double>(result.replicates_used);
  state.counters["failed"] = static_cast<double>(result.replicates_failed);
}

}  // namespace

BENCHMARK_CAPTURE(BM_Bootstrap, bootstrap_n500_p30_k3_r1000, "boot_n500_p30_X", 3, 1000)
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime()
    ->Repetitions(3);
BENCHMARK_CAPTURE(BM_Bootstrap, bootstrap_n500_p30_k3_r100, "boot_n500_p30_X", 3, 100)
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime();

#endif
