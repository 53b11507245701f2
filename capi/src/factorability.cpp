// Factorability through the C ABI: KMO and MSA, Bartlett's test, determinant, SMCs.
#include "boundary.hpp"
#include "handles.hpp"
#include "results.hpp"

#include "lode/factorability.hpp"

using namespace lode;
using namespace lode::capi;

struct lode_factorability {
  FactorabilityResult result;
  Unavailable kmo, bartlett, smc;
};

extern "C" {

// ---- factorability -------------------------------------------------------------------------------

LODE_API int lode_factorability_compute(const lode_correlation* corr, lode_factorability** out) {
  return guarded([&] {
    require_pointer(corr, "corr");
    require_pointer(out, "out");
    *out = nullptr;
    auto f = std::make_unique<lode_factorability>();
    f->result = assess_factorability(corr->result.matrix, corr->result.n_obs, corr->options.item_names);
    const std::string notes = join_lines(f->result.notes);
    if (!f->result.kmo)
      f->kmo = {LODE_E_NOT_POSITIVE_DEFINITE,
                notes.empty() ? "the correlation matrix is not positive definite, so KMO is undefined" : notes};
    if (!f->result.smc)
      f->smc = {LODE_E_NOT_POSITIVE_DEFINITE,
                notes.empty() ? "the correlation matrix is not positive definite, so SMCs are undefined" : notes};
    if (!f->result.bartlett)
      f->bartlett = {LODE_E_INSUFFICIENT_DATA,
                     corr->result.n_obs == 0
                         ? std::string("Bartlett's test needs the number of observations behind the matrix (n_obs)")
                         : (notes.empty() ? std::string("Bartlett's test could not be computed") : notes)};
    *out = f.release();
  });
}

LODE_API void lode_factorability_free(lode_factorability* f) { delete f; }

LODE_API int lode_factorability_matrix(const lode_factorability* f, int key, double* out, size_t capacity,
                                       int64_t* rows, int64_t* cols) {
  return guarded([&] {
    require_pointer(f, "f");
    switch (key) {
      case LODE_FACTORABILITY_MSA:
        f->kmo.require();
        write_matrix(f->result.kmo->per_item, out, capacity, rows, cols);
        break;
      case LODE_FACTORABILITY_SMC:
        f->smc.require();
        write_matrix(*f->result.smc, out, capacity, rows, cols);
        break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_factorability matrix (lode_factorability_matrix)"));
    }
  });
}

LODE_API int lode_factorability_value(const lode_factorability* f, int key, double* value) {
  return guarded([&] {
    require_pointer(f, "f");
    require_pointer(value, "value");
    const auto& r = f->result;
    double v = 0.0;
    switch (key) {
      case LODE_FACTORABILITY_KMO: f->kmo.require(); v = r.kmo->overall; break;
      case LODE_FACTORABILITY_BARTLETT_CHI_SQUARE: f->bartlett.require(); v = r.bartlett->chi_square; break;
      case LODE_FACTORABILITY_BARTLETT_DF: f->bartlett.require(); v = r.bartlett->df; break;
      case LODE_FACTORABILITY_BARTLETT_P_VALUE: f->bartlett.require(); v = r.bartlett->p_value; break;
      case LODE_FACTORABILITY_BARTLETT_N_OBS: f->bartlett.require(); v = static_cast<double>(r.bartlett->n_obs); break;
      case LODE_FACTORABILITY_DETERMINANT: v = r.determinant; break;
      case LODE_FACTORABILITY_LOG_DETERMINANT: v = r.log_determinant; break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_factorability number (lode_factorability_value)"));
    }
    *value = v;
  });
}

LODE_API int lode_factorability_text(const lode_factorability* f, int key, char* out, size_t capacity,
                                     size_t* length) {
  return guarded([&] {
    require_pointer(f, "f");
    switch (key) {
      case LODE_FACTORABILITY_KMO_LABEL:
        f->kmo.require();
        write_text(kmo_label(f->result.kmo->overall), out, capacity, length);
        break;
      case LODE_FACTORABILITY_NOTES: write_text(join_lines(f->result.notes), out, capacity, length); break;
      default: fail(LODE_E_INVALID_ARGUMENT, key_text(key, "lode_factorability text (lode_factorability_text)"));
    }
  });
}

}  // extern "C"
