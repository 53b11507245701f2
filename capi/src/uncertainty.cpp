// Item flags and bootstrap intervals through the C ABI.
#include "boundary.hpp"
#include "handles.hpp"
#include "model.hpp"
#include "results.hpp"

#include "lode/bootstrap.hpp"
#include "lode/item_flags.hpp"

#include <cmath>
#include <cstdint>
#include <memory>

using namespace lode;
using namespace lode::capi;

struct lode_item_flags {
  std::vector<ItemFlag> flags;
  ItemFlagOptions options;  // as used
  Vector communalities;     // what the flags were judged on
  Index items = 0;
};

struct lode_bootstrap_result {
  BootstrapResult result;
  Index items = 0, factors = 0;
  bool oblique = false;
  bool kept = false;
};

namespace {

lode_item_flags_options item_flag_defaults() {
  const ItemFlagOptions core;  // the core's defaults (common practice; see item_flags.hpp)
  lode_item_flags_options d{};
  d.struct_size = sizeof d;
  d.salient = core.salient;
  d.cross_loading_gap = core.cross_loading_gap;
  d.low_communality = core.low_communality;
  d.heywood_uniqueness = core.heywood_uniqueness;
  return d;
}

int kind_code(ItemFlagKind kind) {
  switch (kind) {
    case ItemFlagKind::cross_loading: return LODE_FLAG_CROSS_LOADING;
    case ItemFlagKind::no_salient_loading: return LODE_FLAG_NO_SALIENT_LOADING;
    case ItemFlagKind::low_communality: return LODE_FLAG_LOW_COMMUNALITY;
    case ItemFlagKind::heywood_case: return LODE_FLAG_HEYWOOD_CASE;
  }
  return 0;
}

lode_bootstrap_options bootstrap_defaults() {
  const BootstrapOptions core;  // the core's defaults
  lode_bootstrap_options d{};
  d.struct_size = sizeof d;
  d.replicates = static_cast<int64_t>(core.replicates);
  d.level = core.level;
  d.seed = core.seed;
  d.threads = core.threads;
  d.replicate_random_starts = core.replicate_random_starts;
  d.keep_replicates = core.keep_replicates ? 1 : 0;
  d.progress = nullptr;
  d.progress_user = nullptr;
  return d;
}

// Kept replicates as one row each: a matrix flattened row-major (as the matrix getters write).
template <class M>
Matrix stack_rows(const std::vector<M>& reps, Index width) {
  Matrix out(static_cast<Index>(reps.size()), width);
  for (std::size_t r = 0; r < reps.size(); ++r) {
    const auto& m = reps[r];
    Index c = 0;
    for (Index i = 0; i < m.rows(); ++i)
      for (Index j = 0; j < m.cols(); ++j) out(static_cast<Index>(r), c++) = m(i, j);
  }
  return out;
}

}  // namespace

