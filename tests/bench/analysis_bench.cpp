// A whole dialog-style analysis of raw survey data with Lode's default options: correlations,
// factorability (KMO, Bartlett), the factor count (parallel analysis, MAP and the eigenvalue rules),
// ML extraction of the suggested number of factors, oblimin rotation with random starts, and fit.
#include "bench_inputs.hpp"

#if LODE_BENCH_HAS_EXTRACTION && LODE_BENCH_HAS_ROTATION && LODE_BENCH_HAS_FIT && LODE_BENCH_HAS_FACTOR_COUNT
#include "lode/correlation.hpp"
#include "lode/extraction.hpp"
#include "lode/factor_count.hpp"
#include "lode/factorability.hpp"
#include "lode/fit.hpp"
#include "lode/rotation.hpp"

#include <benchmark/benchmark.h>

#include <algorithm>

namespace {

using lode::Matrix;

void BM_Analysis(benchmark::State& state, const char* input) {
  const Matrix& x = lode::bench::input(input);
  int factors = 0;
  double rmsea = 0.0;
  for (auto _ : state) {
    const lode::CorrelationResult corr = lode::correlation(x);
    const lode::FactorabilityResult factorability = lode::assess_factorability(corr.matrix, corr.n_obs);
    benchmark::DoNotOptimize(factorability.determinant);
    const lode::FactorCountResult count = lode::count_factors_from_correlation(corr.matrix, corr.n_obs);
    factors = std::max(2, static_cast<int>(count.suggested));  // rotation needs two factors
    lode::ExtractionOptions eo;
    eo.n_obs = corr.n_obs;
    const lode::ExtractionResult fa = lode::extract_factors(corr.matrix, factors, eo);
    lode::RotationOptions ro;
    ro.method = lode::RotationMethod::oblimin;
    ro.threads = 0;
    const lode::RotationResult rot = lode::rotate(fa.loadings, ro);
    benchmark::DoNotOptimize(rot.pattern.data());
    const lode::FitResult fit = lode::assess_fit(corr.matrix, fa.loadings, fa.uniquenesses, corr.n_obs);
    rmsea = fit.rmsea;
  }
  state.counters["items"] = static_cast<double>(x.cols());
  state.counters["factors"] = factors;
  state.counters["rmsea"] = rmsea;
}

}  // namespace

BENCHMARK_CAPTURE(BM_Analysis, analysis_n2000_p60, "pa_p60_X")->Unit(benchmark::kMillisecond)->UseRealTime()->MeasureProcessCPUTime();
BENCHMARK_CAPTURE(BM_Analysis, analysis_n500_p30, "boot_n500_p30_X")->Unit(benchmark::kMillisecond)->UseRealTime()->MeasureProcessCPUTime();

#endif
