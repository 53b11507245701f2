// Option structs and enum codes at the C boundary, each listed once. Internal to liblode.
//
// Every options struct of lode.h has one field list, a macro LODE_<NAME>_FIELDS(F) that calls
// F(field, default) for each field after struct_size, in the header's order. LODE_OPTIONS_FUNCTIONS
// turns it into the struct's defaults (what lode_<handle>_options_init writes) and its reader (the
// caller's struct merged over the defaults, reading only the fields within the caller's
// struct_size). The defaults are expressions of the core's own option structs wherever the core has
// the setting, so each default is stated in one place.
//
// Every enum of lode.h that names a core enum has one table of {C code, core value}, read both ways
// by core_value (refusing an unknown code with the option's name) and c_code.
#pragma once

#include "boundary.hpp"

#include <cstddef>

namespace lode::capi {

template <class E>
struct Code {
  int code;
  E value;
};

template <class E, std::size_t N>
E core_value(const Code<E> (&table)[N], int code, const char* what) {
  for (const auto& c : table)
    if (c.code == code) return c.value;
  fail(LODE_E_INVALID_ARGUMENT, fmt::format("unknown {} {}", what, code));
}

template <class E, std::size_t N>
int c_code(const Code<E> (&table)[N], E value) {
  for (const auto& c : table)
    if (c.value == value) return c.code;
  return -1;
}

// An option that must lie strictly between 0 and 1 (a level, a share, a cut, a tolerance), checked by
// name.
inline void require_open_unit(double value, const char* name) {
  if (!(value > 0.0 && value < 1.0))
    fail(LODE_E_INVALID_ARGUMENT, fmt::format("{} must lie strictly between 0 and 1; it is {}", name, value));
}

// A thread count: 0 (all cores) or more.
inline void require_threads(int threads) {
  if (threads < 0) fail(LODE_E_INVALID_ARGUMENT, fmt::format("threads must be 0 (all cores) or more; it is {}", threads));
}

}  // namespace lode::capi

#define LODE_OPTION_DEFAULT(field, value) d.field = value;
#define LODE_OPTION_TAKE(field, value) LODE_OPTION_FIELD(o, caller, field);

// Defines `Type defaults_fn()` and `Type merged_fn(const Type* caller)` from FIELDS; the default
// expressions may use `core`, a default-constructed CoreType.
#define LODE_OPTIONS_FUNCTIONS(Type, FIELDS, CoreType, defaults_fn, merged_fn) \
  Type defaults_fn() {                                                        \
    const CoreType core{};                                                    \
    (void)core;                                                               \
    Type d{};                                                                 \
    d.struct_size = sizeof d;                                                 \
    FIELDS(LODE_OPTION_DEFAULT)                                               \
    return d;                                                                 \
  }                                                                           \
  Type merged_fn(const Type* caller) {                                        \
    Type o = defaults_fn();                                                   \
    if (caller) {                                                             \
      ::lode::capi::check_options_size(caller, #Type);                        \
      FIELDS(LODE_OPTION_TAKE)                                                \
    }                                                                         \
    return o;                                                                 \
  }

// The exported lode_<handle>_options_init of an options struct (its name is the struct's plus _init).
#define LODE_OPTIONS_INIT(Type, defaults_fn)                                                                   \
  LODE_API int Type##_init(Type* opts, size_t struct_size) {                                                   \
    return ::lode::capi::guarded([&] { ::lode::capi::init_options(opts, struct_size, defaults_fn(), #Type); }); \
  }
