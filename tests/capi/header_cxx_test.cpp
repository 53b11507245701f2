// lode.h compiles as C++ (warnings as errors) and links with C linkage; and handles are usable from
// several threads at once: one correlation handle read by four threads fitting models concurrently
// gives each the same loadings, and each thread sees its own last error.
#include "lode.h"

#include <cmath>
#include <cstdio>
#include <cstring>
#include <string>
#include <thread>
#include <vector>

namespace {

int failures = 0;
void check(bool ok, const char* what) {
  if (!ok) {
    ++failures;
    std::fprintf(stderr, "check failed: %s\n", what);
  }
}

}  // namespace

int main() {
  const lode_version_info* v = lode_version();
  check(v != nullptr && v->abi_major == LODE_ABI_VERSION_MAJOR, "version");
  lode_data* d = nullptr;
  check(lode_data_from_raw(nullptr, 3, 3, 3, 1, &d) == LODE_E_INVALID_ARGUMENT, "NULL values refused");
  check(std::strstr(lode_error_message(), "NULL") != nullptr, "message names NULL");

  // Two-construct data, deterministic.
  const int n = 200, p = 6;
  std::vector<double> x(n * p);
  for (int i = 0; i < n; ++i)
    for (int j = 0; j < p; ++j)
      x[i * p + j] = std::sin(0.37 * i) * (j < 3) + std::cos(0.91 * i + 0.3) * (j >= 3) + 0.7 * std::sin(1.7 * i * (j + 1) + j);
  lode_correlation* c = nullptr;
  check(lode_data_from_raw(x.data(), n, p, p, 1, &d) == LODE_OK, "data");
  check(lode_correlation_compute(d, nullptr, &c) == LODE_OK, "correlate");
  lode_data_free(d);

  std::vector<std::vector<double>> loadings(4, std::vector<double>(p * 2));
  std::vector<std::string> errors(4);
  std::vector<int> status(4, -1);
  std::vector<std::thread> threads;
  for (int t = 0; t < 4; ++t)
    threads.emplace_back([&, t] {
      lode_rotation_options ro;
      lode_rotation_options_init(&ro, sizeof ro);
      ro.method = LODE_CRITERION_OBLIMIN;
      lode_model_options fo;
      lode_model_options_init(&fo, sizeof fo);
      fo.factors = 2;
      fo.rotation = &ro;
      lode_model* m = nullptr;
      status[t] = lode_model_compute(c, &fo, &m);
      if (m) lode_model_matrix(m, LODE_MODEL_LOADINGS, loadings[t].data(), loadings[t].size(), nullptr, nullptr);
      lode_model_free(m);
      // Each thread fails differently; its last error is its own.
      fo.factors = 10 + t;
      lode_model_compute(c, &fo, &m);
      errors[t] = lode_error_message();
    });
  for (auto& th : threads) th.join();
  for (int t = 0; t < 4; ++t) {
    check(status[t] == LODE_OK, "fit in a thread");
    check(loadings[t] == loadings[0], "same loadings in every thread");
    check(errors[t].find(std::to_string(10 + t) + " factors") != std::string::npos, "each thread's own message");
  }
  // Two bootstraps of the same handle at once: the same seed gives the same intervals.
  std::vector<std::vector<double>> upper(2, std::vector<double>(p * 2));
  threads.clear();
  for (int t = 0; t < 2; ++t)
    threads.emplace_back([&, t] {
      lode_model_options fo;
      lode_model_options_init(&fo, sizeof fo);
      fo.factors = 2;
      lode_bootstrap_options bo;
      lode_bootstrap_options_init(&bo, sizeof bo);
      bo.replicates = 30;
      bo.threads = 1 + t;
      lode_bootstrap* b = nullptr;
      status[t] = lode_bootstrap_compute(c, &fo, &bo, &b);
      if (b) lode_bootstrap_matrix(b, LODE_BOOTSTRAP_LOADINGS_UPPER, upper[t].data(), upper[t].size(), nullptr, nullptr);
      lode_bootstrap_free(b);
    });
  for (auto& th : threads) th.join();
  check(status[0] == LODE_OK && status[1] == LODE_OK, "bootstrap in a thread");
  check(upper[0] == upper[1], "same intervals in every thread, whatever the thread count");
  lode_correlation_free(c);
  std::printf("liblode %s, ABI %d.%d: %d failures\n", v->string, v->abi_major, v->abi_minor, failures);
  return failures == 0 ? 0 : 1;
}
