/* The C ABI on missing-value patterns that leave a pair of items with too few rows in common: two
 * items never answered together, a whole item missing, one shared row, for every correlation kind
 * and both missing-value policies. Every call must return an error status with a message naming
 * the problem (never crash). Strict C99, also run under ASan+UBSan. */
#include "capi_check.h"
#include "lode.h"

#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* Correlates `x` (rows x 3, row-major) with the given kind and policy; the call must fail with
 * `status` and a message containing `fragment`. */
static void expect_refused(const double* x, int64_t rows, int kind, int missing, int status, const char* fragment,
                           const char* pattern) {
  lode_data* d = NULL;
  lode_correlation* c = NULL;
  lode_correlation_options o;
  int got;
  ++checks;
  if (lode_correlation_options_init(&o, sizeof o) != LODE_OK || lode_data_from_raw(x, rows, 3, 3, 1, &d) != LODE_OK) {
    ++failures;
    fprintf(stderr, "%s: setup failed: %s\n", pattern, lode_error_message());
    return;
  }
  o.kind = kind;
  o.missing = missing;
  got = lode_correlation_compute(d, &o, &c);
  if (got != status || strstr(lode_error_message(), fragment) == NULL) {
    ++failures;
    fprintf(stderr, "%s (kind %d, missing %d): status %d (%s), message '%s'; expected %d and '%s'\n", pattern,
            kind, missing, got, lode_status_name(got), lode_error_message(), status, fragment);
  }
  lode_correlation_free(c);
  lode_data_free(d);
}

int main(void) {
  const double m = nan_value();
  /* Items 1-2 answered in rows 1-3 (and row 4), item 3 only in rows 5-8: items 1 and 3 are never
   * answered together (the case that crashed pairwise Spearman). */
  const double disjoint[8 * 3] = {1, 2, m, 2, 3, m, 3, 1, m, 4, 4, m, m, m, 1, m, m, 2, m, m, 3, m, m, 5};
  /* Item 3 shares one row with items 1 and 2. */
  const double one_shared[8 * 3] = {1, 2, m, 2, 3, m, 3, 1, m, 4, 4, 2, m, m, 1, m, m, 2, m, m, 3, m, m, 5};
  /* Item 2 never answered. */
  const double whole_missing[6 * 3] = {1, m, 2, 2, m, 3, 3, m, 1, 4, m, 4, 2, m, 2, 5, m, 3};
  const int kinds[3] = {LODE_COEFFICIENT_PEARSON, LODE_COEFFICIENT_SPEARMAN, LODE_COEFFICIENT_POLYCHORIC};
  int k;
  for (k = 0; k < 3; ++k) {
    expect_refused(disjoint, 8, kinds[k], LODE_MISSING_PAIRWISE, LODE_E_INSUFFICIENT_DATA,
                   "column 1 and column 3 are both answered in only 0 rows", "disjoint answer sets");
    expect_refused(disjoint, 8, kinds[k], LODE_MISSING_LISTWISE, LODE_E_INSUFFICIENT_DATA, "survive listwise deletion", "disjoint, listwise");
    expect_refused(one_shared, 8, kinds[k], LODE_MISSING_PAIRWISE, LODE_E_INSUFFICIENT_DATA,
                   "column 1 and column 3 are both answered in only 1 rows", "one shared row");
    expect_refused(one_shared, 8, kinds[k], LODE_MISSING_LISTWISE, LODE_E_INSUFFICIENT_DATA, "survive listwise deletion", "one shared, listwise");
    expect_refused(whole_missing, 6, kinds[k], LODE_MISSING_PAIRWISE, LODE_E_INSUFFICIENT_DATA, "column 2 is answered in only 0",
                   "whole item missing");
    expect_refused(whole_missing, 6, kinds[k], LODE_MISSING_LISTWISE, LODE_E_INSUFFICIENT_DATA, "column 2 is answered in only 0",
                   "whole item missing, listwise");
  }
  return check_report("missing_patterns");
}
