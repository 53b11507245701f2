// The compute functions behind the table's rows: each reads its arguments, calls the C ABI (through
// the cache where an analysis is shared) and returns the cells. UNO-free.
#pragma once

#include "table.hpp"

namespace lode::addin {

Output fn_version(const Call& call);
Output fn_corr(const Call& call);
Output fn_eigen(const Call& call);
Output fn_kmo(const Call& call);
Output fn_msa(const Call& call);
Output fn_sphericity(const Call& call);
Output fn_parallel(const Call& call);
Output fn_factorcount(const Call& call);
Output fn_loadings(const Call& call);
Output fn_structure(const Call& call);
Output fn_uniqueness(const Call& call);
Output fn_communality(const Call& call);
Output fn_factorcorr(const Call& call);
Output fn_residuals(const Call& call);
Output fn_fit(const Call& call);
Output fn_rotate(const Call& call);
Output fn_scores(const Call& call);
Output fn_alpha(const Call& call);
Output fn_omega(const Call& call);
Output fn_congruence(const Call& call);
// The restricted fit and split-half replication (functions_confirm.cpp)
Output fn_patternloadings(const Call& call);
Output fn_patternfit(const Call& call);
Output fn_halves(const Call& call);
// functions_structure.cpp: a general factor (Schmid-Leiman) and the comparison across groups
Output fn_general(const Call& call);
Output fn_generalomega(const Call& call);
Output fn_groupmatch(const Call& call);
Output fn_groupskipped(const Call& call);
Output fn_groupshifts(const Call& call);

// LODE.REASON (reason.cpp): the message of the named function with the same arguments, as text.
Output fn_reason(const Call& call);
// What a failure shows in the cell ("Err:502", "#NUM!", ...) and the reason text LODE.REASON gives:
// "Err:502: 'method' must be one of ...".
std::string failure_words(Failure failure);
std::string reason_text(Failure failure, const std::string& message);

}  // namespace lode::addin
