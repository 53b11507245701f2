/* The C ABI from C: the item-to-factor assignment of lode_schmid_leiman_compute, checked at the
 * boundary as lode_reliability_compute_omega checks its own (one rule: a 0-based factor or -1, one
 * entry per item). */
#include "capi_test.h"

#include <stdio.h>

void test_schmid_leiman(void) {
  fitted_example f;
  lode_schmid_leiman* sl = NULL;
  /* f.model has 6 items on 2 factors: factors are 0 and 1, -1 leaves an item out */
  const int64_t beyond[N_ITEMS] = {0, 0, 0, 1, 1, 2};
  const int64_t below[N_ITEMS] = {0, 0, -2, 1, 1, 1};
  const int64_t valid[N_ITEMS] = {0, 0, 0, 1, 1, -1};
  fitted_example_open(&f);

  EXPECT(lode_schmid_leiman_compute(f.model, NULL, beyond, N_ITEMS, &sl), LODE_E_INVALID_ARGUMENT,
         "is assigned to factor 2; factors are 0 to 1");
  CHECK(sl == NULL);
  EXPECT(lode_schmid_leiman_compute(f.model, NULL, below, N_ITEMS, &sl), LODE_E_INVALID_ARGUMENT,
         "is assigned to factor -2");
  CHECK(sl == NULL);
  EXPECT(lode_schmid_leiman_compute(f.model, NULL, valid, N_ITEMS - 1, &sl), LODE_E_INVALID_ARGUMENT,
         "5 assignments were given for 6 items");
  EXPECT(lode_schmid_leiman_compute(f.model, NULL, NULL, 3, &sl), LODE_E_INVALID_ARGUMENT,
         "'assignment' is NULL but count is 3");
  EXPECT(lode_schmid_leiman_compute(NULL, NULL, valid, N_ITEMS, &sl), LODE_E_INVALID_ARGUMENT, "model");
  EXPECT(lode_schmid_leiman_compute(f.model, NULL, valid, N_ITEMS, NULL), LODE_E_INVALID_ARGUMENT, "out");
  /* a valid assignment passes the boundary; the two orthogonal factors of this model are then refused
     by the transformation itself, which needs at least 3 oblique factors */
  EXPECT(lode_schmid_leiman_compute(f.model, NULL, valid, N_ITEMS, &sl), LODE_E_INVALID_ARGUMENT, "at least 3 factors");
  CHECK(sl == NULL);

  fitted_example_close(&f);
}
