// Parallel analysis with 1000 normal-theory replicates (Lode's default percentile, 95), against the
// correlation matrix of 60 items, n = 2000; and the same for 20 items and for n = 500 (cost growth).
#include "bench_inputs.hpp"

#if LODE_BENCH_HAS_FACTOR_COUNT
#include "lode/correlation.hpp"
#include "lode/factor_count.hpp"

#include <benchmark/benchmark.h>

namespace {

using lode::Index;
using lode::Matrix;

void BM_ParallelAnalysis(benchmark::State& state, const char* input, Index items, Index n_obs) {
  const Matrix x = lode::bench::input(input).leftCols(items);
  const Matrix r = lode::correlation(x).matrix;
  lode::ParallelAnalysisOptions options;
  options.replicates = 1000;
  options.source = lode::RandomDataSource::normal_theory;
  lode::ParallelAnalysisResult result;
  for (auto _ : state) {
    result = lode::parallel_analysis(r, n_obs, options);
    benchmark::DoNotOptimize(result.random_pc_percentile.data());
  }
  state.counters["items"] = static_cast<double>(items);
  state.counters["replicates"] = static_cast<double>(result.replicates);
  state.counters["suggested"] = static_cast<double>(result.suggested_factor);
}

}  // namespace

BENCHMARK_CAPTURE(BM_ParallelAnalysis, pa_p60_n2000_r1000, "pa_p60_X", 60, 2000)
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime()->MeasureProcessCPUTime();
BENCHMARK_CAPTURE(BM_ParallelAnalysis, pa_p20_n2000_r1000, "pa_p60_X", 20, 2000)
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime()->MeasureProcessCPUTime();
BENCHMARK_CAPTURE(BM_ParallelAnalysis, pa_p60_n500_r1000, "pa_p60_X", 60, 500)
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime()->MeasureProcessCPUTime();

#endif  // LODE_BENCH_HAS_FACTOR_COUNT
