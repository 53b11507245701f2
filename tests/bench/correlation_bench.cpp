// Correlation matrices of raw data, and the machine's matrix-multiply rate (the practical ceiling).
#include "bench_inputs.hpp"
#include "lode/correlation.hpp"

#include <benchmark/benchmark.h>

namespace {

using lode::Matrix;

void BM_Correlation(benchmark::State& state, const char* input) {
  const Matrix x = lode::bench::read_input(input);
  for (auto _ : state) benchmark::DoNotOptimize(lode::correlation(x).matrix.data());
  state.counters["rows"] = static_cast<double>(x.rows());
  state.counters["items"] = static_cast<double>(x.cols());
  // Useful arithmetic: the cross-product's n*p*(p+1)/2 multiply-adds.
  state.counters["flops"] = benchmark::Counter(static_cast<double>(x.rows()) * static_cast<double>(x.cols()) *
                                                   static_cast<double>(x.cols() + 1),
                                               benchmark::Counter::kIsIterationInvariantRate);
}

void BM_CorrelationPairwiseMissing(benchmark::State& state, const char* input) {
  const Matrix x = lode::bench::read_input(input);
  for (auto _ : state) benchmark::DoNotOptimize(lode::correlation(x).matrix.data());
}

// A dense product C = A' A on two threads' worth of Eigen code: the rate the cross-product step could
// reach at best on this machine.
void BM_MatrixMultiplyRate(benchmark::State& state) {
  const Index n = state.range(0);
  const Matrix a = Matrix::Random(n, n), b = Matrix::Random(n, n);
  Matrix c(n, n);
  for (auto _ : state) {
    c.noalias() = a * b;
    benchmark::DoNotOptimize(c.data());
  }
  state.counters["flops"] = benchmark::Counter(2.0 * static_cast<double>(n) * static_cast<double>(n) * static_cast<double>(n),
                                               benchmark::Counter::kIsIterationInvariantRate);
}

}  // namespace

using lode::Index;

BENCHMARK_CAPTURE(BM_Correlation, n10000_p50, "corr_n10000_p50")->Unit(benchmark::kMillisecond);
BENCHMARK_CAPTURE(BM_Correlation, n100000_p50, "corr_n100000_p50")->Unit(benchmark::kMillisecond);
BENCHMARK_CAPTURE(BM_Correlation, n1000000_p50, "corr_n1000000_p50")->Unit(benchmark::kMillisecond)->MinTime(2.0);
BENCHMARK_CAPTURE(BM_Correlation, n100000_p10, "corr_n100000_p10")->Unit(benchmark::kMillisecond);
BENCHMARK_CAPTURE(BM_Correlation, n100000_p100, "corr_n100000_p100")->Unit(benchmark::kMillisecond);
BENCHMARK_CAPTURE(BM_Correlation, n100000_p200, "corr_n100000_p200")->Unit(benchmark::kMillisecond);
BENCHMARK_CAPTURE(BM_CorrelationPairwiseMissing, n100000_p50_missing5pct, "corr_n100000_p50_missing")
    ->Unit(benchmark::kMillisecond);
BENCHMARK(BM_MatrixMultiplyRate)->Arg(1000)->Unit(benchmark::kMillisecond);
