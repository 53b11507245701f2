// Internal to the rotation family: the criterion dispatcher shared by rotation.cpp and
// rotation_criteria.cpp.
#pragma once

#include "lode/rotation.hpp"

namespace lode::detail {

// Value and gradient of the criterion the options select, at rotated loadings l.
CriterionValue evaluate_criterion(const Matrix& l, const RotationOptions& o);

}  // namespace lode::detail
