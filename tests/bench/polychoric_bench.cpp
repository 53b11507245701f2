// Polychoric correlation matrix of five-category items, n = 2000: 60 items (1770 pairs) and the first
// 20 of them (190 pairs, the size R's polycor is timed on), pairs spread over all cores.
#include "bench_inputs.hpp"

#if LODE_BENCH_HAS_POLYCHORIC
#include "lode/polychoric.hpp"

#include <benchmark/benchmark.h>

namespace {

using lode::Index;
using lode::Matrix;

void BM_Polychoric(benchmark::State& state, const char* input, Index items) {
  const Matrix x = lode::bench::input(input).leftCols(items);
  lode::CorrelationOptions options;  // Lode's defaults: two-step estimates, pairwise deletion
  options.kind = lode::CorrelationKind::polychoric;
  lode::PolychoricResult result;
  for (auto _ : state) {
    result = lode::polychoric_correlation(x, options);
    benchmark::DoNotOptimize(result.correlation.matrix.data());
  }
  state.counters["items"] = static_cast<double>(items);
  state.counters["converged"] = result.pairs_not_converged == 0 ? 1.0 : 0.0;
}

}  // namespace

BENCHMARK_CAPTURE(BM_Polychoric, polychoric_p60_n2000, "ordinal_p60_X", 60)->Unit(benchmark::kMillisecond)->UseRealTime()->MeasureProcessCPUTime();
BENCHMARK_CAPTURE(BM_Polychoric, polychoric_p20_n2000, "ordinal_p60_X", 20)->Unit(benchmark::kMillisecond)->UseRealTime()->MeasureProcessCPUTime();

#endif  // LODE_BENCH_HAS_POLYCHORIC
