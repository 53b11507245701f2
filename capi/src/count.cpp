// Factor count through the C ABI: parallel analysis, MAP, eigenvalue rules, the consensus.
#include "boundary.hpp"
#include "count.hpp"
#include "handles.hpp"
#include "results.hpp"

using namespace lode;
using namespace lode::capi;

namespace lode::capi {

lode_factor_count_options factor_count_defaults() {
  lode_factor_count_options d{};
  d.struct_size = sizeof d;
  d.replicates = 500;
  d.threshold = LODE_THRESHOLD_PERCENTILE;
  d.percentile = 95.0;
  d.source = LODE_RANDOM_SOURCE_NORMAL;
  d.seed = 20260101;
  d.threads = 0;
  d.progress = nullptr;
  d.progress_user = nullptr;
  return d;
}

FactorCountOptions read_factor_count_options(const lode_factor_count_options* opts) {
  lode_factor_count_options o = factor_count_defaults();
  if (opts) {
    check_options_size(opts, "lode_factor_count_options");
    LODE_OPTION_FIELD(o, opts, replicates);
    LODE_OPTION_FIELD(o, opts, threshold);
    LODE_OPTION_FIELD(o, opts, percentile);
    LODE_OPTION_FIELD(o, opts, source);
    LODE_OPTION_FIELD(o, opts, seed);
    LODE_OPTION_FIELD(o, opts, threads);
    LODE_OPTION_FIELD(o, opts, progress);
    LODE_OPTION_FIELD(o, opts, progress_user);
  }
  FactorCountOptions f;
  auto& p = f.parallel;
  if (o.replicates < 1 || o.replicates > 1000000)
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("replicates must be between 1 and 1000000; it is {}", o.replicates));
  p.replicates = static_cast<Index>(o.replicates);
  switch (o.threshold) {
    case LODE_THRESHOLD_PERCENTILE: p.threshold = RandomThreshold::percentile; break;
    case LODE_THRESHOLD_MEAN: p.threshold = RandomThreshold::mean; break;
    default: fail(LODE_E_INVALID_ARGUMENT, fmt::format("unknown threshold {}", o.threshold));
  }
  if (!(o.percentile > 0.0 && o.percentile < 100.0))
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("percentile must lie strictly between 0 and 100; it is {}", o.percentile));
  p.percentile = o.percentile;
  switch (o.source) {
    case LODE_RANDOM_SOURCE_NORMAL: p.source = RandomDataSource::normal_theory; break;
    case LODE_RANDOM_SOURCE_PERMUTATION: p.source = RandomDataSource::permutation; break;
    default: fail(LODE_E_INVALID_ARGUMENT, fmt::format("unknown random data source {}", o.source));
  }
  p.seed = o.seed;
  if (o.threads < 0) fail(LODE_E_INVALID_ARGUMENT, fmt::format("threads must be 0 (all cores) or more; it is {}", o.threads));
  p.threads = o.threads;
  p.progress = progress_of(o.progress, o.progress_user);
  return f;
}

FactorCountResult count_for(const lode_correlation* corr, const FactorCountOptions& options) {
  const auto& data = *corr->data;
  if (data.source == DataSource::raw) return count_factors(data.values, corr->options, options);
  if (options.parallel.source == RandomDataSource::permutation)
    fail(LODE_E_INVALID_ARGUMENT, "permutation parallel analysis needs raw data; this analysis started from a matrix");
  return count_factors_from_correlation(corr->result.matrix, corr->result.n_obs, options);
}

}  // namespace lode::capi

struct lode_factor_count {
  FactorCountResult result;
};

