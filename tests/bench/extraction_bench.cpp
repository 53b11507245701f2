// Extraction of k factors from a correlation matrix (n = 2000): maximum likelihood, principal axis and
// minimum residual for p = 30..200 and k = 3..15, and ML followed by oblimin with random starts.
#include "bench_inputs.hpp"

#if LODE_BENCH_HAS_EXTRACTION
#include "lode/extraction.hpp"

#include <benchmark/benchmark.h>

namespace {

using lode::ExtractionMethod;
using lode::Matrix;

void BM_Extraction(benchmark::State& state, ExtractionMethod method, const char* input, int factors) {
  const Matrix& r = lode::bench::input(input);
  lode::ExtractionOptions options;  // Lode's defaults (tolerance, iteration cap), as an analyst gets them
  options.method = method;
  options.n_obs = 2000;
  lode::ExtractionResult result;
  for (auto _ : state) {
    result = lode::extract_factors(r, factors, options);
    benchmark::DoNotOptimize(result.loadings.data());
  }
  state.counters["items"] = static_cast<double>(r.cols());
  state.counters["converged"] = result.convergence.converged ? 1.0 : 0.0;
  state.counters["solver_iterations"] = result.convergence.iterations;
}

}  // namespace

#define LODE_EXTRACTION_CASE(method, name, input, k)                                                \
  BENCHMARK_CAPTURE(BM_Extraction, name, method, input, k)                                           \
      ->Unit(benchmark::kMillisecond)                                                                \
      ->UseRealTime()                                                                                \
      ->MeasureProcessCPUTime()
#define LODE_EXTRACTION_CASES(method, prefix)                                                        \
  LODE_EXTRACTION_CASE(method, prefix##_p30_k3, "fa_p30_k3_R", 3);                                   \
  LODE_EXTRACTION_CASE(method, prefix##_p60_k6, "fa_p60_k6_R", 6);                                   \
  LODE_EXTRACTION_CASE(method, prefix##_p100_k10, "fa_p100_k10_R", 10);                              \
  LODE_EXTRACTION_CASE(method, prefix##_p200_k15, "fa_p200_k15_R", 15)

LODE_EXTRACTION_CASES(ExtractionMethod::maximum_likelihood, ml);
LODE_EXTRACTION_CASES(ExtractionMethod::principal_axis, paf);
LODE_EXTRACTION_CASES(ExtractionMethod::minimum_residual, minres);

#if LODE_BENCH_HAS_ROTATION
#include "lode/rotation.hpp"

namespace {

// ML extraction of 10 factors from 100 items, then oblimin (quartimin) from the unrotated start and
// 20 random starts, the starts spread over all cores (the result does not depend on the thread count).
void BM_MlOblimin(benchmark::State& state, const char* input, int factors, int random_starts) {
  const Matrix& r = lode::bench::input(input);
  lode::ExtractionOptions eo;
  eo.n_obs = 2000;
  lode::RotationOptions ro;
  ro.method = lode::RotationMethod::oblimin;
  ro.random_starts = random_starts;
  ro.threads = 0;
  lode::RotationResult rotated;
  for (auto _ : state) {
    const lode::ExtractionResult fa = lode::extract_factors(r, factors, eo);
    rotated = lode::rotate(fa.loadings, ro);
    benchmark::DoNotOptimize(rotated.pattern.data());
  }
  state.counters["starts"] = rotated.starts.starts;
  state.counters["converged"] = rotated.convergence.converged ? 1.0 : 0.0;  // the reported start
  state.counters["starts_converged"] = rotated.starts.converged;
  state.counters["reached_best"] = rotated.starts.reached_best;
}

}  // namespace

BENCHMARK_CAPTURE(BM_MlOblimin, ml_oblimin20_p100_k10, "fa_p100_k10_R", 10, 20)
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime()->MeasureProcessCPUTime();
#endif  // LODE_BENCH_HAS_ROTATION

#endif  // LODE_BENCH_HAS_EXTRACTION
