#include "lode/common.hpp"

namespace lode {

const char* error_code_name(ErrorCode code) noexcept {
  switch (code) {
    case ErrorCode::invalid_argument: return "invalid argument";
    case ErrorCode::insufficient_data: return "insufficient data";
    case ErrorCode::not_positive_definite: return "not positive definite";
    case ErrorCode::too_many_factors: return "too many factors";
    case ErrorCode::not_converged: return "not converged";
    case ErrorCode::cancelled: return "cancelled";
    case ErrorCode::internal: return "internal error";
  }
  return "unknown error";
}

const char* version() noexcept { return LODE_VERSION_STRING; }

}  // namespace lode
