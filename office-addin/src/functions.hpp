// The compute functions behind the table's rows: each reads its arguments, calls the C ABI (through
// the cache where an analysis is shared) and returns the cells. UNO-free.
#pragma once

#include "table.hpp"

namespace lode::addin {

Output fn_version(const Call& call);
Output fn_corr(const Call& call);
Output fn_eigen(const Call& call);

}  // namespace lode::addin
