// Summaries of five-category answers (the first 30 items of ordinal_p60_X, n = 2000): adding the rows,
// merging 1,000 summaries of 30 items into one (the partial results of a cluster), and the byte form.
#include "bench_inputs.hpp"

#if LODE_BENCH_HAS_SUMMARY
#include "lode/summary.hpp"

#include <benchmark/benchmark.h>

namespace {

using lode::Index;
using lode::Matrix;

lode::Summary summary_of(const Matrix& x) {
  lode::Summary s = lode::make_summary(std::vector<std::string>(static_cast<std::size_t>(x.cols())));
  lode::summary_add(s, x);
  return s;
}

void BM_Summary_add(benchmark::State& state) {
  const Matrix x = lode::bench::input("ordinal_p60_X").leftCols(30);
  for (auto _ : state) benchmark::DoNotOptimize(summary_of(x).n.data());
  state.counters["rows"] = static_cast<double>(x.rows());
}

void BM_Summary_merge(benchmark::State& state, int parts) {
  const Matrix x = lode::bench::input("ordinal_p60_X").leftCols(30);
  std::vector<lode::Summary> pieces;
  for (int k = 0; k < parts; ++k) pieces.push_back(summary_of(x.middleRows((k * 97) % (x.rows() - 200), 200)));
  for (auto _ : state) {
    lode::Summary total = pieces.front();
    for (int k = 1; k < parts; ++k) lode::summary_merge(total, pieces[static_cast<std::size_t>(k)]);
    benchmark::DoNotOptimize(total.m2.data());
  }
  state.counters["summaries"] = parts;
}

void BM_Summary_bytes(benchmark::State& state) {
  const lode::Summary s = summary_of(lode::bench::input("ordinal_p60_X").leftCols(30));
  std::size_t size = 0;
  for (auto _ : state) {
    const auto bytes = lode::summary_to_bytes(s);
    size = bytes.size();
    benchmark::DoNotOptimize(lode::summary_from_bytes(bytes.data(), bytes.size()).n.data());
  }
  state.counters["bytes"] = static_cast<double>(size);
}

}  // namespace

BENCHMARK(BM_Summary_add)->Name("BM_Summary/add_p30_n2000")->Unit(benchmark::kMillisecond)->UseRealTime()->MeasureProcessCPUTime();
BENCHMARK_CAPTURE(BM_Summary_merge, merge_1000_p30, 1000)->Name("BM_Summary/merge_1000_p30")->Unit(benchmark::kMillisecond)->UseRealTime()->MeasureProcessCPUTime();
BENCHMARK(BM_Summary_bytes)->Name("BM_Summary/bytes_round_trip_p30")->Unit(benchmark::kMillisecond)->UseRealTime()->MeasureProcessCPUTime();

#endif  // LODE_BENCH_HAS_SUMMARY
