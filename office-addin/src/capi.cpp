// The add-in's wrapper over the C ABI (capi.hpp): the cells' reading of each status, their time
// limit, and matrix results as cell tables.
#include "capi.hpp"

#include <cmath>
#include <string>

namespace lode::addin {

Failure failure_of_status(int status) noexcept {
  switch (status) {
    case LODE_E_INVALID_ARGUMENT:
    case LODE_E_INSUFFICIENT_DATA:
    case LODE_E_TOO_MANY_FACTORS:
      return Failure::bad_argument;  // Err:502
    case LODE_E_NOT_POSITIVE_DEFINITE:
      return Failure::not_computable;  // #NUM!
    case LODE_E_NOT_CONVERGED:
      return Failure::not_converged;  // Err:523
    case LODE_E_CANCELLED:  // only the add-in's own time limit cancels
    case LODE_E_NOMEM:
      return Failure::too_large;  // Err:502
    default:  // LODE_E_INTERNAL, LODE_E_BUFFER_TOO_SMALL, LODE_E_UNSUPPORTED, unknown
      return Failure::internal;  // #VALUE!
  }
}

void time_limit_passed(const char* what) {
  throw CellError(Failure::too_large, std::string(what) + ": stopped after " + std::to_string(kTimeLimit.count()) +
                                          " s, the time limit of a cell function; use fewer rows, items or "
                                          "replicates");
}

void check_time(const Deadline& deadline, const char* what) {
  if (deadline.passed()) time_limit_passed(what);
}

void check(int status, const char* what) {
  if (status == LODE_OK) return;
  if (status == LODE_E_CANCELLED) time_limit_passed(what);
  const char* detail = lode_error_message();
  throw CellError(failure_of_status(status),
                  std::string(what) + ": " + (detail && *detail ? detail : lode_status_name(status)));
}

Output to_output(const Matrix& m) {
  Output out = Output::table(static_cast<std::size_t>(m.rows), static_cast<std::size_t>(m.cols));
  for (std::size_t i = 0; i < out.cells.size(); ++i) {
    const double v = m.values[i];
    out.cells[i] = OutCell::of(v);
    if (!std::isfinite(v)) out.cells[i].error = Failure::not_computable;
  }
  return out;
}

int deadline_progress(void* user, std::int64_t, std::int64_t) {
  return static_cast<const Deadline*>(user)->passed() ? 1 : 0;
}

}  // namespace lode::addin
