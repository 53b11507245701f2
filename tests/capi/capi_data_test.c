/* The C ABI from C: version, status names, the last error, and data handles (raw answers, correlation
 * and covariance matrices). */
#include "capi_test.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

void test_version_and_status(void) {
  const lode_version_info* v = lode_version();
  int s;
  CHECK(v != NULL);
  CHECK(v->abi_major == LODE_ABI_VERSION_MAJOR);
  CHECK(v->abi_minor >= LODE_ABI_VERSION_MINOR);
  CHECK(v->string != NULL && strlen(v->string) > 0);
  CHECK(v->major >= 0 && v->minor >= 0 && v->patch >= 0);
  for (s = LODE_OK; s <= LODE_E_UNSUPPORTED; ++s) CHECK(strcmp(lode_status_name(s), "unknown status") != 0);
  CHECK(strcmp(lode_status_name(-1), "unknown status") == 0);
  CHECK(strcmp(lode_status_name(9999), "unknown status") == 0);
  CHECK(strcmp(lode_error_message(), "") == 0);
}

void test_data(void) {
  double x[N_ROWS * N_ITEMS];
  lode_data* d = NULL;
  int64_t rows = -1, items = -1;
  const char* names[N_ITEMS] = {"pace", "load", "clarity", NULL, "", "support"};
  make_data(x);

  /* NULL pointers, sizes, strides */
  EXPECT(lode_data_from_raw(x, N_ROWS, N_ITEMS, N_ITEMS, 1, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  EXPECT(lode_data_from_raw(NULL, N_ROWS, N_ITEMS, N_ITEMS, 1, &d), LODE_E_INVALID_ARGUMENT, "'values' is NULL");
  CHECK(d == NULL);
  EXPECT(lode_data_from_raw(x, -1, N_ITEMS, N_ITEMS, 1, &d), LODE_E_INVALID_ARGUMENT, "negative size");
  EXPECT(lode_data_from_raw(x, 0, N_ITEMS, N_ITEMS, 1, &d), LODE_E_INSUFFICIENT_DATA, "empty");
  EXPECT(lode_data_from_raw(x, N_ROWS, N_ITEMS, 0, 1, &d), LODE_E_INVALID_ARGUMENT, "strides");
  EXPECT(lode_data_from_raw(x, N_ROWS, N_ITEMS, N_ITEMS, -1, &d), LODE_E_INVALID_ARGUMENT, "strides");
  EXPECT(lode_data_from_raw(x, INT64_MAX / 2, 4, 4, 1, &d), LODE_E_INVALID_ARGUMENT, "too large");
  CHECK(d == NULL);
  /* non-finite input: infinity is an error naming the column and row; NaN is missing */
  x[7 * N_ITEMS + 2] = inf_value();
  EXPECT(lode_data_from_raw(x, N_ROWS, N_ITEMS, N_ITEMS, 1, &d), LODE_E_INVALID_ARGUMENT, "column 3 holds an infinite value in row 8");
  x[7 * N_ITEMS + 2] = nan_value();
  OK(lode_data_from_raw(x, N_ROWS, N_ITEMS, N_ITEMS, 1, &d));
  CHECK(d != NULL);

  OK(lode_data_shape(d, &rows, &items));
  CHECK(rows == N_ROWS && items == N_ITEMS);
  OK(lode_data_shape(d, NULL, NULL));
  EXPECT(lode_data_shape(NULL, &rows, &items), LODE_E_INVALID_ARGUMENT, "'data' is NULL");

  OK(lode_data_set_item_names(d, names, N_ITEMS));
  EXPECT(lode_data_set_item_names(d, names, 3), LODE_E_INVALID_ARGUMENT, "3 names were given for 6 items");
  EXPECT(lode_data_set_item_names(d, NULL, 2), LODE_E_INVALID_ARGUMENT, "'names' is NULL");
  EXPECT(lode_data_set_item_names(NULL, names, N_ITEMS), LODE_E_INVALID_ARGUMENT, "'data' is NULL");
  OK(lode_data_set_item_names(d, NULL, 0));
  lode_data_free(d);
  lode_data_free(NULL);
}

void test_matrix_input(void) {
  /* Higham (2002), section 4: the nearest correlation matrix to [[1,1,0],[1,1,1],[0,1,1]] has
   * off-diagonal entries 0.7607 (1,2 and 2,3) and 0.1573 (1,3) to four decimals. */
  const double a[9] = {1, 1, 0, 1, 1, 1, 0, 1, 1};
  const double bad_diag[9] = {1, 0.2, 0.1, 0.2, 2, 0.3, 0.1, 0.3, 1};
  const double asym[9] = {1, 0.2, 0.1, 0.25, 1, 0.3, 0.1, 0.3, 1};
  double with_nan[9] = {1, 0.2, 0.1, 0.2, 1, 0.3, 0.1, 0.3, 1};
  const double cov[9] = {4, 1, 0.6, 1, 1, 0.45, 0.6, 0.45, 9}; /* sd 2, 1, 3 */
  const double r_of_cov[9] = {1, 0.5, 0.1, 0.5, 1, 0.15, 0.1, 0.15, 1};
  double out[9];
  lode_data* d = NULL;
  lode_correlation* c = NULL;
  lode_correlation_options o;
  double v;
  int64_t rows, cols;

  EXPECT(lode_data_from_correlation(bad_diag, 3, 3, 1, 100, &d), LODE_E_INVALID_ARGUMENT, "diagonal");
  EXPECT(lode_data_from_correlation(asym, 3, 3, 1, 100, &d), LODE_E_INVALID_ARGUMENT, "not symmetric");
  with_nan[5] = with_nan[7] = nan_value();
  EXPECT(lode_data_from_correlation(with_nan, 3, 3, 1, 100, &d), LODE_E_INVALID_ARGUMENT, "missing or infinite");
  with_nan[5] = with_nan[7] = inf_value();
  EXPECT(lode_data_from_correlation(with_nan, 3, 3, 1, 100, &d), LODE_E_INVALID_ARGUMENT, "infinite");
  EXPECT(lode_data_from_correlation(a, 3, 3, 1, -5, &d), LODE_E_INVALID_ARGUMENT, "negative (-5)");
  EXPECT(lode_data_from_correlation(a, 2, 2, 1, 100, &d), LODE_E_INSUFFICIENT_DATA, "at least 3 items");
  EXPECT(lode_data_from_correlation(a, 3, 3, 1, 100, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  EXPECT(lode_data_from_covariance(a, 3, 3, 1, 100, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  CHECK(d == NULL);

  OK(lode_data_from_correlation(a, 3, 3, 1, 0, &d));
  OK(lode_correlation_options_init(&o, sizeof o));
  o.smooth = 1;
  o.min_eigenvalue = 0.0;
  OK(lode_correlation_compute(d, &o, &c));
  OK(lode_correlation_matrix(c, LODE_CORRELATION_MATRIX, out, 9, &rows, &cols));
  CHECK(rows == 3 && cols == 3);
  CHECK(fabs(out[1] - 0.7607) < 5e-5);
  CHECK(fabs(out[5] - 0.7607) < 5e-5);
  CHECK(fabs(out[2] - 0.1573) < 5e-5);
  OK(lode_correlation_value(c, LODE_CORRELATION_SMOOTHED, &v));
  CHECK(v == 1.0);
  OK(lode_correlation_value(c, LODE_CORRELATION_SMALLEST_EIGENVALUE_BEFORE, &v));
  CHECK(fabs(v - (1.0 - sqrt(2.0))) < 1e-12); /* eigenvalues of A: 1 - sqrt 2, 1, 1 + sqrt 2 */
  OK(lode_correlation_value(c, LODE_CORRELATION_SMOOTHING_MAX_CHANGE, &v));
  CHECK(fabs(v - (1.0 - 0.7607)) < 1e-4);
  OK(lode_correlation_value(c, LODE_CORRELATION_SMOOTHING_RMS_CHANGE, &v));
  CHECK(v > 0.0);
  OK(lode_correlation_value(c, LODE_CORRELATION_SMOOTHING_ITERATIONS, &v));
  CHECK(v >= 1.0);
  OK(lode_correlation_value(c, LODE_CORRELATION_SMOOTHING_CONVERGED, &v));
  OK(lode_correlation_value(c, LODE_CORRELATION_N_OBS, &v));
  CHECK(v == 0.0);
  lode_correlation_free(c);
  c = NULL;

  /* Not smoothed: flagged, SMCs refused with the reason. */
  OK(lode_correlation_compute(d, NULL, &c));
  OK(lode_correlation_value(c, LODE_CORRELATION_POSITIVE_DEFINITE, &v));
  CHECK(v == 0.0);
  EXPECT(lode_correlation_matrix(c, LODE_CORRELATION_SMC, out, 9, &rows, &cols), LODE_E_NOT_POSITIVE_DEFINITE,
         "not positive definite");
  EXPECT(lode_correlation_matrix(c, LODE_CORRELATION_REDUCED_EIGENVALUES, out, 9, NULL, NULL),
         LODE_E_NOT_POSITIVE_DEFINITE, "squared multiple correlations");
  {
    char notes[512];
    size_t len = 0;
    OK(lode_correlation_text(c, LODE_CORRELATION_NOTES, NULL, 0, &len));
    CHECK(len > 0 && len < sizeof notes);
    OK(lode_correlation_text(c, LODE_CORRELATION_NOTES, notes, sizeof notes, &len));
    CHECK(strstr(notes, "not positive definite") != NULL);
    CHECK(strlen(notes) == len);
  }
  lode_correlation_free(c);
  lode_data_free(d);

  /* Covariance input: the same correlations as dividing by the standard deviations; column-major
   * strides on a symmetric matrix read the same values. */
  OK(lode_data_from_covariance(r_of_cov, 3, 3, 1, 50, &d));
  lode_data_free(d);
  d = NULL;
  {
    const double bad_cov[9] = {4, 1, 0.6, 1, -1, 0.45, 0.6, 0.45, 9};
    EXPECT(lode_data_from_covariance(bad_cov, 3, 3, 1, 50, &d), LODE_E_INVALID_ARGUMENT, "column 2 has variance -1");
  }
  OK(lode_data_from_covariance(cov, 3, 1, 3, 50, &d));
  OK(lode_correlation_compute(d, NULL, &c));
  OK(lode_correlation_matrix(c, LODE_CORRELATION_MATRIX, out, 9, NULL, NULL));
  CHECK(max_abs_diff(out, r_of_cov, 9) < 1e-15);
  OK(lode_correlation_value(c, LODE_CORRELATION_N_OBS, &v));
  CHECK(v == 50.0);
  lode_correlation_free(c);
  lode_data_free(d);
}

void test_last_error_is_cleared(void) {
  lode_data* d = NULL;
  EXPECT(lode_data_from_raw(NULL, 1, 1, 1, 1, &d), LODE_E_INVALID_ARGUMENT, "NULL");
  CHECK(lode_error_message()[0] != '\0');
  {
    double x[9] = {1, 0, 0, 0, 1, 0, 0, 0, 1};
    OK(lode_data_from_correlation(x, 3, 3, 1, 10, &d));
    CHECK(strcmp(lode_error_message(), "") == 0);
    lode_data_free(d);
  }
}
