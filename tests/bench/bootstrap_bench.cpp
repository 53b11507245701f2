// Bootstrap intervals of an ML + oblimin solution (n = 500, p = 30, k = 3) through Lode's pipeline
// (bootstrap_factor_solution with its defaults): every replicate resamples the rows, recomputes the
// correlations, extracts by ML from the full-sample uniquenesses and rotates by oblimin from the
// full-sample rotation carried over to the replicate; replicates spread over all cores. For comparison,
// the same with each replicate fitted from scratch and rotated from the unrotated loadings plus 10
// random starts (oblimin's default for a single analysis).
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

void BM_Bootstrap(benchmark::State& state, const char* input, int factors, Index replicates, bool from_scratch) {
  const Matrix& x = lode::bench::input(input);
  lode::ExtractionOptions eo;  // maximum likelihood
  lode::RotationOptions ro;
  ro.method = lode::RotationMethod::oblimin;
  lode::BootstrapOptions options;
  options.replicates = replicates;
  if (from_scratch) {
    options.replicate_warm_start = false;
    options.replicate_random_starts = -1;  // as the rotation options: oblimin's default 10
  }
  lode::BootstrapResult result;
  for (auto _ : state) {
    result = lode::bootstrap_factor_solution(x, factors, eo, ro, options);
    benchmark::DoNotOptimize(result.loadings_lower.data());
  }
  state.counters["replicates"] = static_cast<double>(result.replicates_used);
  state.counters["failed"] = static_cast<double>(result.replicates_failed);
}

}  // namespace

BENCHMARK_CAPTURE(BM_Bootstrap, bootstrap_n500_p30_k3_r1000, "boot_n500_p30_X", 3, 1000, false)
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime()
    ->MeasureProcessCPUTime()
    ->Repetitions(3);
BENCHMARK_CAPTURE(BM_Bootstrap, bootstrap_n500_p30_k3_r100, "boot_n500_p30_X", 3, 100, false)
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime()
    ->MeasureProcessCPUTime();
// Survey-sized data (k = 5): complete, and with 5% blank answers (pairwise deletion; resamples are
// correlated from row counts, nothing copied).
BENCHMARK_CAPTURE(BM_Bootstrap, bootstrap_n3000_p30_k5_r1000, "boot_n3000_p30_X", 5, 1000, false)
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime()
    ->MeasureProcessCPUTime();
BENCHMARK_CAPTURE(BM_Bootstrap, bootstrap_n3000_p30_k5_r100_missing, "boot_n3000_p30_missing_X", 5, 100, false)
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime()
    ->MeasureProcessCPUTime();
BENCHMARK_CAPTURE(BM_Bootstrap, bootstrap_n10000_p60_k5_r200_missing, "boot_n10000_p60_missing_X", 5, 200, false)
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime()
    ->MeasureProcessCPUTime();
BENCHMARK_CAPTURE(BM_Bootstrap, bootstrap_n500_p30_k3_r100_scratch, "boot_n500_p30_X", 3, 100, true)
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime()
    ->MeasureProcessCPUTime();

#endif
