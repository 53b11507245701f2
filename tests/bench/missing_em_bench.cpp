// The em rule for missing answers and the comparison of groups.
#include "bench_inputs.hpp"
#include "lode/correlation.hpp"
#include "lode/groups.hpp"

#include <benchmark/benchmark.h>

namespace {

using lode::Index;
using lode::Matrix;

// EM means and covariance (to the default criterion, 1e-10) and the correlations from them.
void BM_CorrelationEm(benchmark::State& state, const char* input) {
  const Matrix& x = lode::bench::input(input);
  lode::CorrelationOptions o;
  o.missing = lode::MissingPolicy::em;
  int iterations = 0;
  for (auto _ : state) {
    const lode::CorrelationResult r = lode::correlation(x, o);
    iterations = r.em.convergence.iterations;
    benchmark::DoNotOptimize(r.matrix.data());
  }
  state.counters["rows"] = static_cast<double>(x.rows());
  state.counters["items"] = static_cast<double>(x.cols());
  state.counters["em_iterations"] = iterations;
}

// Pooled ML + oblimin (10 random starts), then each group's ML extraction turned by oblique Procrustes.
void BM_CompareGroups(benchmark::State& state, const char* data, const char* codes, int factors) {
  const Matrix& x = lode::bench::input(data);
  const Matrix& g = lode::bench::input(codes);
  std::vector<std::int64_t> groups(static_cast<std::size_t>(g.rows()));
  for (Index i = 0; i < g.rows(); ++i) groups[static_cast<std::size_t>(i)] = static_cast<std::int64_t>(g(i, 0));
  lode::GroupComparisonOptions o;
  o.factors = factors;
  o.rotation.method = lode::RotationMethod::oblimin;
  for (auto _ : state) benchmark::DoNotOptimize(lode::compare_groups(x, groups, o).groups.data());
  state.counters["groups"] = 10;
}

}  // namespace

BENCHMARK_CAPTURE(BM_CorrelationEm, em_n100000_p50_missing10, "em_n100000_p50_missing10")
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime()->MeasureProcessCPUTime();
BENCHMARK_CAPTURE(BM_CompareGroups, groups_10x1000_p30_k5, "groups_10x1000_p30_X", "groups_10x1000_p30_G", 5)
    ->Unit(benchmark::kMillisecond)
    ->UseRealTime()->MeasureProcessCPUTime();
