// Correlation matrices of raw data, and the machine's matrix-multiply rate (the practical ceiling of
// the correlation's cross-product step).
#include "bench_inputs.hpp"
#include "lode/correlation.hpp"
#include "lode/parallel.hpp"

#include <benchmark/benchmark.h>

#include <algorithm>
#include <string>

namespace {

using lode::Index;
using lode::Matrix;

void BM_Correlation(benchmark::State& state, const char* input) {
  const Matrix& x = lode::bench::input(input);
  for (auto _ : state) benchmark::DoNotOptimize(lode::correlation(x).matrix.data());
  state.counters["rows"] = static_cast<double>(x.rows());
  state.counters["items"] = static_cast<double>(x.cols());
  // Useful arithmetic: the cross-product's n*p*(p+1)/2 multiply-adds, i.e. n*p*(p+1) flops.
  state.counters["flops"] = benchmark::Counter(static_cast<double>(x.rows()) * static_cast<double>(x.cols()) *
                                                   static_cast<double>(x.cols() + 1),
                                               benchmark::Counter::kIsIterationInvariantRate);
}

// The same with 5% of the cells missing: pairwise-complete correlations (the default policy).
void BM_CorrelationPairwiseMissing(benchmark::State& state, const char* input) {
  const Matrix& x = lode::bench::input(input);
  for (auto _ : state) benchmark::DoNotOptimize(lode::correlation(x).matrix.data());
  state.counters["rows"] = static_cast<double>(x.rows());
  state.counters["items"] = static_cast<double>(x.cols());
}

// The separate input checks (validate_data: items, infinite values, constant items), on one thread.
// correlation() runs them before the sums only for data with missing values; complete Pearson data are
// checked within the pass that sums them.
void BM_CorrelationChecks(benchmark::State& state, const char* input) {
  const Matrix& x = lode::bench::input(input);
  for (auto _ : state) lode::validate_data(x, {});
  state.counters["rows"] = static_cast<double>(x.rows());
  state.counters["items"] = static_cast<double>(x.cols());
}

// A dense product C = A B of two n x n matrices by Eigen, the columns of B split over all hardware
// threads (lode::parallel_for): the rate the core's own compiled code reaches on this machine.
// alternatives.py measures the same product through numpy (OpenBLAS) for comparison.
void BM_MatrixMultiplyRate(benchmark::State& state, Index n) {
  const int threads = lode::default_thread_count();
  const Matrix a = Matrix::Random(n, n), b = Matrix::Random(n, n);
  Matrix c(n, n);
  const Index block = (n + threads - 1) / threads;
  for (auto _ : state) {
    lode::parallel_for(threads, threads, [&](Index t) {
      const Index begin = t * block, cols = std::min(block, n - begin);
      if (cols > 0) c.middleCols(begin, cols).noalias() = a * b.middleCols(begin, cols);
    });
    benchmark::DoNotOptimize(c.data());
  }
  state.counters["cores_used"] = threads;
  state.counters["flops"] = benchmark::Counter(2.0 * static_cast<double>(n) * static_cast<double>(n) * static_cast<double>(n),
                                               benchmark::Counter::kIsIterationInvariantRate);
}

// What the report's machine description needs from inside Lode's build.
[[maybe_unused]] const int context_added = [] {
  benchmark::AddCustomContext("eigen_simd", Eigen::SimdInstructionSetsInUse());
  benchmark::AddCustomContext("lode_threads", std::to_string(lode::default_thread_count()));
  return 0;
}();

}  // namespace

// Cost growth in n (p = 50) and in p (n = 100,000). Wall-clock time: the work runs on several threads.
BENCHMARK_CAPTURE(BM_Correlation, corr_n10000_p50, "corr_n10000_p50")->Unit(benchmark::kMillisecond)->UseRealTime()->MeasureProcessCPUTime();
BENCHMARK_CAPTURE(BM_Correlation, corr_n100000_p50, "corr_n100000_p50")->Unit(benchmark::kMillisecond)->UseRealTime()->MeasureProcessCPUTime();
BENCHMARK_CAPTURE(BM_Correlation, corr_n1000000_p50, "corr_n1000000_p50")->Unit(benchmark::kMillisecond)->UseRealTime()->MeasureProcessCPUTime();
BENCHMARK_CAPTURE(BM_Correlation, corr_n100000_p10, "corr_n100000_p10")->Unit(benchmark::kMillisecond)->UseRealTime()->MeasureProcessCPUTime();
BENCHMARK_CAPTURE(BM_Correlation, corr_n100000_p100, "corr_n100000_p100")->Unit(benchmark::kMillisecond)->UseRealTime()->MeasureProcessCPUTime();
BENCHMARK_CAPTURE(BM_Correlation, corr_n100000_p200, "corr_n100000_p200")->Unit(benchmark::kMillisecond)->UseRealTime()->MeasureProcessCPUTime();
BENCHMARK_CAPTURE(BM_CorrelationPairwiseMissing, corr_n100000_p50_missing, "corr_n100000_p50_missing")
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime()->MeasureProcessCPUTime();
BENCHMARK_CAPTURE(BM_CorrelationPairwiseMissing, corr_n1000000_p50_missing, "corr_n1000000_p50_missing")
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime()->MeasureProcessCPUTime();
BENCHMARK_CAPTURE(BM_CorrelationChecks, corr_checks_n1000000_p50, "corr_n1000000_p50")
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime()->MeasureProcessCPUTime();
BENCHMARK_CAPTURE(BM_MatrixMultiplyRate, matmul_n1000, 1000)->Unit(benchmark::kMillisecond)->UseRealTime()->MeasureProcessCPUTime();
