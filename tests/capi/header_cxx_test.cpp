// lode.h compiles as C++ (warnings as errors) and links with C linkage.
#include "lode.h"

#include <cstdio>
#include <cstring>

int main() {
  const lode_version_info* v = lode_version();
  if (v == nullptr || v->abi_major != LODE_ABI_VERSION_MAJOR) return 1;
  lode_correlation_options o;
  if (lode_correlation_options_init(&o, sizeof o) != LODE_OK) return 1;
  lode_data* d = nullptr;
  if (lode_data_from_raw(nullptr, 3, 3, 3, 1, &d) != LODE_E_INVALID_ARGUMENT) return 1;
  if (std::strstr(lode_last_error(), "NULL") == nullptr) return 1;
  std::printf("liblode %s, ABI %d.%d\n", v->string, v->abi_major, v->abi_minor);
  return 0;
}
