// Conversions between UNO values and Lode's plain cell types, and the mapping of failures to what
// a cell shows.
#pragma once

#include "cells.hpp"

#include <com/sun/star/uno/Any.hxx>
#include <com/sun/star/uno/Sequence.hxx>
#include <com/sun/star/uno/XInterface.hpp>

#include <string_view>

namespace lode::addin {

// Limits on what a cell may hand the add-in (after trailing empty rows and columns are trimmed, so
// whole-column references like A:J work). Larger input fails at once with a clear error.
inline constexpr std::size_t kMaxCells = 2'000'000;
inline constexpr std::size_t kMaxColumns = 500;

Arg arg_from_range(const com::sun::star::uno::Sequence<com::sun::star::uno::Sequence<com::sun::star::uno::Any>>& range,
                   std::string_view name);
Arg arg_from_value(const com::sun::star::uno::Any& value, std::string_view name);

com::sun::star::uno::Any to_any(const Output& out);


// The cell result of a failure: throws IllegalArgumentException (Err:502) for bad arguments and
// too-large input, NoConvergenceException (Err:523) for non-convergence, and returns an error
// value (#NUM!, #VALUE!) for the rest.
com::sun::star::uno::Any failure_to_any(Failure failure, const std::string& message,
                                        com::sun::star::uno::XInterface& context);

}  // namespace lode::addin
