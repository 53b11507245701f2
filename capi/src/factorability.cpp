// Factorability through the C ABI: KMO and MSA, Bartlett's test, determinant, SMCs.
#include "boundary.hpp"
#include "handles.hpp"
#include "keys.hpp"
#include "results.hpp"

#include "lode/factorability.hpp"

using namespace lode;
using namespace lode::capi;

struct lode_factorability {
  FactorabilityResult result;
  Unavailable kmo, bartlett, smc;
};

namespace {

const KmoResult& kmo_of(const lode_factorability& f) {
  f.kmo.require();
  return *f.result.kmo;
}

const BartlettTest& bartlett_of(const lode_factorability& f) {
  f.bartlett.require();
  return *f.result.bartlett;
}

constexpr HandleNames factorability_handle{"lode_factorability", "lode_factorability", "f"};

constexpr MatrixKey<lode_factorability> factorability_matrices[] = {
    {LODE_FACTORABILITY_MSA, [](const lode_factorability& f) -> Matrix { return kmo_of(f).per_item; }},
    {LODE_FACTORABILITY_SMC,
     [](const lode_factorability& f) -> Matrix {
       f.smc.require();
       return *f.result.smc;
     }},
};

constexpr ValueKey<lode_factorability> factorability_values[] = {
    {LODE_FACTORABILITY_KMO, [](const lode_factorability& f) { return kmo_of(f).overall; }},
    {LODE_FACTORABILITY_BARTLETT_CHI_SQUARE, [](const lode_factorability& f) { return bartlett_of(f).chi_square; }},
    {LODE_FACTORABILITY_BARTLETT_DF, [](const lode_factorability& f) { return bartlett_of(f).df; }},
    {LODE_FACTORABILITY_BARTLETT_P_VALUE, [](const lode_factorability& f) { return bartlett_of(f).p_value; }},
    {LODE_FACTORABILITY_BARTLETT_N_OBS, [](const lode_factorability& f) { return number(bartlett_of(f).n_obs); }},
    {LODE_FACTORABILITY_DETERMINANT, [](const lode_factorability& f) { return f.result.determinant; }},
    {LODE_FACTORABILITY_LOG_DETERMINANT, [](const lode_factorability& f) { return f.result.log_determinant; }},
};

constexpr TextKey<lode_factorability> factorability_texts[] = {
    {LODE_FACTORABILITY_KMO_LABEL, [](const lode_factorability& f) { return std::string(kmo_label(kmo_of(f).overall)); }},
    {LODE_FACTORABILITY_NOTES, [](const lode_factorability& f) { return join_lines(f.result.notes); }},
};

}  // namespace

extern "C" {

LODE_API int lode_factorability_compute(const lode_correlation* corr, lode_factorability** out) {
  return compute_handle(corr, "corr", out, [&] {
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
    return f;
  });
}

LODE_API void lode_factorability_free(lode_factorability* f) { delete f; }

LODE_KEY_GETTERS(lode_factorability, lode_factorability, factorability_handle, factorability_matrices, factorability_values, factorability_texts)

}  // extern "C"