extern "C" {

// ---- item flags ----------------------------------------------------------------------------------

LODE_API int lode_item_flags_options_init(lode_item_flags_options* opts, size_t struct_size) {
  return guarded([&] { init_options(opts, struct_size, item_flag_defaults(), "lode_item_flags_options"); });
}

LODE_API int lode_item_flags_compute(const lode_model* model, const lode_item_flags_options* opts, lode_item_flags** out) {
  return guarded([&] {
    require_pointer(model, "model");
    require_pointer(out, "out");
    *out = nullptr;
    lode_item_flags_options o = item_flag_defaults();
    if (opts) {
      check_options_size(opts, "lode_item_flags_options");
      LODE_OPTION_FIELD(o, opts, salient);
      LODE_OPTION_FIELD(o, opts, cross_loading_gap);
      LODE_OPTION_FIELD(o, opts, low_communality);
      LODE_OPTION_FIELD(o, opts, heywood_uniqueness);
    }
    ItemFlagOptions fo;
    fo.salient = o.salient;
    fo.cross_loading_gap = o.cross_loading_gap;
    fo.low_communality = o.low_communality;
    fo.heywood_uniqueness = o.heywood_uniqueness;
    fo.item_names = model->item_names;
    const Matrix phi = model->rotation.oblique ? model->rotation.factor_correlations : Matrix();
    const Vector& psi = model->extraction.uniquenesses;
    auto f = std::make_unique<lode_item_flags>();
    f->flags = flag_items(model->rotation.pattern, phi, psi, fo);  // checks the thresholds, naming them
    f->options = fo;
    f->communalities = Vector::Ones(psi.size()) - psi;
    f->items = model->rotation.pattern.rows();
    *out = f.release();
  });
}

LODE_API void lode_item_flags_free(lode_item_flags* flags) { delete flags; }

LODE_API int lode_item_flags_matrix(const lode_item_flags* flags, int key, double* out, size_t capacity,
                                    int64_t* rows, int64_t* cols) {
  return guarded([&] {
    require_pointer(flags, "flags");
    switch (key) {
      case LODE_ITEM_FLAGS_CODES: {
        Vector codes = Vector::Zero(flags->items);
        for (const auto& f : flags->flags)
          codes(f.item) = static_cast<double>(static_cast<int>(codes(f.item)) | kind_code(f.kind));
        write_matrix(codes, out, capacity, rows, cols);
        break;
      }
      case LODE_ITEM_FLAGS_TABLE: {
        Matrix t(static_cast<Index>(flags->flags.size()), 5);
        for (std::size_t r = 0; r < flags->flags.size(); ++r) {
          const auto& f = flags->flags[r];
          const Index row = static_cast<Index>(r);
          t(row, 0) = static_cast<double>(f.item);
          t(row, 1) = kind_code(f.kind);
          t(row, 2) = f.factors.size() > 0 ? static_cast<double>(f.factors[0]) : -1.0;
          t(row, 3) = f.factors.size() > 1 ? static_cast<double>(f.factors[1]) : -1.0;
          t(row, 4) = f.value;
        }
        // An empty table is 0 x 5: its size query works, and any buffer (even NULL with capacity 0) takes it.
        write_matrix(t, out, capacity, rows, cols);
        break;
      }
      case LODE_ITEM_FLAGS_COMMUNALITIES: write_matrix(flags->communalities, out, capacity, rows, cols); break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_item_flags matrix (lode_item_flags_matrix)"));
    }
  });
}

LODE_API int lode_item_flags_value(const lode_item_flags* flags, int key, double* value) {
  return guarded([&] {
    require_pointer(flags, "flags");
    require_pointer(value, "value");
    const auto& o = flags->options;
    double v = 0.0;
    switch (key) {
      case LODE_ITEM_FLAGS_COUNT: v = static_cast<double>(flags->flags.size()); break;
      case LODE_ITEM_FLAGS_ITEMS_FLAGGED: {
        std::vector<bool> seen(static_cast<std::size_t>(flags->items), false);
        for (const auto& f : flags->flags) seen[static_cast<std::size_t>(f.item)] = true;
        for (bool b : seen) v += b ? 1.0 : 0.0;
        break;
      }
      case LODE_ITEM_FLAGS_ITEMS: v = static_cast<double>(flags->items); break;
      case LODE_ITEM_FLAGS_SALIENT: v = o.salient; break;
      case LODE_ITEM_FLAGS_CROSS_LOADING_GAP: v = o.cross_loading_gap; break;
      case LODE_ITEM_FLAGS_LOW_COMMUNALITY: v = o.low_communality; break;
      case LODE_ITEM_FLAGS_HEYWOOD_UNIQUENESS: v = o.heywood_uniqueness; break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_item_flags number (lode_item_flags_value)"));
    }
    *value = v;
  });
}

LODE_API int lode_item_flags_text(const lode_item_flags* flags, int key, char* out, size_t capacity, size_t* length) {
  return guarded([&] {
    require_pointer(flags, "flags");
    if (key != LODE_ITEM_FLAGS_NOTES)
      fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_item_flags text (lode_item_flags_text)"));
    std::vector<std::string> lines;
    for (const auto& f : flags->flags) lines.push_back(f.note);
    write_text(join_lines(lines), out, capacity, length);
  });
}

LODE_API int lode_item_flags_item_notes(const lode_item_flags* flags, int64_t item, char* out, size_t capacity,
                                        size_t* length) {
  return guarded([&] {
    require_pointer(flags, "flags");
    if (item < 0 || item >= static_cast<int64_t>(flags->items))
      fail(LODE_E_INVALID_ARGUMENT,
           fmt::format("item {} does not exist; items are numbered 0 to {}", item, flags->items - 1));
    std::vector<std::string> lines;
    for (const auto& f : flags->flags)
      if (f.item == static_cast<Index>(item)) lines.push_back(f.note);
    write_text(join_lines(lines), out, capacity, length);
  });
}

// ---- bootstrap -----------------------------------------------------------------------------------

LODE_API int lode_bootstrap_options_init(lode_bootstrap_options* opts, size_t struct_size) {
  return guarded([&] { init_options(opts, struct_size, bootstrap_defaults(), "lode_bootstrap_options"); });
}

LODE_API int lode_bootstrap_compute(const lode_correlation* corr, const lode_model_options* fit,
                            const lode_bootstrap_options* opts, lode_bootstrap_result** out) {
  return guarded([&] {
    require_pointer(corr, "corr");
    require_pointer(out, "out");
    *out = nullptr;
    // Every option is read and checked before any long work.
    FitSetup setup = read_fit_options(fit, corr);
    if (setup.factors < 1)
      fail(LODE_E_INVALID_ARGUMENT,
           fmt::format("the bootstrap needs the number of factors (lode_model_options.factors); it is {}", setup.factors));
    lode_bootstrap_options o = bootstrap_defaults();
    if (opts) {
      check_options_size(opts, "lode_bootstrap_options");
      LODE_OPTION_FIELD(o, opts, replicates);
      LODE_OPTION_FIELD(o, opts, level);
      LODE_OPTION_FIELD(o, opts, seed);
      LODE_OPTION_FIELD(o, opts, threads);
      LODE_OPTION_FIELD(o, opts, replicate_random_starts);
      LODE_OPTION_FIELD(o, opts, keep_replicates);
      LODE_OPTION_FIELD(o, opts, progress);
      LODE_OPTION_FIELD(o, opts, progress_user);
    }
    if (o.replicates < 2 || o.replicates > 1000000)
      fail(LODE_E_INVALID_ARGUMENT, fmt::format("replicates must be between 2 and 1000000; it is {}", o.replicates));
    if (!(o.level > 0.0 && o.level < 1.0))
      fail(LODE_E_INVALID_ARGUMENT, fmt::format("level must lie strictly between 0 and 1; it is {}", o.level));
    if (o.threads < 0) fail(LODE_E_INVALID_ARGUMENT, fmt::format("threads must be 0 (all cores) or more; it is {}", o.threads));
    if (o.replicate_random_starts < -1 || o.replicate_random_starts > 100000)
      fail(LODE_E_INVALID_ARGUMENT,
           fmt::format("replicate_random_starts must be -1 (as the rotation options say) or 0 to 100000; it is {}",
                       o.replicate_random_starts));
    const DataContent& data = *corr->data;
    if (data.source != DataSource::raw)
      fail(LODE_E_INVALID_ARGUMENT,
           "the bootstrap resamples respondents, so it needs raw data; this correlation was given as a matrix");

    BootstrapOptions bo;
    bo.replicates = static_cast<Index>(o.replicates);
    bo.level = o.level;
    bo.seed = o.seed;
    bo.threads = o.threads;
    bo.replicate_random_starts = o.replicate_random_starts;
    bo.keep_replicates = o.keep_replicates != 0;
    bo.progress = progress_of(o.progress, o.progress_user);
    bo.correlation = corr->options;  // as used for corr (item names included; its progress was for that call)
    bo.correlation.polychoric.progress = {};

    ExtractionOptions eo = setup.extraction;
    eo.n_obs = 0;  // each computation takes the sample size behind its own correlations
    RotationOptions ro;
    ro.method = RotationMethod::none;
    if (setup.rotation) ro = *setup.rotation;
    ro.item_names = corr->options.item_names;

    auto b = std::make_unique<lode_bootstrap_result>();
    b->result = bootstrap_factor_solution(data.values, setup.factors, eo, ro, bo);
    b->items = b->result.loadings.rows();
    b->factors = b->result.loadings.cols();
    b->oblique = setup.factors >= 2 && is_oblique(ro.method);
    b->kept = bo.keep_replicates;
    *out = b.release();
  });
}

LODE_API void lode_bootstrap_free(lode_bootstrap_result* result) { delete result; }

LODE_API int lode_bootstrap_matrix(const lode_bootstrap_result* result, int key, double* out, size_t capacity,
                                   int64_t* rows, int64_t* cols) {
  return guarded([&] {
    require_pointer(result, "result");
    const auto& r = result->result;
    if (key >= LODE_BOOTSTRAP_REPLICATE_LOADINGS && key <= LODE_BOOTSTRAP_REPLICATE_FACTOR_CORRELATIONS &&
        !result->kept)
      fail(LODE_E_INVALID_ARGUMENT,
           fmt::format("key {} needs the replicates, which were not kept: set keep_replicates in "
                       "lode_bootstrap_options",
                       key));
    switch (key) {
      case LODE_BOOTSTRAP_LOADINGS: write_matrix(r.loadings, out, capacity, rows, cols); break;
      case LODE_BOOTSTRAP_LOADINGS_LOWER: write_matrix(r.loadings_lower, out, capacity, rows, cols); break;
      case LODE_BOOTSTRAP_LOADINGS_UPPER: write_matrix(r.loadings_upper, out, capacity, rows, cols); break;
      case LODE_BOOTSTRAP_LOADINGS_SE: write_matrix(r.loadings_se, out, capacity, rows, cols); break;
      case LODE_BOOTSTRAP_UNIQUENESSES: write_matrix(r.uniquenesses, out, capacity, rows, cols); break;
      case LODE_BOOTSTRAP_UNIQUENESSES_LOWER: write_matrix(r.uniquenesses_lower, out, capacity, rows, cols); break;
      case LODE_BOOTSTRAP_UNIQUENESSES_UPPER: write_matrix(r.uniquenesses_upper, out, capacity, rows, cols); break;
      case LODE_BOOTSTRAP_UNIQUENESSES_SE: write_matrix(r.uniquenesses_se, out, capacity, rows, cols); break;
      case LODE_BOOTSTRAP_FACTOR_CORRELATIONS: write_matrix(r.factor_correlations, out, capacity, rows, cols); break;
      case LODE_BOOTSTRAP_FACTOR_CORRELATIONS_LOWER:
        write_matrix(r.factor_correlations_lower, out, capacity, rows, cols);
        break;
      case LODE_BOOTSTRAP_FACTOR_CORRELATIONS_UPPER:
        write_matrix(r.factor_correlations_upper, out, capacity, rows, cols);
        break;
      case LODE_BOOTSTRAP_FACTOR_CORRELATIONS_SE: write_matrix(r.factor_correlations_se, out, capacity, rows, cols); break;
      case LODE_BOOTSTRAP_MIN_CONGRUENCE: write_matrix(r.min_matched_congruence, out, capacity, rows, cols); break;
      case LODE_BOOTSTRAP_REPLICATE_LOADINGS:
        write_matrix(stack_rows(r.replicate_loadings, result->items * result->factors), out, capacity, rows, cols);
        break;
      case LODE_BOOTSTRAP_REPLICATE_UNIQUENESSES:
        write_matrix(stack_rows(r.replicate_uniquenesses, result->items), out, capacity, rows, cols);
        break;
      case LODE_BOOTSTRAP_REPLICATE_FACTOR_CORRELATIONS:
        write_matrix(stack_rows(r.replicate_factor_correlations, result->factors * result->factors), out, capacity,
                     rows, cols);
        break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_bootstrap_result matrix (lode_bootstrap_matrix)"));
    }
  });
}

LODE_API int lode_bootstrap_value(const lode_bootstrap_result* result, int key, double* value) {
  return guarded([&] {
    require_pointer(result, "result");
    require_pointer(value, "value");
    const auto& r = result->result;
    double v = 0.0;
    switch (key) {
      case LODE_BOOTSTRAP_REPLICATES: v = static_cast<double>(r.replicates_requested); break;
      case LODE_BOOTSTRAP_USED: v = static_cast<double>(r.replicates_used); break;
      case LODE_BOOTSTRAP_FAILED: v = static_cast<double>(r.replicates_failed); break;
      case LODE_BOOTSTRAP_POORLY_MATCHED: v = static_cast<double>(r.replicates_poorly_matched); break;
      case LODE_BOOTSTRAP_LEVEL: v = r.level; break;
      case LODE_BOOTSTRAP_ITEMS: v = static_cast<double>(result->items); break;
      case LODE_BOOTSTRAP_FACTORS: v = static_cast<double>(result->factors); break;
      case LODE_BOOTSTRAP_OBLIQUE: v = result->oblique ? 1.0 : 0.0; break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_bootstrap_result number (lode_bootstrap_value)"));
    }
    *value = v;
  });
}

LODE_API int lode_bootstrap_text(const lode_bootstrap_result* result, int key, char* out, size_t capacity,
                                 size_t* length) {
  return guarded([&] {
    require_pointer(result, "result");
    const auto& r = result->result;
    switch (key) {
      case LODE_BOOTSTRAP_ALIGNMENT: write_text(r.alignment, out, capacity, length); break;
      case LODE_BOOTSTRAP_FAILURES: write_text(join_lines(r.failures), out, capacity, length); break;
      case LODE_BOOTSTRAP_NOTES: write_text(join_lines(r.notes), out, capacity, length); break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_bootstrap_result text (lode_bootstrap_text)"));
    }
  });
}

}  // extern "C"
