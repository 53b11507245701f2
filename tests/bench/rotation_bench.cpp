// Rotation of unrotated loadings (100 items, 10 factors) with random starts: oblimin and geomin with
// the unrotated start and 20 random starts spread over all cores, varimax from the unrotated start.
#include "bench_inputs.hpp"

#if LODE_BENCH_HAS_ROTATION
#include "lode/rotation.hpp"

#include <benchmark/benchmark.h>

namespace {

using lode::Matrix;
using lode::RotationMethod;

void BM_Rotation(benchmark::State& state, RotationMethod method, const char* input, int random_starts) {
  const Matrix& loadings = lode::bench::input(input);
  lode::RotationOptions options;  // Lode's defaults otherwise (Kaiser normalisation, tolerance 1e-8)
  options.method = method;
  options.random_starts = random_starts;
  options.threads = 0;
  lode::RotationResult result;
  for (auto _ : state) {
    result = lode::rotate(loadings, options);
    benchmark::DoNotOptimize(result.pattern.data());
  }
  state.counters["starts"] = result.starts.starts;
  state.counters["converged"] = result.convergence.converged ? 1.0 : 0.0;  // the reported start
  state.counters["starts_converged"] = result.starts.converged;
  state.counters["reached_best"] = result.starts.reached_best;
}

}  // namespace

BENCHMARK_CAPTURE(BM_Rotation, oblimin20_p100_k10, RotationMethod::oblimin, "rot_p100_k10_L", 20)
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime()->MeasureProcessCPUTime();
BENCHMARK_CAPTURE(BM_Rotation, geomin20_p100_k10, RotationMethod::geomin, "rot_p100_k10_L", 20)
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime()->MeasureProcessCPUTime();
BENCHMARK_CAPTURE(BM_Rotation, varimax_p100_k10, RotationMethod::varimax, "rot_p100_k10_L", 0)
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime()->MeasureProcessCPUTime();

#endif  // LODE_BENCH_HAS_ROTATION
