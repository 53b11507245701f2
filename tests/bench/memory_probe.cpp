// Peak memory of the 1,000,000 x 50 analysis against the size of the data: reads the data, runs the
// analysis steps that have landed in the core (correlation, factor count, ML extraction, oblimin
// rotation, fit), and
// reports the process's peak resident set (VmHWM from /proc/self/status) as JSON on stdout.
//
// Usage: lode_bench_memory [INPUT_NAME]   (default corr_n1000000_p50; inputs from $LODE_BENCH_INPUTS)
#include "bench_inputs.hpp"
#include "lode/correlation.hpp"
#if LODE_BENCH_HAS_EXTRACTION
#include "lode/extraction.hpp"
#endif
#if LODE_BENCH_HAS_ROTATION
#include "lode/rotation.hpp"
#endif
#if LODE_BENCH_HAS_FIT
#include "lode/fit.hpp"
#endif
#if LODE_BENCH_HAS_FACTOR_COUNT
#include "lode/factor_count.hpp"
#endif

#include <cstdio>
#include <exception>
#include <fstream>
#include <string>
#include <vector>

namespace {

// A field of /proc/self/status in bytes (the kernel reports kB).
double status_bytes(const std::string& field) {
  std::ifstream f("/proc/self/status");
  std::string line;
  while (std::getline(f, line)) {
    if (line.rfind(field + ":", 0) == 0) return 1024.0 * std::stod(line.substr(field.size() + 1));
  }
  return -1.0;
}

}  // namespace

int main(int argc, char** argv) {
  try {
    const std::string name = argc > 1 ? argv[1] : "corr_n1000000_p50";
    const double before = status_bytes("VmHWM");
    const lode::Matrix x = lode::bench::read_input(name);
    const double data_bytes = static_cast<double>(sizeof(double)) * static_cast<double>(x.size());
    const double after_load = status_bytes("VmHWM");

    std::vector<std::string> steps{"correlation"};
    const lode::CorrelationResult corr = lode::correlation(x);
#if LODE_BENCH_HAS_FACTOR_COUNT
    const lode::FactorCountResult count = lode::count_factors_from_correlation(corr.matrix, corr.n_obs);
    steps.push_back("factor count");
    (void)count;
#endif
#if LODE_BENCH_HAS_EXTRACTION
    lode::ExtractionOptions eo;
    eo.n_obs = corr.n_obs;
    const lode::ExtractionResult fa = lode::extract_factors(corr.matrix, 5, eo);
    steps.push_back("ML extraction (5 factors)");
#if LODE_BENCH_HAS_ROTATION
    lode::RotationOptions ro;
    ro.method = lode::RotationMethod::oblimin;
    const lode::RotationResult rot = lode::rotate(fa.loadings, ro);
    steps.push_back("oblimin rotation");
    (void)rot;
#endif
#if LODE_BENCH_HAS_FIT
    const lode::FitResult fit = lode::assess_fit(corr.matrix, fa.loadings, fa.uniquenesses, corr.n_obs);
    steps.push_back("fit");
    (void)fit;
#endif
#endif
    const double peak = status_bytes("VmHWM");

    std::printf("{\n \"input\": \"%s\",\n \"rows\": %lld,\n \"items\": %lld,\n \"data_bytes\": %.0f,\n", name.c_str(),
                static_cast<long long>(x.rows()), static_cast<long long>(x.cols()), data_bytes);
    std::printf(" \"peak_rss_before_load_bytes\": %.0f,\n \"peak_rss_after_load_bytes\": %.0f,\n \"peak_rss_bytes\": %.0f,\n",
                before, after_load, peak);
    std::printf(" \"steps\": [");
    for (std::size_t i = 0; i < steps.size(); ++i) std::printf("%s\"%s\"", i ? ", " : "", steps[i].c_str());
    std::printf("]\n}\n");
    return 0;
  } catch (const std::exception& e) {
    std::fprintf(stderr, "lode_bench_memory: %s\n", e.what());
    return 1;
  }
}
