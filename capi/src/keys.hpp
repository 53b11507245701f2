// Reading results by key: each handle lists its keys once, in three tables (matrices, numbers,
// texts) of {key, reader}; one generic getter per kind does what every lode_<handle>_matrix /
// _value / _text does (the guard, the pointer checks, the key lookup, the size-query rules of
// lode.h). A reader may refuse (fail) when its part of the result is unavailable. Internal to liblode.
#pragma once

#include "boundary.hpp"

#include <cstddef>
#include <cstdint>
#include <string>

namespace lode::capi {

template <class Handle>
struct MatrixKey {
  int key;
  Matrix (*read)(const Handle&);
};

template <class Handle>
struct ValueKey {
  int key;
  double (*read)(const Handle&);
};

template <class Handle>
struct TextKey {
  int key;
  std::string (*read)(const Handle&);
};

// How a handle kind is named in messages: its C type ("lode_bootstrap"), the prefix of its
// functions ("lode_bootstrap") and the name of the handle argument of its getters ("result").
struct HandleNames {
  const char* type;
  const char* functions;
  const char* argument;
};

template <class Entry, std::size_t N>
const Entry& find_key(const Entry (&table)[N], int key, const HandleNames& names, const char* what,
                      const char* getter) {
  for (const Entry& e : table)
    if (e.key == key) return e;
  fail(LODE_E_INVALID_ARGUMENT,
       key_text(key, fmt::format("{} {} ({}_{})", names.type, what, names.functions, getter).c_str()));
}

template <class Handle, std::size_t N>
int get_matrix(const Handle* handle, const MatrixKey<Handle> (&table)[N], const HandleNames& names, int key,
               double* out, std::size_t capacity, int64_t* rows, int64_t* cols) {
  return guarded([&] {
    require_pointer(handle, names.argument);
    write_matrix(find_key(table, key, names, "matrix", "matrix").read(*handle), out, capacity, rows, cols);
  });
}

template <class Handle, std::size_t N>
int get_value(const Handle* handle, const ValueKey<Handle> (&table)[N], const HandleNames& names, int key,
              double* value) {
  return guarded([&] {
    require_pointer(handle, names.argument);
    require_pointer(value, "value");
    *value = find_key(table, key, names, "number", "value").read(*handle);
  });
}

template <class Handle, std::size_t N>
int get_text(const Handle* handle, const TextKey<Handle> (&table)[N], const HandleNames& names, int key, char* out,
             std::size_t capacity, std::size_t* length) {
  return guarded([&] {
    require_pointer(handle, names.argument);
    write_text(find_key(table, key, names, "text", "text").read(*handle), out, capacity, length);
  });
}

}  // namespace lode::capi

// The exported getters of a handle over its key tables: lode_<handle>_matrix, _value and _text as
// lode.h declares them (`prefix` is the functions' common prefix, e.g. lode_model).
#define LODE_MATRIX_GETTER(Handle, prefix, names, table)                                                     \
  LODE_API int prefix##_matrix(const Handle* handle, int key, double* out, size_t capacity, int64_t* rows,   \
                               int64_t* cols) {                                                              \
    return ::lode::capi::get_matrix(handle, table, names, key, out, capacity, rows, cols);                   \
  }
#define LODE_VALUE_GETTER(Handle, prefix, names, table)                                                      \
  LODE_API int prefix##_value(const Handle* handle, int key, double* value) {                                \
    return ::lode::capi::get_value(handle, table, names, key, value);                                        \
  }
#define LODE_TEXT_GETTER(Handle, prefix, names, table)                                                       \
  LODE_API int prefix##_text(const Handle* handle, int key, char* out, size_t capacity, size_t* length) {    \
    return ::lode::capi::get_text(handle, table, names, key, out, capacity, length);                         \
  }
#define LODE_KEY_GETTERS(Handle, prefix, names, matrices, values, texts) \
  LODE_MATRIX_GETTER(Handle, prefix, names, matrices)                    \
  LODE_VALUE_GETTER(Handle, prefix, names, values)                       \
  LODE_TEXT_GETTER(Handle, prefix, names, texts)
