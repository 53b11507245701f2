/* The C ABI from C: lode_comparison (congruence after matching factors). */
#include "capi_test.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

void test_comparison(void) {
  char text[4096];
  int64_t rows, cols;
  int i;
  fitted_example f;
  lode_comparison* cmp = NULL;
  fitted_example_open(&f);

  /* congruence: a solution against itself with its factors swapped and one reflected */
  {
    double a[N_ITEMS * 2], b[N_ITEMS * 2], out[N_ITEMS * 2], con[4];
    OK(lode_model_matrix(f.model, LODE_MODEL_LOADINGS, a, N_ITEMS * 2, NULL, NULL));
    for (i = 0; i < N_ITEMS; ++i) {
      b[i * 2] = -a[i * 2 + 1];
      b[i * 2 + 1] = a[i * 2];
    }
    OK(lode_comparison_compute(a, b, N_ITEMS, 2, 2, 1, 2, 1, &cmp));
    OK(lode_comparison_matrix(cmp, LODE_COMPARISON_MATCHED_CONGRUENCE, con, 2, &rows, &cols));
    CHECK(rows == 2 && cols == 1 && fabs(con[0] - 1.0) < 1e-12 && fabs(con[1] - 1.0) < 1e-12);
    OK(lode_comparison_matrix(cmp, LODE_COMPARISON_ORDER, con, 2, NULL, NULL));
    CHECK(con[0] == 1.0 && con[1] == 0.0);
    OK(lode_comparison_matrix(cmp, LODE_COMPARISON_SIGNS, con, 2, NULL, NULL));
    CHECK(con[0] == 1.0 && con[1] == -1.0);
    OK(lode_comparison_matrix(cmp, LODE_COMPARISON_ALIGNED, out, N_ITEMS * 2, NULL, NULL));
    CHECK(max_abs_diff(out, a, N_ITEMS * 2) < 1e-15);
    OK(lode_comparison_matrix(cmp, LODE_COMPARISON_CONGRUENCE, con, 4, NULL, NULL));
    OK(lode_comparison_text(cmp, LODE_COMPARISON_NOTES, text, sizeof text, NULL));
    EXPECT(lode_comparison_matrix(cmp, LODE_COMPARISON_NOTES, con, 4, NULL, NULL), LODE_E_INVALID_ARGUMENT, "key 850");
    EXPECT(lode_comparison_text(cmp, LODE_COMPARISON_ORDER, text, 10, NULL), LODE_E_INVALID_ARGUMENT, "key 801");
    EXPECT(lode_comparison_matrix(NULL, LODE_COMPARISON_ORDER, con, 4, NULL, NULL), LODE_E_INVALID_ARGUMENT, "NULL");
    EXPECT(lode_comparison_text(NULL, LODE_COMPARISON_NOTES, text, 10, NULL), LODE_E_INVALID_ARGUMENT, "NULL");
    lode_comparison_free(cmp);
    cmp = NULL;
    b[3] = nan_value();
    EXPECT(lode_comparison_compute(a, b, N_ITEMS, 2, 2, 1, 2, 1, &cmp), LODE_E_INVALID_ARGUMENT, "second loading matrix");
    EXPECT(lode_comparison_compute(a, NULL, N_ITEMS, 2, 2, 1, 2, 1, &cmp), LODE_E_INVALID_ARGUMENT, "'values' is NULL");
    EXPECT(lode_comparison_compute(a, b, N_ITEMS, 2, 2, 1, 2, 1, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
    CHECK(cmp == NULL);
    lode_comparison_free(NULL);
  }
  fitted_example_close(&f);
}