extern "C" {

// ---- factor count --------------------------------------------------------------------------------

LODE_API int lode_factor_count_options_init(lode_factor_count_options* opts, size_t struct_size) {
  return guarded([&] { init_options(opts, struct_size, factor_count_defaults(), "lode_factor_count_options"); });
}

LODE_API int lode_factor_count_compute(const lode_correlation* corr, const lode_factor_count_options* opts,
                                lode_factor_count** out) {
  return guarded([&] {
    require_pointer(corr, "corr");
    require_pointer(out, "out");
    *out = nullptr;
    const FactorCountOptions options = read_factor_count_options(opts);
    auto c = std::make_unique<lode_factor_count>();
    c->result = count_for(corr, options);
    *out = c.release();
  });
}

LODE_API void lode_factor_count_free(lode_factor_count* count) { delete count; }

LODE_API int lode_factor_count_matrix(const lode_factor_count* count, int key, double* out, size_t capacity,
                                      int64_t* rows, int64_t* cols) {
  return guarded([&] {
    require_pointer(count, "count");
    const auto& r = count->result;
    const auto& pa = r.parallel;
    switch (key) {
      case LODE_FACTOR_COUNT_OBSERVED_PC: write_matrix(pa.observed_pc, out, capacity, rows, cols); break;
      case LODE_FACTOR_COUNT_OBSERVED_FACTOR: write_matrix(pa.observed_factor, out, capacity, rows, cols); break;
      case LODE_FACTOR_COUNT_RANDOM_PC_MEAN: write_matrix(pa.random_pc_mean, out, capacity, rows, cols); break;
      case LODE_FACTOR_COUNT_RANDOM_PC_PERCENTILE: write_matrix(pa.random_pc_percentile, out, capacity, rows, cols); break;
      case LODE_FACTOR_COUNT_RANDOM_FACTOR_MEAN: write_matrix(pa.random_factor_mean, out, capacity, rows, cols); break;
      case LODE_FACTOR_COUNT_RANDOM_FACTOR_PERCENTILE: write_matrix(pa.random_factor_percentile, out, capacity, rows, cols); break;
      case LODE_FACTOR_COUNT_MAP_SQUARED: write_matrix(r.map.average_squared, out, capacity, rows, cols); break;
      case LODE_FACTOR_COUNT_MAP_FOURTH: write_matrix(r.map.average_fourth, out, capacity, rows, cols); break;
      case LODE_FACTOR_COUNT_EKC_REFERENCE: write_matrix(r.eigen.ekc_reference, out, capacity, rows, cols); break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_factor_count matrix (lode_factor_count_matrix)"));
    }
  });
}

LODE_API int lode_factor_count_value(const lode_factor_count* count, int key, double* value) {
  return guarded([&] {
    require_pointer(count, "count");
    require_pointer(value, "value");
    const auto& r = count->result;
    double v = 0.0;
    switch (key) {
      case LODE_FACTOR_COUNT_SUGGESTED: v = static_cast<double>(r.suggested); break;
      case LODE_FACTOR_COUNT_PARALLEL_PC: v = static_cast<double>(r.parallel.suggested_pc); break;
      case LODE_FACTOR_COUNT_PARALLEL_FACTOR: v = static_cast<double>(r.parallel.suggested_factor); break;
      case LODE_FACTOR_COUNT_MAP_SQUARED_SUGGESTED: v = static_cast<double>(r.map.suggested_squared); break;
      case LODE_FACTOR_COUNT_MAP_FOURTH_SUGGESTED: v = static_cast<double>(r.map.suggested_fourth); break;
      case LODE_FACTOR_COUNT_KAISER: v = static_cast<double>(r.eigen.kaiser); break;
      case LODE_FACTOR_COUNT_EMPIRICAL_KAISER: v = static_cast<double>(r.eigen.empirical_kaiser); break;
      case LODE_FACTOR_COUNT_REPLICATES: v = static_cast<double>(r.parallel.replicates); break;
      case LODE_FACTOR_COUNT_N_OBS: v = static_cast<double>(r.n_obs); break;
      case LODE_FACTOR_COUNT_PERCENTILE: v = r.parallel.percentile; break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_factor_count number (lode_factor_count_value)"));
    }
    *value = v;
  });
}

LODE_API int lode_factor_count_text(const lode_factor_count* count, int key, char* out, size_t capacity,
                                    size_t* length) {
  return guarded([&] {
    require_pointer(count, "count");
    const auto& r = count->result;
    switch (key) {
      case LODE_FACTOR_COUNT_REASON: write_text(r.reason, out, capacity, length); break;
      case LODE_FACTOR_COUNT_NOTES: write_text(join_lines(r.notes), out, capacity, length); break;
      case LODE_FACTOR_COUNT_TABLE: {
        std::vector<std::string> lines;
        for (const auto& s : r.table)
          lines.push_back(fmt::format("{}\t{}\t{}\t{}", s.rule, s.factors, s.primary ? 1 : 0, s.basis));
        write_text(join_lines(lines), out, capacity, length);
        break;
      }
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_factor_count text (lode_factor_count_text)"));
    }
  });
}

}  // extern "C"
