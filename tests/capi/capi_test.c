/* The C ABI from C: every entry point of lode.h, its results and its error paths (NULL pointers,
 * wrong sizes and strides, unknown keys, option structs of an older and a newer size, non-finite
 * input, cancelling through a progress callback). Compiled as strict C99 (-std=c99 -pedantic
 * -Werror), also under ASan+UBSan.
 * Numerical agreement with outside references is checked by the Python suite (numpy, R); the
 * numbers checked here are a published example (Higham 2002) and identities of the interface. */
#include "lode.h"

#include <math.h>
#include <stddef.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

static int failures = 0;
static int checks = 0;

#define CHECK(cond)                                                            \
  do {                                                                         \
    ++checks;                                                                  \
    if (!(cond)) {                                                             \
      ++failures;                                                              \
      fprintf(stderr, "%s:%d: check failed: %s\n", __FILE__, __LINE__, #cond); \
    }                                                                          \
  } while (0)

/* A call must return `expected`; on a failure status the last error must contain `fragment`. */
static void expect_status(int got, int expected, const char* fragment, const char* call, int line) {
  ++checks;
  if (got != expected) {
    ++failures;
    fprintf(stderr, "line %d: %s returned %d (%s), expected %d (%s); last error: %s\n", line, call, got,
            lode_status_name(got), expected, lode_status_name(expected), lode_error_message());
    return;
  }
  if (expected == LODE_OK) {
    if (lode_error_message()[0] != '\0') {
      ++failures;
      fprintf(stderr, "line %d: %s succeeded but left the message '%s'\n", line, call, lode_error_message());
    }
  } else if (fragment != NULL && strstr(lode_error_message(), fragment) == NULL) {
    ++failures;
    fprintf(stderr, "line %d: %s: message '%s' lacks '%s'\n", line, call, lode_error_message(), fragment);
  }
}
#define EXPECT(call, status, fragment) expect_status((call), (status), (fragment), #call, __LINE__)
#define OK(call) expect_status((call), LODE_OK, NULL, #call, __LINE__)

static double nan_value(void) { return strtod("nan", NULL); }
static double inf_value(void) { return strtod("inf", NULL); }

/* Two-construct survey-like data, row-major, 5-point items (deterministic, no randomness needed). */
#define N_ROWS 60
#define N_ITEMS 6
static void make_data(double* x) {
  int i, j;
  for (i = 0; i < N_ROWS; ++i) {
    double f1 = sin(0.37 * i) * 1.4, f2 = cos(0.91 * i + 0.3) * 1.4;
    for (j = 0; j < N_ITEMS; ++j) {
      double noise = sin(1.7 * i * (j + 1) + j) * 0.9;
      double v = 3.0 + (j < 3 ? f1 : f2) + noise;
      x[i * N_ITEMS + j] = floor(v + 0.5);
    }
  }
}

static double max_abs_diff(const double* a, const double* b, size_t n) {
  double m = 0.0;
  size_t k;
  for (k = 0; k < n; ++k) {
    double d = fabs(a[k] - b[k]);
    if (d > m || d != d) m = d != d ? 1e300 : d;
  }
  return m;
}

static void test_version_and_status(void) {
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

static void test_data(void) {
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

static void test_matrix_input(void) {
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

static void test_correlation(void) {
  double x[N_ROWS * N_ITEMS], xt[N_ROWS * N_ITEMS], out[N_ITEMS * N_ITEMS], out2[N_ITEMS * N_ITEMS];
  double ev[N_ITEMS], smc[N_ITEMS], counts[N_ITEMS * N_ITEMS], v;
  char text[4];
  size_t len = 99;
  int64_t rows = 0, cols = 0;
  int i, j;
  lode_data *d = NULL, *dt = NULL;
  lode_correlation *c = NULL, *c2 = NULL;
  lode_correlation_options o;
  make_data(x);
  x[3 * N_ITEMS + 1] = nan_value();
  x[10 * N_ITEMS + 4] = nan_value();
  for (i = 0; i < N_ROWS; ++i)
    for (j = 0; j < N_ITEMS; ++j) xt[j * N_ROWS + i] = x[i * N_ITEMS + j]; /* column-major copy */

  /* options: init errors */
  EXPECT(lode_correlation_options_init(NULL, sizeof o), LODE_E_INVALID_ARGUMENT, "'opts' is NULL");
  EXPECT(lode_correlation_options_init(&o, 2), LODE_E_INVALID_ARGUMENT, "too small");
  OK(lode_correlation_options_init(&o, sizeof o));
  CHECK(o.struct_size == sizeof o && o.kind == LODE_COEFFICIENT_PEARSON && o.missing == LODE_MISSING_PAIRWISE && o.smooth == 0);
  CHECK(o.min_eigenvalue == 1e-6 && o.min_pair_observations == 3);

  OK(lode_data_from_raw(x, N_ROWS, N_ITEMS, N_ITEMS, 1, &d));
  OK(lode_data_from_raw(xt, N_ROWS, N_ITEMS, 1, N_ROWS, &dt));
  EXPECT(lode_correlation_compute(NULL, &o, &c), LODE_E_INVALID_ARGUMENT, "'data' is NULL");
  EXPECT(lode_correlation_compute(d, &o, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");

  /* row-major and column-major input give the same matrix */
  OK(lode_correlation_compute(d, &o, &c));
  OK(lode_correlation_compute(dt, &o, &c2));
  OK(lode_correlation_matrix(c, LODE_CORRELATION_MATRIX, out, N_ITEMS * N_ITEMS, &rows, &cols));
  OK(lode_correlation_matrix(c2, LODE_CORRELATION_MATRIX, out2, N_ITEMS * N_ITEMS, NULL, NULL));
  CHECK(rows == N_ITEMS && cols == N_ITEMS);
  CHECK(max_abs_diff(out, out2, N_ITEMS * N_ITEMS) == 0.0);
  for (i = 0; i < N_ITEMS; ++i) CHECK(out[i * N_ITEMS + i] == 1.0);
  lode_correlation_free(c2);
  c2 = NULL;

  /* size query, too-small buffer, NULL out with capacity */
  rows = cols = 0;
  OK(lode_correlation_matrix(c, LODE_CORRELATION_MATRIX, NULL, 0, &rows, &cols));
  CHECK(rows == N_ITEMS && cols == N_ITEMS);
  EXPECT(lode_correlation_matrix(c, LODE_CORRELATION_MATRIX, out, 35, &rows, &cols), LODE_E_BUFFER_TOO_SMALL,
         "6 x 6 (36 numbers) but the buffer holds 35");
  EXPECT(lode_correlation_matrix(c, LODE_CORRELATION_MATRIX, NULL, 36, &rows, &cols), LODE_E_INVALID_ARGUMENT,
         "'out' is NULL");
  EXPECT(lode_correlation_matrix(NULL, LODE_CORRELATION_MATRIX, out, 36, &rows, &cols), LODE_E_INVALID_ARGUMENT,
         "'corr' is NULL");
  EXPECT(lode_correlation_matrix(c, LODE_CORRELATION_N_OBS, out, 36, &rows, &cols), LODE_E_INVALID_ARGUMENT,
         "key 121 is not a key");

  /* eigenvalues: sum to the number of items; SMCs in [0, 1); pair counts */
  OK(lode_correlation_matrix(c, LODE_CORRELATION_EIGENVALUES, ev, N_ITEMS, &rows, &cols));
  CHECK(rows == N_ITEMS && cols == 1);
  v = 0.0;
  for (i = 0; i < N_ITEMS; ++i) v += ev[i];
  CHECK(fabs(v - N_ITEMS) < 1e-12);
  for (i = 1; i < N_ITEMS; ++i) CHECK(ev[i] <= ev[i - 1]);
  OK(lode_correlation_matrix(c, LODE_CORRELATION_SMC, smc, N_ITEMS, NULL, NULL));
  for (i = 0; i < N_ITEMS; ++i) CHECK(smc[i] >= 0.0 && smc[i] < 1.0);
  OK(lode_correlation_matrix(c, LODE_CORRELATION_REDUCED_EIGENVALUES, ev, N_ITEMS, NULL, NULL));
  OK(lode_correlation_matrix(c, LODE_CORRELATION_PAIR_COUNTS, counts, N_ITEMS * N_ITEMS, NULL, NULL));
  CHECK(counts[0] == N_ROWS - 0 && counts[1 * N_ITEMS + 1] == N_ROWS - 1 && counts[1 * N_ITEMS + 4] == N_ROWS - 2);

  /* numbers */
  OK(lode_correlation_value(c, LODE_CORRELATION_ITEMS, &v));
  CHECK(v == N_ITEMS);
  OK(lode_correlation_value(c, LODE_CORRELATION_N_OBS, &v));
  CHECK(v == N_ROWS - 2); /* pairwise: the smallest pair count */
  OK(lode_correlation_value(c, LODE_CORRELATION_ROWS_TOTAL, &v));
  CHECK(v == N_ROWS);
  OK(lode_correlation_value(c, LODE_CORRELATION_ROWS_COMPLETE, &v));
  CHECK(v == N_ROWS - 2);
  OK(lode_correlation_value(c, LODE_CORRELATION_ROWS_USED, &v));
  CHECK(v == N_ROWS);
  OK(lode_correlation_value(c, LODE_CORRELATION_MIN_PAIR_COUNT, &v));
  CHECK(v == N_ROWS - 2);
  OK(lode_correlation_value(c, LODE_CORRELATION_MISSING_FRACTION, &v));
  CHECK(fabs(v - 2.0 / (N_ROWS * N_ITEMS)) < 1e-15);
  OK(lode_correlation_value(c, LODE_CORRELATION_POSITIVE_DEFINITE, &v));
  CHECK(v == 1.0);
  OK(lode_correlation_value(c, LODE_CORRELATION_SMOOTHED, &v));
  CHECK(v == 0.0);
  OK(lode_correlation_value(c, LODE_CORRELATION_SMALLEST_EIGENVALUE_BEFORE, &v));
  OK(lode_correlation_value(c, LODE_CORRELATION_SMOOTHING_MAX_CHANGE, &v));
  CHECK(v == 0.0);
  OK(lode_correlation_value(c, LODE_CORRELATION_SMOOTHING_RMS_CHANGE, &v));
  OK(lode_correlation_value(c, LODE_CORRELATION_SMOOTHING_CONVERGED, &v));
  OK(lode_correlation_value(c, LODE_CORRELATION_SMOOTHING_ITERATIONS, &v));
  OK(lode_correlation_value(c, LODE_CORRELATION_KIND, &v));
  CHECK(v == LODE_COEFFICIENT_PEARSON);
  OK(lode_correlation_value(c, LODE_CORRELATION_MISSING, &v));
  CHECK(v == LODE_MISSING_PAIRWISE);
  EXPECT(lode_correlation_value(c, LODE_CORRELATION_MATRIX, &v), LODE_E_INVALID_ARGUMENT, "key 100");
  EXPECT(lode_correlation_value(c, LODE_CORRELATION_ITEMS, NULL), LODE_E_INVALID_ARGUMENT, "'value' is NULL");
  EXPECT(lode_correlation_value(NULL, LODE_CORRELATION_ITEMS, &v), LODE_E_INVALID_ARGUMENT, "'corr' is NULL");

  /* text: empty notes, size query, too small, NULL */
  OK(lode_correlation_text(c, LODE_CORRELATION_NOTES, NULL, 0, &len));
  CHECK(len == 0);
  OK(lode_correlation_text(c, LODE_CORRELATION_NOTES, text, 1, NULL));
  CHECK(text[0] == '\0');
  EXPECT(lode_correlation_text(c, LODE_CORRELATION_NOTES, NULL, 4, &len), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  EXPECT(lode_correlation_text(c, LODE_CORRELATION_ITEMS, text, 4, &len), LODE_E_INVALID_ARGUMENT, "key 120");
  EXPECT(lode_correlation_text(NULL, LODE_CORRELATION_NOTES, text, 4, &len), LODE_E_INVALID_ARGUMENT, "'corr' is NULL");
  lode_correlation_free(c);
  c = NULL;

  /* listwise and Spearman */
  o.missing = LODE_MISSING_LISTWISE;
  o.kind = LODE_COEFFICIENT_SPEARMAN;
  OK(lode_correlation_compute(d, &o, &c));
  OK(lode_correlation_value(c, LODE_CORRELATION_N_OBS, &v));
  CHECK(v == N_ROWS - 2);
  OK(lode_correlation_value(c, LODE_CORRELATION_KIND, &v));
  CHECK(v == LODE_COEFFICIENT_SPEARMAN);
  OK(lode_correlation_value(c, LODE_CORRELATION_MISSING, &v));
  CHECK(v == LODE_MISSING_LISTWISE);
  lode_correlation_free(c);
  c = NULL;

  /* bad option values */
  OK(lode_correlation_options_init(&o, sizeof o));
  o.kind = 7;
  EXPECT(lode_correlation_compute(d, &o, &c), LODE_E_INVALID_ARGUMENT, "unknown correlation kind 7");
  o.kind = LODE_COEFFICIENT_PEARSON;
  o.missing = -1;
  EXPECT(lode_correlation_compute(d, &o, &c), LODE_E_INVALID_ARGUMENT, "unknown missing-value policy -1");
  o.missing = LODE_MISSING_PAIRWISE;
  o.min_eigenvalue = nan_value();
  EXPECT(lode_correlation_compute(d, &o, &c), LODE_E_INVALID_ARGUMENT, "min_eigenvalue");
  o.min_eigenvalue = 1e-6;
  o.min_pair_observations = 1;
  EXPECT(lode_correlation_compute(d, &o, &c), LODE_E_INVALID_ARGUMENT, "min_pair_observations");
  o.min_pair_observations = 1000;
  EXPECT(lode_correlation_compute(d, &o, &c), LODE_E_INSUFFICIENT_DATA, "at least 1000 are needed");
  CHECK(c == NULL);

  /* an option struct of an older, smaller size: fields beyond it take their defaults
   * (min_pair_observations = 1000 is not read, so the call succeeds) */
  o.missing = LODE_MISSING_LISTWISE;
  o.struct_size = offsetof(lode_correlation_options, min_pair_observations);
  OK(lode_correlation_compute(d, &o, &c));
  OK(lode_correlation_value(c, LODE_CORRELATION_MISSING, &v));
  CHECK(v == LODE_MISSING_LISTWISE);
  lode_correlation_free(c);
  c = NULL;
  o.struct_size = offsetof(lode_correlation_options, missing); /* only `kind` known: missing defaults to pairwise */
  OK(lode_correlation_compute(d, &o, &c));
  OK(lode_correlation_value(c, LODE_CORRELATION_MISSING, &v));
  CHECK(v == LODE_MISSING_PAIRWISE);
  lode_correlation_free(c);
  c = NULL;
  o.struct_size = 3;
  EXPECT(lode_correlation_compute(d, &o, &c), LODE_E_INVALID_ARGUMENT, "struct_size is 3");
  o.struct_size = 0;
  EXPECT(lode_correlation_compute(d, &o, &c), LODE_E_INVALID_ARGUMENT, "lode_correlation_options_init");
  {
    /* an older caller's init: only the fields within its size are written */
    lode_correlation_options small;
    memset(&small, 0x5a, sizeof small);
    OK(lode_correlation_options_init(&small, offsetof(lode_correlation_options, smooth)));
    CHECK(small.struct_size == offsetof(lode_correlation_options, smooth) && small.kind == LODE_COEFFICIENT_PEARSON);
    CHECK(small.smooth == 0x5a5a5a5a); /* beyond its size: untouched */
    OK(lode_correlation_compute(d, &small, &c));
    lode_correlation_free(c);
    c = NULL;
  }
  {
    /* a newer caller: a larger struct is accepted while the fields this library lacks are zero */
    struct newer {
      lode_correlation_options base;
      double future_field;
    } n;
    OK(lode_correlation_options_init(&n.base, sizeof n));
    CHECK(n.base.struct_size == sizeof n && n.future_field == 0.0);
    OK(lode_correlation_compute(d, &n.base, &c));
    lode_correlation_free(c);
    c = NULL;
    n.future_field = 2.5;
    EXPECT(lode_correlation_compute(d, &n.base, &c), LODE_E_UNSUPPORTED, "newer Lode");
    CHECK(c == NULL);
  }

  /* content errors from the core, with item names in the message */
  {
    double y[N_ROWS * N_ITEMS];
    const char* names[N_ITEMS] = {"pace", "load", "clarity", "fairness", "support", "respect"};
    lode_data* dy = NULL;
    memcpy(y, x, sizeof y);
    for (i = 0; i < N_ROWS; ++i) y[i * N_ITEMS + 4] = 2.0;
    OK(lode_data_from_raw(y, N_ROWS, N_ITEMS, N_ITEMS, 1, &dy));
    EXPECT(lode_correlation_compute(dy, NULL, &c), LODE_E_INSUFFICIENT_DATA, "column 5 is constant");
    OK(lode_data_set_item_names(dy, names, N_ITEMS));
    EXPECT(lode_correlation_compute(dy, NULL, &c), LODE_E_INSUFFICIENT_DATA, "item 'support' is constant");
    lode_data_free(dy);
    OK(lode_data_from_raw(y, N_ROWS, 2, N_ITEMS, 1, &dy));
    EXPECT(lode_correlation_compute(dy, NULL, &c), LODE_E_INSUFFICIENT_DATA, "at least 3 items");
    lode_data_free(dy);
    for (i = 0; i < N_ROWS; ++i) y[i * N_ITEMS + 4] = nan_value();
    OK(lode_data_from_raw(y, N_ROWS, N_ITEMS, N_ITEMS, 1, &dy));
    EXPECT(lode_correlation_compute(dy, NULL, &c), LODE_E_INSUFFICIENT_DATA, "answered in only 0 of 60 rows");
    lode_data_free(dy);
  }
  CHECK(c == NULL);

  /* the result outlives its data handle */
  OK(lode_correlation_compute(d, NULL, &c));
  lode_data_free(d);
  lode_data_free(dt);
  OK(lode_correlation_matrix(c, LODE_CORRELATION_MATRIX, out2, N_ITEMS * N_ITEMS, NULL, NULL));
  CHECK(max_abs_diff(out, out2, N_ITEMS * N_ITEMS) == 0.0);
  lode_correlation_free(c);
  lode_correlation_free(NULL);
}

static int polychoric_progress_calls = 0;
static int polychoric_progress(void* user, int64_t done, int64_t total) {
  ++polychoric_progress_calls;
  CHECK(done >= 0 && done <= total);
  return user != NULL; /* a non-NULL user pointer asks to cancel */
}

static void test_polychoric(void) {
  double x[N_ROWS * N_ITEMS], se[N_ITEMS * N_ITEMS], th[N_ITEMS * 4], v;
  lode_data* d = NULL;
  lode_correlation* c = NULL;
  lode_correlation_options o;
  int64_t rows, cols;
  int i, j, dummy = 1;
  make_data(x); /* five-point codes 1..5 (values outside are clipped below) */
  for (i = 0; i < N_ROWS * N_ITEMS; ++i) x[i] = x[i] < 1 ? 1 : (x[i] > 5 ? 5 : x[i]);
  OK(lode_data_from_raw(x, N_ROWS, N_ITEMS, N_ITEMS, 1, &d));
  OK(lode_correlation_options_init(&o, sizeof o));
  CHECK(o.threads == 0 && o.max_categories == 10 && o.zero_cells == LODE_ZERO_CELLS_AT_BOUND && o.zero_cell_add == 0.5);
  o.kind = LODE_COEFFICIENT_POLYCHORIC;
  o.smooth = 1;
  o.threads = 1;
  o.progress = polychoric_progress;
  OK(lode_correlation_compute(d, &o, &c));
  CHECK(polychoric_progress_calls > 0);
  OK(lode_correlation_value(c, LODE_CORRELATION_KIND, &v));
  CHECK(v == LODE_COEFFICIENT_POLYCHORIC);
  OK(lode_correlation_matrix(c, LODE_CORRELATION_STANDARD_ERRORS, se, N_ITEMS * N_ITEMS, &rows, &cols));
  CHECK(rows == N_ITEMS && cols == N_ITEMS && se[0] == 0.0 && se[1] > 0.0 && se[1] < 0.5);
  OK(lode_correlation_matrix(c, LODE_CORRELATION_THRESHOLDS, NULL, 0, &rows, &cols));
  CHECK(rows == N_ITEMS && cols >= 1 && cols <= 4);
  OK(lode_correlation_matrix(c, LODE_CORRELATION_THRESHOLDS, th, (size_t)(rows * cols), NULL, NULL));
  for (i = 0; i < rows; ++i)
    for (j = 1; j < cols; ++j)
      if (th[i * cols + j] == th[i * cols + j]) CHECK(th[i * cols + j] > th[i * cols + j - 1]); /* ascending */
  OK(lode_correlation_value(c, LODE_CORRELATION_PAIRS_NOT_CONVERGED, &v));
  CHECK(v == 0.0);
  OK(lode_correlation_value(c, LODE_CORRELATION_PAIRS_AT_BOUND, &v));
  OK(lode_correlation_value(c, LODE_CORRELATION_PAIRS_ZERO_CELL_CORRECTED, &v));
  lode_correlation_free(c);
  c = NULL;

  /* standard errors exist only for polychoric correlations */
  OK(lode_correlation_compute(d, NULL, &c));
  EXPECT(lode_correlation_matrix(c, LODE_CORRELATION_STANDARD_ERRORS, se, 36, NULL, NULL), LODE_E_INVALID_ARGUMENT,
         "only for polychoric");
  OK(lode_correlation_value(c, LODE_CORRELATION_PAIRS_AT_BOUND, &v));
  CHECK(v == 0.0);
  lode_correlation_free(c);
  c = NULL;

  /* cancelled through the callback: 60 five-point items of 2000 rows take far longer than the 50 ms
   * after which progress is first reported */
  {
    enum { BIG_N = 2000, BIG_P = 60 };
    double* big = (double*)malloc(sizeof(double) * BIG_N * BIG_P);
    lode_data* db = NULL;
    CHECK(big != NULL);
    for (i = 0; i < BIG_N; ++i)
      for (j = 0; j < BIG_P; ++j) big[i * BIG_P + j] = (double)(1 + (int)fabs(floor(2.5 + 2.0 * sin(0.7 * i + 0.3 * j * j) + sin(1.3 * i * (j + 1)))) % 5);
    OK(lode_data_from_raw(big, BIG_N, BIG_P, BIG_P, 1, &db));
    free(big);
    o.progress_user = &dummy;
    EXPECT(lode_correlation_compute(db, &o, &c), LODE_E_CANCELLED, "cancel");
    CHECK(c == NULL);
    lode_data_free(db);
  }
  o.progress_user = NULL;
  o.threads = -1;
  EXPECT(lode_correlation_compute(d, &o, &c), LODE_E_INVALID_ARGUMENT, "threads");
  o.threads = 1;
  o.max_categories = 1;
  EXPECT(lode_correlation_compute(d, &o, &c), LODE_E_INVALID_ARGUMENT, "max_categories");
  o.max_categories = 3;
  EXPECT(lode_correlation_compute(d, &o, &c), LODE_E_INVALID_ARGUMENT, "column 1");
  o.max_categories = 10;
  o.zero_cells = 5;
  EXPECT(lode_correlation_compute(d, &o, &c), LODE_E_INVALID_ARGUMENT, "zero-cell policy 5");
  o.zero_cells = LODE_ZERO_CELLS_ALWAYS;
  o.zero_cell_add = 0.0;
  EXPECT(lode_correlation_compute(d, &o, &c), LODE_E_INVALID_ARGUMENT, "zero_cell_add");
  CHECK(c == NULL);
  lode_data_free(d);
  /* non-integer codes are refused, naming the item */
  x[4 * N_ITEMS + 3] = 2.5;
  OK(lode_data_from_raw(x, N_ROWS, N_ITEMS, N_ITEMS, 1, &d));
  OK(lode_correlation_options_init(&o, sizeof o));
  o.kind = LODE_COEFFICIENT_POLYCHORIC;
  EXPECT(lode_correlation_compute(d, &o, &c), LODE_E_INVALID_ARGUMENT, "column 4");
  lode_data_free(d);
}


/* An exact two-factor population correlation matrix: items 1-3 load .8/.7/.6 on factor 1, items
 * 4-6 load .7/.6/.5 on factor 2, uncorrelated factors. A two-factor model reproduces it exactly
 * (common practice: the population check of an extraction). Its eigenvalues (numpy.linalg.eigvalsh)
 * are 1.976, 1.716, 0.711, 0.593, 0.573, 0.431: two above one. */
static void population_matrix(double* r) {
  const double l[6] = {0.8, 0.7, 0.6, 0.7, 0.6, 0.5};
  int i, j;
  for (i = 0; i < 6; ++i)
    for (j = 0; j < 6; ++j) r[i * 6 + j] = i == j ? 1.0 : ((i < 3) == (j < 3) ? l[i] * l[j] : 0.0);
}

static lode_correlation* population_correlation(int64_t n_obs) {
  double r[36];
  lode_data* d = NULL;
  lode_correlation* c = NULL;
  population_matrix(r);
  OK(lode_data_from_correlation(r, 6, 6, 1, n_obs, &d));
  OK(lode_correlation_compute(d, NULL, &c));
  lode_data_free(d);
  return c;
}

static void test_factorability(void) {
  lode_correlation* c = population_correlation(200);
  lode_correlation* c0 = population_correlation(0);
  lode_factorability* f = NULL;
  double v, msa[6], smc[6];
  char label[64];
  size_t len = 0;
  int64_t rows = 0, cols = 0;
  int i;

  EXPECT(lode_factorability_compute(NULL, &f), LODE_E_INVALID_ARGUMENT, "'corr' is NULL");
  EXPECT(lode_factorability_compute(c, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  OK(lode_factorability_compute(c, &f));
  OK(lode_factorability_value(f, LODE_FACTORABILITY_KMO, &v));
  CHECK(v > 0.5 && v < 1.0);
  OK(lode_factorability_matrix(f, LODE_FACTORABILITY_MSA, NULL, 0, &rows, &cols));
  CHECK(rows == 6 && cols == 1);
  OK(lode_factorability_matrix(f, LODE_FACTORABILITY_MSA, msa, 6, NULL, NULL));
  for (i = 0; i < 6; ++i) CHECK(msa[i] > 0.0 && msa[i] < 1.0);
  EXPECT(lode_factorability_matrix(f, LODE_FACTORABILITY_MSA, msa, 5, NULL, NULL), LODE_E_BUFFER_TOO_SMALL, "holds 5");
  OK(lode_factorability_matrix(f, LODE_FACTORABILITY_SMC, smc, 6, NULL, NULL));
  for (i = 0; i < 6; ++i) CHECK(smc[i] > 0.0 && smc[i] < 1.0);
  OK(lode_factorability_value(f, LODE_FACTORABILITY_BARTLETT_CHI_SQUARE, &v));
  CHECK(v > 0.0);
  OK(lode_factorability_value(f, LODE_FACTORABILITY_BARTLETT_DF, &v));
  CHECK(v == 15.0);
  OK(lode_factorability_value(f, LODE_FACTORABILITY_BARTLETT_P_VALUE, &v));
  CHECK(v >= 0.0 && v < 1e-6);
  OK(lode_factorability_value(f, LODE_FACTORABILITY_BARTLETT_N_OBS, &v));
  CHECK(v == 200.0);
  OK(lode_factorability_value(f, LODE_FACTORABILITY_DETERMINANT, &v));
  CHECK(v > 0.0 && v < 1.0);
  OK(lode_factorability_value(f, LODE_FACTORABILITY_LOG_DETERMINANT, &v));
  CHECK(v < 0.0);
  OK(lode_factorability_text(f, LODE_FACTORABILITY_KMO_LABEL, NULL, 0, &len));
  CHECK(len > 0 && len < sizeof label);
  OK(lode_factorability_text(f, LODE_FACTORABILITY_KMO_LABEL, label, sizeof label, NULL));
  CHECK(strlen(label) == len);
  OK(lode_factorability_text(f, LODE_FACTORABILITY_NOTES, NULL, 0, &len));
  EXPECT(lode_factorability_text(f, LODE_FACTORABILITY_KMO_LABEL, label, 2, NULL), LODE_E_BUFFER_TOO_SMALL, "buffer");
  EXPECT(lode_factorability_value(f, LODE_FACTORABILITY_MSA, &v), LODE_E_INVALID_ARGUMENT, "key 200");
  EXPECT(lode_factorability_value(f, LODE_FACTORABILITY_KMO, NULL), LODE_E_INVALID_ARGUMENT, "'value' is NULL");
  EXPECT(lode_factorability_matrix(f, LODE_FACTORABILITY_KMO, msa, 6, NULL, NULL), LODE_E_INVALID_ARGUMENT, "key 220");
  EXPECT(lode_factorability_text(f, LODE_CORRELATION_NOTES, label, 64, NULL), LODE_E_INVALID_ARGUMENT, "key 150");
  EXPECT(lode_factorability_value(NULL, LODE_FACTORABILITY_KMO, &v), LODE_E_INVALID_ARGUMENT, "'f' is NULL");
  EXPECT(lode_factorability_matrix(NULL, LODE_FACTORABILITY_MSA, msa, 6, NULL, NULL), LODE_E_INVALID_ARGUMENT, "NULL");
  EXPECT(lode_factorability_text(NULL, LODE_FACTORABILITY_NOTES, label, 64, NULL), LODE_E_INVALID_ARGUMENT, "NULL");
  lode_factorability_free(f);
  f = NULL;

  /* without n_obs: Bartlett's test is unavailable, with the reason */
  OK(lode_factorability_compute(c0, &f));
  EXPECT(lode_factorability_value(f, LODE_FACTORABILITY_BARTLETT_CHI_SQUARE, &v), LODE_E_INSUFFICIENT_DATA, "n_obs");
  OK(lode_factorability_value(f, LODE_FACTORABILITY_KMO, &v));
  lode_factorability_free(f);
  lode_factorability_free(NULL);
  lode_correlation_free(c);
  lode_correlation_free(c0);
}


static int progress_calls = 0;
static int count_progress(void* user, int64_t done, int64_t total) {
  ++progress_calls;
  CHECK(done >= 0 && done <= total);
  return user != NULL && *(const int*)user != 0; /* nonzero cancels */
}

static void test_factor_count(void) {
  lode_correlation* c = population_correlation(300);
  lode_correlation* c0 = population_correlation(0);
  lode_factor_count* n = NULL;
  lode_factor_count_options o;
  double v, col[6];
  char text[2048];
  size_t len = 0;
  int64_t rows, cols;
  int cancel = 1, keep_going = 0;

  EXPECT(lode_factor_count_options_init(NULL, sizeof o), LODE_E_INVALID_ARGUMENT, "'opts' is NULL");
  OK(lode_factor_count_options_init(&o, sizeof o));
  CHECK(o.replicates == 500 && o.percentile == 95.0 && o.threads == 0 && o.progress == NULL);
  o.replicates = 200;
  o.seed = 42;
  o.progress = count_progress;
  o.progress_user = &keep_going;
  EXPECT(lode_factor_count_compute(NULL, &o, &n), LODE_E_INVALID_ARGUMENT, "'corr' is NULL");
  EXPECT(lode_factor_count_compute(c, &o, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  OK(lode_factor_count_compute(c, &o, &n));
  CHECK(progress_calls > 0);
  OK(lode_factor_count_value(n, LODE_FACTOR_COUNT_SUGGESTED, &v));
  CHECK(v == 2.0);
  OK(lode_factor_count_value(n, LODE_FACTOR_COUNT_PARALLEL_FACTOR, &v));
  OK(lode_factor_count_value(n, LODE_FACTOR_COUNT_PARALLEL_PC, &v));
  OK(lode_factor_count_value(n, LODE_FACTOR_COUNT_MAP_SQUARED_SUGGESTED, &v));
  OK(lode_factor_count_value(n, LODE_FACTOR_COUNT_MAP_FOURTH_SUGGESTED, &v));
  OK(lode_factor_count_value(n, LODE_FACTOR_COUNT_KAISER, &v));
  CHECK(v == 2.0); /* two eigenvalues above one */
  OK(lode_factor_count_value(n, LODE_FACTOR_COUNT_EMPIRICAL_KAISER, &v));
  OK(lode_factor_count_value(n, LODE_FACTOR_COUNT_REPLICATES, &v));
  CHECK(v == 200.0);
  OK(lode_factor_count_value(n, LODE_FACTOR_COUNT_N_OBS, &v));
  CHECK(v == 300.0);
  OK(lode_factor_count_value(n, LODE_FACTOR_COUNT_PERCENTILE, &v));
  CHECK(v == 95.0);
  {
    static const int keys[] = {LODE_FACTOR_COUNT_OBSERVED_PC, LODE_FACTOR_COUNT_OBSERVED_FACTOR, LODE_FACTOR_COUNT_RANDOM_PC_MEAN,
                               LODE_FACTOR_COUNT_RANDOM_PC_PERCENTILE, LODE_FACTOR_COUNT_RANDOM_FACTOR_MEAN,
                               LODE_FACTOR_COUNT_RANDOM_FACTOR_PERCENTILE, LODE_FACTOR_COUNT_MAP_SQUARED, LODE_FACTOR_COUNT_MAP_FOURTH,
                               LODE_FACTOR_COUNT_EKC_REFERENCE};
    size_t k;
    for (k = 0; k < sizeof keys / sizeof keys[0]; ++k) {
      OK(lode_factor_count_matrix(n, keys[k], NULL, 0, &rows, &cols));
      CHECK(rows >= 1 && rows <= 6 && cols == 1);
      OK(lode_factor_count_matrix(n, keys[k], col, 6, NULL, NULL));
    }
  }
  OK(lode_factor_count_text(n, LODE_FACTOR_COUNT_REASON, text, sizeof text, &len));
  CHECK(len > 0);
  OK(lode_factor_count_text(n, LODE_FACTOR_COUNT_TABLE, text, sizeof text, &len));
  CHECK(strchr(text, '\t') != NULL);
  OK(lode_factor_count_text(n, LODE_FACTOR_COUNT_NOTES, NULL, 0, &len));
  EXPECT(lode_factor_count_value(n, LODE_FACTOR_COUNT_TABLE, &v), LODE_E_INVALID_ARGUMENT, "key 351");
  EXPECT(lode_factor_count_matrix(n, LODE_FACTOR_COUNT_SUGGESTED, col, 6, NULL, NULL), LODE_E_INVALID_ARGUMENT, "key 320");
  EXPECT(lode_factor_count_text(n, LODE_FACTOR_COUNT_SUGGESTED, text, 8, NULL), LODE_E_INVALID_ARGUMENT, "key 320");
  EXPECT(lode_factor_count_value(NULL, LODE_FACTOR_COUNT_SUGGESTED, &v), LODE_E_INVALID_ARGUMENT, "NULL");
  EXPECT(lode_factor_count_matrix(NULL, LODE_FACTOR_COUNT_MAP_SQUARED, col, 6, NULL, NULL), LODE_E_INVALID_ARGUMENT, "NULL");
  EXPECT(lode_factor_count_text(NULL, LODE_FACTOR_COUNT_REASON, text, 8, NULL), LODE_E_INVALID_ARGUMENT, "NULL");
  lode_factor_count_free(n);
  n = NULL;

  /* cancelled by the callback */
  o.progress_user = &cancel;
  o.replicates = 100000;
  EXPECT(lode_factor_count_compute(c, &o, &n), LODE_E_CANCELLED, NULL);
  CHECK(n == NULL);
  /* bad options; an older struct without the progress fields */
  OK(lode_factor_count_options_init(&o, sizeof o));
  o.replicates = 0;
  EXPECT(lode_factor_count_compute(c, &o, &n), LODE_E_INVALID_ARGUMENT, "replicates");
  o.replicates = 100;
  o.percentile = 100.0;
  EXPECT(lode_factor_count_compute(c, &o, &n), LODE_E_INVALID_ARGUMENT, "percentile");
  o.percentile = 95.0;
  o.threshold = 9;
  EXPECT(lode_factor_count_compute(c, &o, &n), LODE_E_INVALID_ARGUMENT, "threshold");
  o.threshold = LODE_THRESHOLD_MEAN;
  o.source = 9;
  EXPECT(lode_factor_count_compute(c, &o, &n), LODE_E_INVALID_ARGUMENT, "source");
  o.source = LODE_RANDOM_SOURCE_PERMUTATION;
  EXPECT(lode_factor_count_compute(c, &o, &n), LODE_E_INVALID_ARGUMENT, "raw data");
  o.source = LODE_RANDOM_SOURCE_NORMAL;
  o.threads = -2;
  EXPECT(lode_factor_count_compute(c, &o, &n), LODE_E_INVALID_ARGUMENT, "threads");
  o.threads = 0;
  o.progress = count_progress;
  o.progress_user = &cancel;
  o.struct_size = offsetof(lode_factor_count_options, progress); /* older caller: no callback fields */
  OK(lode_factor_count_compute(c, &o, &n));
  lode_factor_count_free(n);
  n = NULL;
  /* without n_obs parallel analysis cannot simulate data of the right size */
  EXPECT(lode_factor_count_compute(c0, NULL, &n), LODE_E_INSUFFICIENT_DATA, NULL);
  CHECK(n == NULL);
  lode_factor_count_free(NULL);
  lode_correlation_free(c);
  lode_correlation_free(c0);
}


/* the loadings behind population_matrix */
static const double simple_loadings[12] = {0.8, 0, 0.7, 0, 0.6, 0, 0, 0.7, 0, 0.6, 0, 0.5};
static void test_rotation(void) {
  /* unrotated two-factor loadings: the simple structure of population_matrix turned by 30 degrees */
  const double s = 0.5, co = 0.86602540378443865;
  const double* simple = simple_loadings;
  double a[12], a_cm[12], out[12], out2[12], phi[4], t[4], v;
  char name[32];
  int i, m = -1;
  int64_t rows, cols;
  lode_rotation *r = NULL, *r2 = NULL;
  lode_rotation_options o;
  for (i = 0; i < 6; ++i) {
    a[i * 2] = simple[i * 2] * co - simple[i * 2 + 1] * s;
    a[i * 2 + 1] = simple[i * 2] * s + simple[i * 2 + 1] * co;
    a_cm[i] = a[i * 2];
    a_cm[6 + i] = a[i * 2 + 1];
  }

  OK(lode_rotation_method_from_name("Oblimin", &m));
  CHECK(m == LODE_CRITERION_OBLIMIN);
  OK(lode_rotation_method_from_name("geomin", &m));
  CHECK(m == LODE_CRITERION_GEOMIN);
  EXPECT(lode_rotation_method_from_name("spin", &m), LODE_E_INVALID_ARGUMENT, "varimax");
  EXPECT(lode_rotation_method_from_name(NULL, &m), LODE_E_INVALID_ARGUMENT, "'name' is NULL");
  EXPECT(lode_rotation_method_from_name("varimax", NULL), LODE_E_INVALID_ARGUMENT, "'method' is NULL");
  CHECK(strcmp(lode_rotation_method_name(LODE_CRITERION_PROMAX), "promax") == 0);
  CHECK(lode_rotation_method_name(99) == NULL && lode_rotation_method_name(-1) == NULL);

  EXPECT(lode_rotation_options_init(NULL, sizeof o), LODE_E_INVALID_ARGUMENT, "'opts' is NULL");
  OK(lode_rotation_options_init(&o, sizeof o));
  CHECK(o.method == LODE_CRITERION_VARIMAX && o.normalize == 1 && o.random_starts == -1 && o.target == NULL);
  OK(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r));
  OK(lode_rotation_compute(a_cm, 6, 2, 1, 6, &o, &r2)); /* column-major: the same */
  OK(lode_rotation_matrix(r, LODE_ROTATION_PATTERN, out, 12, &rows, &cols));
  OK(lode_rotation_matrix(r2, LODE_ROTATION_PATTERN, out2, 12, NULL, NULL));
  CHECK(rows == 6 && cols == 2);
  CHECK(max_abs_diff(out, out2, 12) < 1e-12);
  CHECK(max_abs_diff(out, simple, 12) < 1e-6); /* varimax finds the simple structure back */
  OK(lode_rotation_value(r, LODE_ROTATION_FINAL_CHANGE, &v));
  CHECK(v >= 0.0);
  OK(lode_rotation_value(r, LODE_ROTATION_TOLERANCE, &v));
  CHECK(v > 0.0 && v < 1e-3);
  OK(lode_rotation_value(r, LODE_ROTATION_MAX_ITERATIONS, &v));
  CHECK(v >= 1000.0);
  lode_rotation_free(r2);
  r2 = NULL;
  OK(lode_rotation_matrix(r, LODE_ROTATION_STRUCTURE, out2, 12, NULL, NULL));
  CHECK(max_abs_diff(out, out2, 12) < 1e-12);
  OK(lode_rotation_matrix(r, LODE_ROTATION_FACTOR_CORRELATIONS, phi, 4, NULL, NULL));
  CHECK(fabs(phi[0] - 1) < 1e-12 && fabs(phi[1]) < 1e-12);
  OK(lode_rotation_matrix(r, LODE_ROTATION_TRANSFORM, t, 4, NULL, NULL));
  CHECK(fabs(t[0] * t[0] + t[2] * t[2] - 1.0) < 1e-10);
  OK(lode_rotation_matrix(r, LODE_ROTATION_SS_PATTERN, out2, 2, &rows, &cols));
  CHECK(rows == 2 && cols == 1 && fabs(out2[0] - 1.49) < 1e-6);
  OK(lode_rotation_matrix(r, LODE_ROTATION_SS_STRUCTURE, out2, 2, NULL, NULL));
  OK(lode_rotation_matrix(r, LODE_ROTATION_START_CRITERIA, NULL, 0, &rows, &cols));
  CHECK(rows >= 1);
  OK(lode_rotation_value(r, LODE_ROTATION_CONVERGED, &v));
  OK(lode_rotation_value(r, LODE_ROTATION_OBLIQUE, &v));
  CHECK(v == 0.0);
  OK(lode_rotation_value(r, LODE_ROTATION_METHOD, &v));
  CHECK(v == LODE_CRITERION_VARIMAX);
  {
    static const int keys[] = {LODE_ROTATION_CRITERION, LODE_ROTATION_ITERATIONS, LODE_ROTATION_STARTS,
                               LODE_ROTATION_STARTS_CONVERGED, LODE_ROTATION_REACHED_BEST,
                               LODE_ROTATION_DISTINCT_SOLUTIONS};
    size_t k;
    for (k = 0; k < sizeof keys / sizeof keys[0]; ++k) OK(lode_rotation_value(r, keys[k], &v));
  }
  OK(lode_rotation_text(r, LODE_ROTATION_METHOD_NAME, name, sizeof name, NULL));
  CHECK(strcmp(name, "varimax") == 0);
  EXPECT(lode_rotation_value(r, LODE_ROTATION_PATTERN, &v), LODE_E_INVALID_ARGUMENT, "key 500");
  EXPECT(lode_rotation_matrix(r, LODE_ROTATION_CRITERION, out, 12, NULL, NULL), LODE_E_INVALID_ARGUMENT, "key 520");
  EXPECT(lode_rotation_text(r, LODE_ROTATION_CRITERION, name, 32, NULL), LODE_E_INVALID_ARGUMENT, "key 520");
  EXPECT(lode_rotation_value(NULL, LODE_ROTATION_CRITERION, &v), LODE_E_INVALID_ARGUMENT, "NULL");
  EXPECT(lode_rotation_matrix(NULL, LODE_ROTATION_PATTERN, out, 12, NULL, NULL), LODE_E_INVALID_ARGUMENT, "NULL");
  EXPECT(lode_rotation_text(NULL, LODE_ROTATION_METHOD_NAME, name, 32, NULL), LODE_E_INVALID_ARGUMENT, "NULL");
  lode_rotation_free(r);
  r = NULL;

  /* Kaiser's pairwise varimax converges on it (the convergence flag comes through) */
  o.method = LODE_CRITERION_VARIMAX_KAISER;
  OK(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r));
  OK(lode_rotation_value(r, LODE_ROTATION_CONVERGED, &v));
  CHECK(v == 1.0);
  OK(lode_rotation_matrix(r, LODE_ROTATION_PATTERN, out, 12, NULL, NULL));
  CHECK(max_abs_diff(out, simple, 12) < 1e-6);
  lode_rotation_free(r);
  r = NULL;

  /* oblique, with random starts; an older struct (only method and normalize) */
  o.method = LODE_CRITERION_GEOMIN;
  o.random_starts = 5;
  o.seed = 7;
  OK(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r));
  OK(lode_rotation_value(r, LODE_ROTATION_STARTS, &v));
  CHECK(v == 6.0);
  OK(lode_rotation_value(r, LODE_ROTATION_OBLIQUE, &v));
  CHECK(v == 1.0);
  lode_rotation_free(r);
  r = NULL;
  o.struct_size = offsetof(lode_rotation_options, gamma);
  o.method = LODE_CRITERION_QUARTIMAX;
  o.tolerance = -1.0; /* beyond the old size: not read */
  OK(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r));
  lode_rotation_free(r);
  r = NULL;

  /* target rotation: a partial target (NaN = unspecified) */
  {
    double target[12];
    for (i = 0; i < 12; ++i) target[i] = simple[i] > 0 ? nan_value() : 0.0;
    OK(lode_rotation_options_init(&o, sizeof o));
    o.method = LODE_CRITERION_TARGET_ORTHOGONAL;
    o.target = target;
    o.target_rows = 6;
    o.target_cols = 2;
    o.target_row_stride = 2;
    o.target_col_stride = 1;
    OK(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r));
    OK(lode_rotation_matrix(r, LODE_ROTATION_PATTERN, out, 12, NULL, NULL));
    CHECK(max_abs_diff(out, simple, 12) < 1e-6);
    lode_rotation_free(r);
    r = NULL;
    o.target_rows = 3;
    EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "target");
    o.target_rows = 6;
    target[3] = inf_value();
    EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "infinite");
    o.target = NULL;
    EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "'target' is NULL");
  }

  /* bad input and options */
  OK(lode_rotation_options_init(&o, sizeof o));
  EXPECT(lode_rotation_compute(NULL, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "'values' is NULL");
  EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  EXPECT(lode_rotation_compute(a, 6, 1, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "factor");
  EXPECT(lode_rotation_compute(a, 6, 2, 0, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "strides");
  a[3] = nan_value();
  EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, NULL);
  a[3] = inf_value();
  EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, NULL);
  a[3] = 0.5;
  o.method = 99;
  EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "unknown rotation method 99");
  o.method = LODE_CRITERION_OBLIMIN;
  o.gamma = nan_value();
  EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "gamma");
  o.gamma = 0.0;
  o.random_starts = -5;
  EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "random_starts");
  o.random_starts = 0;
  o.max_iterations = 0;
  EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "max_iterations");
  o.max_iterations = 100;
  o.tolerance = 0.0;
  EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "tolerance");
  o.tolerance = 1e-8;
  o.threads = -1;
  EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "threads");
  o.struct_size = 1;
  EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "struct_size is 1");
  CHECK(r == NULL);
  lode_rotation_free(NULL);
}

static void test_fit(void) {
  lode_correlation* c = population_correlation(250);
  lode_correlation* c0 = population_correlation(0);
  lode_model* m = NULL;
  lode_model_options o;
  lode_rotation_options ro;
  lode_factor_count_options co;
  double v, l[12], resid[36], col[6], phi[4];
  char notes[2048];
  size_t len;
  int64_t rows, cols;
  int i, keep_going = 0;
  const double* simple = simple_loadings;

  EXPECT(lode_model_options_init(NULL, sizeof o), LODE_E_INVALID_ARGUMENT, "'opts' is NULL");
  OK(lode_model_options_init(&o, sizeof o));
  CHECK(o.factors == 0 && o.method == LODE_EXTRACTION_ML && o.rotation == NULL && o.factor_count == NULL);
  OK(lode_rotation_options_init(&ro, sizeof ro));
  o.factors = 2;
  o.rotation = &ro;
  EXPECT(lode_model_compute(NULL, &o, &m), LODE_E_INVALID_ARGUMENT, "'corr' is NULL");
  EXPECT(lode_model_compute(c, &o, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  OK(lode_model_compute(c, &o, &m));
  /* the exact population structure is recovered: loadings, zero residuals, zero chi-square */
  OK(lode_model_matrix(m, LODE_MODEL_LOADINGS, l, 12, &rows, &cols));
  CHECK(rows == 6 && cols == 2);
  CHECK(max_abs_diff(l, simple, 12) < 1e-4);
  OK(lode_model_matrix(m, LODE_MODEL_RESIDUALS, resid, 36, &rows, &cols));
  CHECK(rows == 6 && cols == 6);
  for (i = 0; i < 36; ++i) CHECK(fabs(resid[i]) < 1e-4);
  OK(lode_model_value(m, LODE_MODEL_CHI_SQUARE, &v));
  CHECK(fabs(v) < 1e-3);
  OK(lode_model_value(m, LODE_MODEL_DF, &v));
  CHECK(v == 4.0); /* ((6 - 2)^2 - (6 + 2)) / 2 */
  OK(lode_model_value(m, LODE_MODEL_RMSEA, &v));
  CHECK(fabs(v) < 1e-6);
  OK(lode_model_matrix(m, LODE_MODEL_UNIQUENESSES, col, 6, NULL, NULL));
  CHECK(fabs(col[0] - 0.36) < 1e-4 && fabs(col[2] - 0.64) < 1e-4);
  OK(lode_model_matrix(m, LODE_MODEL_COMMUNALITIES, col, 6, NULL, NULL));
  CHECK(fabs(col[1] - 0.49) < 1e-4);
  OK(lode_model_matrix(m, LODE_MODEL_HEYWOOD, col, 6, NULL, NULL));
  for (i = 0; i < 6; ++i) CHECK(col[i] == 0.0);
  OK(lode_model_matrix(m, LODE_MODEL_FACTOR_CORRELATIONS, phi, 4, NULL, NULL));
  CHECK(fabs(phi[1]) < 1e-12);
  {
    static const int mkeys[] = {LODE_MODEL_STRUCTURE, LODE_MODEL_ROTATION_MATRIX, LODE_MODEL_UNROTATED_LOADINGS,
                                LODE_MODEL_SS_LOADINGS, LODE_MODEL_SS_STRUCTURE};
    static const int vkeys[] = {LODE_MODEL_FACTORS, LODE_MODEL_ITEMS, LODE_MODEL_N_OBS, LODE_MODEL_CONVERGED,
                                LODE_MODEL_ITERATIONS, LODE_MODEL_HEYWOOD_COUNT, LODE_MODEL_OBJECTIVE,
                                LODE_MODEL_RMSR, LODE_MODEL_MAX_ABS_RESIDUAL, LODE_MODEL_P_VALUE,
                                LODE_MODEL_RMSEA_LOWER, LODE_MODEL_RMSEA_UPPER, LODE_MODEL_TLI, LODE_MODEL_BIC,
                                LODE_MODEL_NULL_CHI_SQUARE, LODE_MODEL_NULL_DF, LODE_MODEL_ROTATION_CRITERION,
                                LODE_MODEL_ROTATION_CONVERGED, LODE_MODEL_OBLIQUE, LODE_MODEL_METHOD,
                                LODE_MODEL_ROTATION_METHOD, LODE_MODEL_SUGGESTED_FACTORS, LODE_MODEL_FINAL_CHANGE,
                                LODE_MODEL_TOLERANCE, LODE_MODEL_MAX_ITERATIONS};
    size_t k;
    double big[36];
    for (k = 0; k < sizeof mkeys / sizeof mkeys[0]; ++k) OK(lode_model_matrix(m, mkeys[k], big, 36, NULL, NULL));
    for (k = 0; k < sizeof vkeys / sizeof vkeys[0]; ++k) OK(lode_model_value(m, vkeys[k], &v));
  }
  OK(lode_model_value(m, LODE_MODEL_CONVERGED, &v));
  CHECK(v == 1.0);
  OK(lode_model_value(m, LODE_MODEL_N_OBS, &v));
  CHECK(v == 250.0);
  OK(lode_model_value(m, LODE_MODEL_ROTATION_METHOD, &v));
  CHECK(v == LODE_CRITERION_VARIMAX);
  OK(lode_model_text(m, LODE_MODEL_NOTES, notes, sizeof notes, &len));
  EXPECT(lode_model_matrix(m, LODE_MODEL_LOADINGS, l, 11, NULL, NULL), LODE_E_BUFFER_TOO_SMALL, "6 x 2");
  EXPECT(lode_model_value(m, LODE_MODEL_LOADINGS, &v), LODE_E_INVALID_ARGUMENT, "key 400");
  EXPECT(lode_model_matrix(m, LODE_MODEL_RMSEA, l, 12, NULL, NULL), LODE_E_INVALID_ARGUMENT, "key 432");
  EXPECT(lode_model_text(m, LODE_MODEL_RMSEA, notes, 8, NULL), LODE_E_INVALID_ARGUMENT, "key 432");
  EXPECT(lode_model_value(m, LODE_MODEL_RMSEA, NULL), LODE_E_INVALID_ARGUMENT, "'value' is NULL");
  EXPECT(lode_model_value(NULL, LODE_MODEL_RMSEA, &v), LODE_E_INVALID_ARGUMENT, "'model' is NULL");
  EXPECT(lode_model_matrix(NULL, LODE_MODEL_LOADINGS, l, 12, NULL, NULL), LODE_E_INVALID_ARGUMENT, "NULL");
  EXPECT(lode_model_text(NULL, LODE_MODEL_NOTES, notes, 8, NULL), LODE_E_INVALID_ARGUMENT, "NULL");
  lode_model_free(m);
  m = NULL;

  /* each extraction method, unrotated; the count suggested when factors = 0 */
  o.rotation = NULL;
  for (i = LODE_EXTRACTION_ML; i <= LODE_EXTRACTION_PCA; ++i) {
    o.method = i;
    OK(lode_model_compute(c, &o, &m));
    OK(lode_model_value(m, LODE_MODEL_METHOD, &v));
    CHECK(v == i);
    lode_model_free(m);
    m = NULL;
  }
  OK(lode_factor_count_options_init(&co, sizeof co));
  co.replicates = 100;
  co.progress = count_progress;
  co.progress_user = &keep_going;
  o.method = LODE_EXTRACTION_PAF;
  o.factors = 0;
  o.factor_count = &co;
  OK(lode_model_compute(c, &o, &m));
  OK(lode_model_value(m, LODE_MODEL_SUGGESTED_FACTORS, &v));
  CHECK(v == 2.0);
  lode_model_free(m);
  m = NULL;

  /* without n_obs: loadings and residuals, but fit statistics say why they are missing */
  o.factors = 2;
  o.factor_count = NULL;
  OK(lode_model_compute(c0, &o, &m));
  EXPECT(lode_model_value(m, LODE_MODEL_CHI_SQUARE, &v), LODE_E_INSUFFICIENT_DATA, "n_obs");
  OK(lode_model_value(m, LODE_MODEL_RMSR, &v));
  lode_model_free(m);
  m = NULL;

  /* one factor with a rotation asked for: unrotated, with a note */
  o.factors = 1;
  o.rotation = &ro;
  OK(lode_model_compute(c, &o, &m));
  OK(lode_model_text(m, LODE_MODEL_NOTES, notes, sizeof notes, NULL));
  CHECK(strstr(notes, "rotation does not apply") != NULL);
  lode_model_free(m);
  m = NULL;

  /* errors: too many factors, bad options, an older struct */
  o.factors = 5;
  o.method = LODE_EXTRACTION_ML;
  EXPECT(lode_model_compute(c, &o, &m), LODE_E_TOO_MANY_FACTORS, "3");
  o.factors = -1;
  EXPECT(lode_model_compute(c, &o, &m), LODE_E_INVALID_ARGUMENT, "factors");
  o.factors = 2;
  o.method = 17;
  EXPECT(lode_model_compute(c, &o, &m), LODE_E_INVALID_ARGUMENT, "unknown extraction method 17");
  o.method = LODE_EXTRACTION_ML;
  o.max_iterations = 0;
  EXPECT(lode_model_compute(c, &o, &m), LODE_E_INVALID_ARGUMENT, "max_iterations");
  o.max_iterations = 1000;
  o.tolerance = nan_value();
  EXPECT(lode_model_compute(c, &o, &m), LODE_E_INVALID_ARGUMENT, "tolerance");
  o.tolerance = 1e-9;
  o.min_uniqueness = 1.0;
  EXPECT(lode_model_compute(c, &o, &m), LODE_E_INVALID_ARGUMENT, "min_uniqueness");
  o.min_uniqueness = 0.005;
  o.interval_level = 1.5;
  EXPECT(lode_model_compute(c, &o, &m), LODE_E_INVALID_ARGUMENT, "interval_level");
  o.interval_level = 0.9;
  ro.method = 77;
  EXPECT(lode_model_compute(c, &o, &m), LODE_E_INVALID_ARGUMENT, "unknown rotation method 77");
  ro.method = LODE_CRITERION_VARIMAX;
  o.struct_size = offsetof(lode_model_options, max_iterations); /* older: factors and method only */
  o.rotation = NULL;
  OK(lode_model_compute(c, &o, &m));
  lode_model_free(m);
  m = NULL;
  o.struct_size = 0;
  EXPECT(lode_model_compute(c, &o, &m), LODE_E_INVALID_ARGUMENT, "lode_model_options_init");
  CHECK(m == NULL);
  lode_model_free(NULL);
  lode_correlation_free(c);
  lode_correlation_free(c0);
}

static void test_scores(void) {
  double x[N_ROWS * N_ITEMS], v, buf[N_ROWS * 2], det[2], w[N_ITEMS * 2];
  char text[4096];
  size_t len = 0;
  int64_t rows, cols, assignment[N_ITEMS] = {0, 0, 0, 1, 1, 1};
  int i;
  lode_data *d = NULL, *d3 = NULL, *dm = NULL;
  lode_correlation *c = NULL, *cm = NULL;
  lode_model *m = NULL, *mm = NULL;
  lode_model_options fo;
  lode_rotation_options ro;
  lode_scores_options so;
  lode_scores* s = NULL;
  lode_reliability* rel = NULL;
  lode_comparison* cmp = NULL;
  make_data(x);
  x[5 * N_ITEMS + 2] = nan_value();
  OK(lode_data_from_raw(x, N_ROWS, N_ITEMS, N_ITEMS, 1, &d));
  OK(lode_correlation_compute(d, NULL, &c));
  OK(lode_model_options_init(&fo, sizeof fo));
  OK(lode_rotation_options_init(&ro, sizeof ro));
  fo.factors = 2;
  fo.method = LODE_EXTRACTION_PAF;
  fo.rotation = &ro;
  OK(lode_model_compute(c, &fo, &m));

  /* scores of the data the model was fitted to */
  EXPECT(lode_scores_options_init(NULL, sizeof so), LODE_E_INVALID_ARGUMENT, "'opts' is NULL");
  OK(lode_scores_options_init(&so, sizeof so));
  CHECK(so.method == LODE_ESTIMATOR_REGRESSION && so.missing == LODE_GAPS_FROM_ANSWERED && so.min_answered_share == 0.5);
  OK(lode_scores_compute(m, NULL, &so, &s));
  OK(lode_scores_matrix(s, LODE_SCORES_VALUES, NULL, 0, &rows, &cols));
  CHECK(rows == N_ROWS && cols == 2);
  OK(lode_scores_matrix(s, LODE_SCORES_VALUES, buf, N_ROWS * 2, NULL, NULL));
  CHECK(buf[5 * 2] == buf[5 * 2]); /* the row with a missing item is scored from its answered items */
  OK(lode_scores_matrix(s, LODE_SCORES_DETERMINACY, det, 2, &rows, &cols));
  CHECK(rows == 2 && cols == 1 && det[0] > 0.0 && det[0] <= 1.0);
  OK(lode_scores_matrix(s, LODE_SCORES_WEIGHTS, w, N_ITEMS * 2, NULL, NULL));
  OK(lode_scores_matrix(s, LODE_SCORES_VALIDITY, det, 2, NULL, NULL));
  OK(lode_scores_matrix(s, LODE_SCORES_CORRELATIONS, w, 4, NULL, NULL));
  OK(lode_scores_matrix(s, LODE_SCORES_LOW_DETERMINACY, det, 2, NULL, NULL));
  OK(lode_scores_value(s, LODE_SCORES_ROWS_TOTAL, &v));
  CHECK(v == N_ROWS);
  OK(lode_scores_value(s, LODE_SCORES_ROWS_PARTIAL, &v));
  CHECK(v == 1.0);
  OK(lode_scores_value(s, LODE_SCORES_ROWS_COMPLETE, &v));
  CHECK(v == N_ROWS - 1);
  OK(lode_scores_value(s, LODE_SCORES_ROWS_MISSING, &v));
  CHECK(v == 0.0);
  OK(lode_scores_text(s, LODE_SCORES_CAUTIONS, text, sizeof text, &len));
  CHECK(strstr(text, "estimates") != NULL);
  OK(lode_scores_text(s, LODE_SCORES_NOTES, text, sizeof text, &len));
  CHECK(strstr(text, "estimates") != NULL); /* the notes end with the cautions */
  EXPECT(lode_scores_value(s, LODE_SCORES_VALUES, &v), LODE_E_INVALID_ARGUMENT, "key 600");
  EXPECT(lode_scores_matrix(s, LODE_SCORES_ROWS_TOTAL, buf, 10, NULL, NULL), LODE_E_INVALID_ARGUMENT, "key 620");
  EXPECT(lode_scores_text(s, LODE_SCORES_VALUES, text, 10, NULL), LODE_E_INVALID_ARGUMENT, "key 600");
  EXPECT(lode_scores_value(NULL, LODE_SCORES_ROWS_TOTAL, &v), LODE_E_INVALID_ARGUMENT, "NULL");
  EXPECT(lode_scores_matrix(NULL, LODE_SCORES_VALUES, buf, 10, NULL, NULL), LODE_E_INVALID_ARGUMENT, "NULL");
  EXPECT(lode_scores_text(NULL, LODE_SCORES_NOTES, text, 10, NULL), LODE_E_INVALID_ARGUMENT, "NULL");
  lode_scores_free(s);
  s = NULL;

  /* other methods, explicit data, the leave-missing rule, an older options struct */
  so.method = LODE_ESTIMATOR_BARTLETT;
  so.missing = LODE_GAPS_LEAVE_MISSING;
  OK(lode_scores_compute(m, d, &so, &s));
  OK(lode_scores_value(s, LODE_SCORES_ROWS_MISSING, &v));
  CHECK(v == 1.0);
  lode_scores_free(s);
  s = NULL;
  so.method = LODE_ESTIMATOR_CORRELATION_PRESERVING;
  so.struct_size = offsetof(lode_scores_options, missing); /* older: the rule defaults to from-answered */
  OK(lode_scores_compute(m, d, &so, &s));
  OK(lode_scores_value(s, LODE_SCORES_ROWS_MISSING, &v));
  CHECK(v == 0.0);
  lode_scores_free(s);
  s = NULL;
  OK(lode_scores_options_init(&so, sizeof so));
  so.method = 9;
  EXPECT(lode_scores_compute(m, NULL, &so, &s), LODE_E_INVALID_ARGUMENT, "unknown score method 9");
  so.method = LODE_ESTIMATOR_REGRESSION;
  so.missing = 4;
  EXPECT(lode_scores_compute(m, NULL, &so, &s), LODE_E_INVALID_ARGUMENT, "missing-item rule");
  so.missing = LODE_GAPS_FROM_ANSWERED;
  so.min_answered_share = 0.0;
  EXPECT(lode_scores_compute(m, NULL, &so, &s), LODE_E_INVALID_ARGUMENT, "min_answered_share");
  so.min_answered_share = 0.5;
  so.low_determinacy = 2.0;
  EXPECT(lode_scores_compute(m, NULL, &so, &s), LODE_E_INVALID_ARGUMENT, "low_determinacy");
  EXPECT(lode_scores_compute(NULL, NULL, NULL, &s), LODE_E_INVALID_ARGUMENT, "'model' is NULL");
  EXPECT(lode_scores_compute(m, NULL, NULL, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  OK(lode_data_from_raw(x, N_ROWS, 3, N_ITEMS, 1, &d3));
  EXPECT(lode_scores_compute(m, d3, NULL, &s), LODE_E_INVALID_ARGUMENT, "the data have 3 items but the model has 6");
  {
    /* a model fitted to a matrix has no respondents to score */
    double r[36];
    OK(lode_correlation_matrix(c, LODE_CORRELATION_MATRIX, r, 36, NULL, NULL));
    OK(lode_data_from_correlation(r, N_ITEMS, N_ITEMS, 1, N_ROWS, &dm));
    OK(lode_correlation_compute(dm, NULL, &cm));
    OK(lode_model_compute(cm, &fo, &mm));
    EXPECT(lode_scores_compute(mm, NULL, NULL, &s), LODE_E_INVALID_ARGUMENT, "fitted to a matrix");
    EXPECT(lode_scores_compute(mm, dm, NULL, &s), LODE_E_INVALID_ARGUMENT, "raw data");
    OK(lode_scores_compute(mm, d, NULL, &s));
    lode_scores_free(s);
    s = NULL;
  }
  lode_scores_free(NULL);

  /* alpha of the first three items: standardised alpha is the Spearman-Brown form of the mean
   * inter-item correlation, k r / (1 + (k - 1) r) (Cronbach 1951; published identity) */
  OK(lode_reliability_compute_alpha(d3, &rel));
  OK(lode_reliability_value(rel, LODE_ALPHA, &v));
  CHECK(v > 0.0 && v < 1.0);
  {
    double rbar, std_alpha;
    OK(lode_reliability_value(rel, LODE_ALPHA_MEAN_INTER_ITEM, &rbar));
    OK(lode_reliability_value(rel, LODE_ALPHA_STANDARDIZED, &std_alpha));
    CHECK(fabs(std_alpha - 3 * rbar / (1 + 2 * rbar)) < 1e-12);
  }
  OK(lode_reliability_value(rel, LODE_ALPHA_ROWS_USED, &v));
  CHECK(v == N_ROWS - 1);
  OK(lode_reliability_value(rel, LODE_ALPHA_ROWS_TOTAL, &v));
  OK(lode_reliability_value(rel, LODE_ALPHA_ITEMS, &v));
  CHECK(v == 3.0);
  {
    static const int keys[] = {LODE_ALPHA_IF_DELETED, LODE_ALPHA_STANDARDIZED_IF_DELETED, LODE_ALPHA_ITEM_TOTAL,
                               LODE_ALPHA_ITEM_MEANS, LODE_ALPHA_ITEM_SDS};
    size_t k;
    for (k = 0; k < sizeof keys / sizeof keys[0]; ++k) {
      OK(lode_reliability_matrix(rel, keys[k], buf, 3, &rows, &cols));
      CHECK(rows == 3 && cols == 1);
    }
  }
  OK(lode_reliability_text(rel, LODE_RELIABILITY_NOTES, NULL, 0, &len));
  EXPECT(lode_reliability_matrix(rel, LODE_OMEGA, buf, 3, NULL, NULL), LODE_E_INVALID_ARGUMENT, "omega");
  EXPECT(lode_reliability_value(rel, LODE_OMEGA, &v), LODE_E_INVALID_ARGUMENT, "key 740");
  EXPECT(lode_reliability_text(rel, LODE_ALPHA, text, 10, NULL), LODE_E_INVALID_ARGUMENT, "key 720");
  EXPECT(lode_reliability_value(NULL, LODE_ALPHA, &v), LODE_E_INVALID_ARGUMENT, "NULL");
  EXPECT(lode_reliability_matrix(NULL, LODE_OMEGA, buf, 3, NULL, NULL), LODE_E_INVALID_ARGUMENT, "NULL");
  EXPECT(lode_reliability_text(NULL, LODE_RELIABILITY_NOTES, text, 10, NULL), LODE_E_INVALID_ARGUMENT, "NULL");
  lode_reliability_free(rel);
  rel = NULL;
  EXPECT(lode_reliability_compute_alpha(dm, &rel), LODE_E_INVALID_ARGUMENT, "raw data");
  EXPECT(lode_reliability_compute_alpha(NULL, &rel), LODE_E_INVALID_ARGUMENT, "'data' is NULL");
  EXPECT(lode_reliability_compute_alpha(d3, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");

  /* omega: by largest loading, and by a given assignment */
  OK(lode_reliability_compute_omega(m, NULL, 0, &rel));
  OK(lode_reliability_matrix(rel, LODE_OMEGA, det, 2, &rows, &cols));
  CHECK(rows == 2 && cols == 1 && det[0] > 0.0 && det[0] < 1.0);
  OK(lode_reliability_matrix(rel, LODE_OMEGA_ASSIGNMENT, buf, N_ITEMS, &rows, NULL));
  CHECK(rows == N_ITEMS);
  OK(lode_reliability_matrix(rel, LODE_OMEGA_SUM_LOADINGS, det, 2, NULL, NULL));
  {
    /* the factor's share is (sum of loadings)^2 over the model-implied variance of the sum (McDonald 1999) */
    double share[2], var[2];
    OK(lode_reliability_matrix(rel, LODE_RELIABILITY_OMEGA_FACTOR_SHARE, share, 2, &rows, &cols));
    CHECK(rows == 2 && cols == 1);
    OK(lode_reliability_matrix(rel, LODE_RELIABILITY_OMEGA_SCALE_VARIANCE, var, 2, &rows, &cols));
    CHECK(rows == 2 && cols == 1);
    for (i = 0; i < 2; ++i) CHECK(fabs(share[i] * var[i] - det[i] * det[i]) < 1e-12 * var[i]);
  }
  OK(lode_reliability_matrix(rel, LODE_OMEGA_SUM_UNIQUENESSES, det, 2, NULL, NULL));
  OK(lode_reliability_text(rel, LODE_RELIABILITY_NOTES, text, sizeof text, NULL));
  EXPECT(lode_reliability_value(rel, LODE_ALPHA, &v), LODE_E_INVALID_ARGUMENT, "alpha");
  EXPECT(lode_reliability_matrix(rel, LODE_ALPHA_IF_DELETED, buf, 6, NULL, NULL), LODE_E_INVALID_ARGUMENT, "alpha");
  lode_reliability_free(rel);
  rel = NULL;
  OK(lode_reliability_compute_omega(m, assignment, N_ITEMS, &rel));
  OK(lode_reliability_matrix(rel, LODE_OMEGA_ASSIGNMENT, buf, N_ITEMS, NULL, NULL));
  for (i = 0; i < N_ITEMS; ++i) CHECK(buf[i] == (double)assignment[i]);
  lode_reliability_free(rel);
  rel = NULL;
  assignment[2] = 5;
  EXPECT(lode_reliability_compute_omega(m, assignment, N_ITEMS, &rel), LODE_E_INVALID_ARGUMENT, "column 3 is assigned to factor 5");
  EXPECT(lode_reliability_compute_omega(m, assignment, 4, &rel), LODE_E_INVALID_ARGUMENT, "4 assignments were given for 6 items");
  EXPECT(lode_reliability_compute_omega(m, NULL, 3, &rel), LODE_E_INVALID_ARGUMENT, "'assignment' is NULL");
  EXPECT(lode_reliability_compute_omega(NULL, NULL, 0, &rel), LODE_E_INVALID_ARGUMENT, "'model' is NULL");
  EXPECT(lode_reliability_compute_omega(m, NULL, 0, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  lode_reliability_free(NULL);

  /* omega with reverse-keyed items (lode_reliability_compute_keyed_omega): a reverse-scored item enters
   * with its row of loadings reversed. Checked against McDonald's (1999) formula written out here,
   * omega total = 1' (D L Phi L' D)_SS 1 / (that + sum over S of psi), over the model's loadings,
   * factor correlations and uniquenesses read through the C ABI (sums of under 200 products of numbers
   * below 1 in size: rounding far below 1e-12). */
  {
    lode_reliability_options qo;
    int32_t rev[N_ITEMS] = {1, 0, 0, 0, 0, 0};
    double L[N_ITEMS * 2], phi[4], u[N_ITEMS], om[2], plain[2], flags[N_ITEMS];
    int64_t f, j, k, a, b;
    assignment[2] = 0; /* as before the error cases above */
    OK(lode_model_matrix(m, LODE_MODEL_LOADINGS, L, N_ITEMS * 2, NULL, NULL));
    OK(lode_model_matrix(m, LODE_MODEL_FACTOR_CORRELATIONS, phi, 4, NULL, NULL));
    OK(lode_model_matrix(m, LODE_MODEL_UNIQUENESSES, u, N_ITEMS, NULL, NULL));
    EXPECT(lode_reliability_options_init(NULL, sizeof qo), LODE_E_INVALID_ARGUMENT, "'opts' is NULL");
    OK(lode_reliability_options_init(&qo, sizeof qo));
    CHECK(qo.keying == LODE_KEYING_AS_SCORED && qo.assignment == NULL && qo.reverse == NULL && qo.reverse_count == 0);
    qo.assignment = assignment;
    qo.assignment_count = N_ITEMS;
    OK(lode_reliability_compute_keyed_omega(m, &qo, &rel)); /* nothing reversed: lode_reliability_compute_omega's figures */
    OK(lode_reliability_matrix(rel, LODE_OMEGA, plain, 2, NULL, NULL));
    OK(lode_reliability_matrix(rel, LODE_RELIABILITY_REVERSED, flags, N_ITEMS, &rows, &cols));
    CHECK(rows == N_ITEMS && cols == 1);
    for (i = 0; i < N_ITEMS; ++i) CHECK(flags[i] == 0.0);
    lode_reliability_free(rel);
    rel = NULL;
    qo.reverse = rev;
    qo.reverse_count = N_ITEMS;
    OK(lode_reliability_compute_keyed_omega(m, &qo, &rel));
    OK(lode_reliability_matrix(rel, LODE_OMEGA, om, 2, NULL, NULL));
    OK(lode_reliability_matrix(rel, LODE_RELIABILITY_REVERSED, flags, N_ITEMS, NULL, NULL));
    CHECK(flags[0] == 1.0 && flags[1] == 0.0);
    lode_reliability_free(rel);
    rel = NULL;
    for (f = 0; f < 2; ++f) {
      double common = 0.0, psi = 0.0;
      for (j = 0; j < N_ITEMS; ++j) {
        if (assignment[j] != f) continue;
        psi += u[j];
        for (k = 0; k < N_ITEMS; ++k) {
          if (assignment[k] != f) continue;
          for (a = 0; a < 2; ++a)
            for (b = 0; b < 2; ++b)
              common += (rev[j] ? -1.0 : 1.0) * L[j * 2 + a] * phi[a * 2 + b] * L[k * 2 + b] * (rev[k] ? -1.0 : 1.0);
        }
      }
      CHECK(fabs(om[f] - common / (common + psi)) < 1e-12);
    }
    CHECK(fabs(om[0] - plain[0]) > 1e-3 && om[1] == plain[1]); /* only the scale holding item 1 changes */
    /* the rule: items loading negatively on their scale's factor */
    qo.reverse = NULL;
    qo.reverse_count = 0;
    qo.keying = LODE_KEYING_REVERSE_NEGATIVE;
    OK(lode_reliability_compute_keyed_omega(m, &qo, &rel));
    OK(lode_reliability_matrix(rel, LODE_RELIABILITY_REVERSED, flags, N_ITEMS, NULL, NULL));
    for (j = 0; j < N_ITEMS; ++j) CHECK(flags[j] == (L[j * 2 + assignment[j]] < 0.0 ? 1.0 : 0.0));
    lode_reliability_free(rel);
    rel = NULL;
    /* an older struct without the keying field: as scored */
    qo.struct_size = offsetof(lode_reliability_options, keying);
    OK(lode_reliability_compute_keyed_omega(m, &qo, &rel));
    OK(lode_reliability_matrix(rel, LODE_OMEGA, om, 2, NULL, NULL));
    CHECK(om[0] == plain[0] && om[1] == plain[1]);
    lode_reliability_free(rel);
    rel = NULL;
    OK(lode_reliability_options_init(&qo, sizeof qo));
    qo.keying = 7;
    EXPECT(lode_reliability_compute_keyed_omega(m, &qo, &rel), LODE_E_INVALID_ARGUMENT, "unknown keying 7");
    qo.keying = LODE_KEYING_AS_SCORED;
    qo.reverse = rev;
    qo.reverse_count = 3;
    EXPECT(lode_reliability_compute_keyed_omega(m, &qo, &rel), LODE_E_INVALID_ARGUMENT,
           "3 reverse-keyed flags were given for 6 items");
    qo.reverse = NULL;
    EXPECT(lode_reliability_compute_keyed_omega(m, &qo, &rel), LODE_E_INVALID_ARGUMENT, "'reverse' is NULL");
    qo.reverse_count = 0;
    qo.assignment_count = 2;
    EXPECT(lode_reliability_compute_keyed_omega(m, &qo, &rel), LODE_E_INVALID_ARGUMENT, "'assignment' is NULL");
    qo.struct_size = 0;
    EXPECT(lode_reliability_compute_keyed_omega(m, &qo, &rel), LODE_E_INVALID_ARGUMENT, "struct_size");
    EXPECT(lode_reliability_compute_keyed_omega(NULL, NULL, &rel), LODE_E_INVALID_ARGUMENT, "'model' is NULL");
    EXPECT(lode_reliability_compute_keyed_omega(m, NULL, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  }


  /* omega of a single scale from a one-factor fit of its items' correlations: the stored loadings
   * and uniquenesses reproduce McDonald's (1999) formula (sum l)^2 / ((sum l)^2 + sum psi) */
  {
    lode_correlation* c3 = NULL;
    lode_model_options f1;
    double lam[3], psi[3], om, sl;
    OK(lode_correlation_compute(d3, NULL, &c3));
    OK(lode_reliability_compute_scale_omega(c3, NULL, &rel));
    OK(lode_reliability_matrix(rel, LODE_OMEGA, &om, 1, &rows, &cols));
    CHECK(rows == 1 && cols == 1 && om > 0.0 && om < 1.0);
    OK(lode_reliability_matrix(rel, LODE_OMEGA_LOADINGS, lam, 3, &rows, &cols));
    CHECK(rows == 3 && cols == 1);
    OK(lode_reliability_matrix(rel, LODE_OMEGA_UNIQUENESSES, psi, 3, NULL, NULL));
    sl = lam[0] + lam[1] + lam[2];
    CHECK(fabs(om - sl * sl / (sl * sl + psi[0] + psi[1] + psi[2])) < 1e-12);
    OK(lode_reliability_matrix(rel, LODE_RELIABILITY_OMEGA_FACTOR_SHARE, &sl, 1, NULL, NULL));
    CHECK(sl == om); /* one factor: omega total and the factor's share agree */
    OK(lode_reliability_matrix(rel, LODE_OMEGA_ASSIGNMENT, buf, 3, &rows, NULL));
    CHECK(rows == 3 && buf[0] == 0.0 && buf[2] == 0.0);
    OK(lode_reliability_value(rel, LODE_OMEGA_CONVERGED, &v));
    CHECK(v == 1.0);
    OK(lode_reliability_text(rel, LODE_RELIABILITY_NOTES, NULL, 0, &len));
    EXPECT(lode_reliability_value(rel, LODE_ALPHA, &v), LODE_E_INVALID_ARGUMENT, "alpha");
    EXPECT(lode_reliability_matrix(rel, LODE_OMEGA_LOADINGS, lam, 2, NULL, NULL), LODE_E_BUFFER_TOO_SMALL, NULL);
    lode_reliability_free(rel);
    rel = NULL;
    OK(lode_model_options_init(&f1, sizeof f1));
    f1.method = LODE_EXTRACTION_PAF;
    OK(lode_reliability_compute_scale_omega(c3, &f1, &rel));
    OK(lode_reliability_matrix(rel, LODE_OMEGA, &om, 1, NULL, NULL));
    CHECK(om > 0.0 && om < 1.0);
    lode_reliability_free(rel);
    rel = NULL;
    f1.method = 9;
    EXPECT(lode_reliability_compute_scale_omega(c3, &f1, &rel), LODE_E_INVALID_ARGUMENT, "unknown extraction method 9");
    f1.method = LODE_EXTRACTION_ML;
    f1.tolerance = -1.0;
    EXPECT(lode_reliability_compute_scale_omega(c3, &f1, &rel), LODE_E_INVALID_ARGUMENT, "tolerance");
    f1.tolerance = 1e-9;
    f1.max_iterations = 0;
    EXPECT(lode_reliability_compute_scale_omega(c3, &f1, &rel), LODE_E_INVALID_ARGUMENT, "max_iterations");
    f1.max_iterations = 1000;
    f1.min_uniqueness = 1.0;
    EXPECT(lode_reliability_compute_scale_omega(c3, &f1, &rel), LODE_E_INVALID_ARGUMENT, "min_uniqueness");
    f1.struct_size = 1;
    EXPECT(lode_reliability_compute_scale_omega(c3, &f1, &rel), LODE_E_INVALID_ARGUMENT, "struct_size");
    EXPECT(lode_reliability_compute_scale_omega(NULL, NULL, &rel), LODE_E_INVALID_ARGUMENT, "'corr' is NULL");
    EXPECT(lode_reliability_compute_scale_omega(c3, NULL, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
    CHECK(rel == NULL);
    lode_correlation_free(c3);
  }
  /* a model's omega has no single-scale loadings; an alpha result has no convergence */
  OK(lode_reliability_compute_omega(m, NULL, 0, &rel));
  EXPECT(lode_reliability_matrix(rel, LODE_OMEGA_LOADINGS, buf, 6, NULL, NULL), LODE_E_INVALID_ARGUMENT, "single-scale");
  OK(lode_reliability_value(rel, LODE_OMEGA_CONVERGED, &v));
  CHECK(v == 1.0);
  lode_reliability_free(rel);
  rel = NULL;
  OK(lode_reliability_compute_alpha(d3, &rel));
  EXPECT(lode_reliability_value(rel, LODE_OMEGA_CONVERGED, &v), LODE_E_INVALID_ARGUMENT, "omega");
  lode_reliability_free(rel);
  rel = NULL;

  /* congruence: a solution against itself with its factors swapped and one reflected */
  {
    double a[N_ITEMS * 2], b[N_ITEMS * 2], out[N_ITEMS * 2], con[4];
    OK(lode_model_matrix(m, LODE_MODEL_LOADINGS, a, N_ITEMS * 2, NULL, NULL));
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
  lode_model_free(m);
  lode_model_free(mm);
  lode_correlation_free(c);
  lode_correlation_free(cm);
  lode_data_free(d);
  lode_data_free(d3);
  lode_data_free(dm);
}

/* ---- ABI 1.2: progress of lode_model_compute, item flags, bootstrap -------------------------------------- */

/* What a progress callback saw; `cancel_at` >= 0 cancels at the first report with done >= it. */
typedef struct progress_log {
  int calls;
  int64_t first_done, first_total, last_done, last_total;
  int ordered; /* every report had 0 <= done <= total, the same total, and done never fell */
  int64_t cancel_at;
} progress_log;

static void progress_log_init(progress_log* log, int64_t cancel_at) {
  memset(log, 0, sizeof *log);
  log->ordered = 1;
  log->cancel_at = cancel_at;
}

static int log_progress(void* user, int64_t done, int64_t total) {
  progress_log* log = (progress_log*)user;
  if (log->calls == 0) {
    log->first_done = done;
    log->first_total = total;
  } else if (total != log->last_total || done < log->last_done) {
    log->ordered = 0;
  }
  if (done < 0 || done > total) log->ordered = 0;
  ++log->calls;
  log->last_done = done;
  log->last_total = total;
  return log->cancel_at >= 0 && done >= log->cancel_at;
}

static void test_fit_progress(void) {
  lode_correlation* c = population_correlation(250);
  lode_model *m = NULL, *plain = NULL;
  lode_model_options o;
  lode_rotation_options ro;
  progress_log log;
  double l[12], lp[12], v;

  OK(lode_model_options_init(&o, sizeof o));
  CHECK(o.progress == NULL && o.progress_user == NULL);
  OK(lode_rotation_options_init(&ro, sizeof ro));
  ro.method = LODE_CRITERION_OBLIMIN;
  ro.random_starts = 3;
  o.factors = 2;
  o.rotation = &ro;
  OK(lode_model_compute(c, &o, &plain));
  /* units: the extraction, then 1 + 3 rotation starts */
  progress_log_init(&log, -1);
  o.progress = log_progress;
  o.progress_user = &log;
  OK(lode_model_compute(c, &o, &m));
  CHECK(log.calls >= 3 && log.ordered);
  CHECK(log.first_done == 0 && log.first_total == 5);
  CHECK(log.last_done == 5 && log.last_total == 5);
  OK(lode_model_value(m, LODE_MODEL_ROTATION_STARTS, &v));
  CHECK(v == 4.0);
  /* watching never changes a result */
  OK(lode_model_matrix(m, LODE_MODEL_LOADINGS, l, 12, NULL, NULL));
  OK(lode_model_matrix(plain, LODE_MODEL_LOADINGS, lp, 12, NULL, NULL));
  CHECK(memcmp(l, lp, sizeof l) == 0);
  lode_model_free(m);
  m = NULL;
  lode_model_free(plain);

  /* cancelled before the extraction, after it, and during the rotation's starts: no model */
  progress_log_init(&log, 0);
  EXPECT(lode_model_compute(c, &o, &m), LODE_E_CANCELLED, "cancelled");
  CHECK(m == NULL && log.calls == 1);
  progress_log_init(&log, 1);
  EXPECT(lode_model_compute(c, &o, &m), LODE_E_CANCELLED, "cancelled");
  CHECK(m == NULL && log.calls == 2 && log.last_done == 1);
  progress_log_init(&log, 2);
  ro.random_starts = 100000; /* far more than 50 ms of work, so a report arrives mid-way */
  EXPECT(lode_model_compute(c, &o, &m), LODE_E_CANCELLED, "cancelled");
  CHECK(m == NULL && log.last_done >= 2 && log.last_done < 100002);
  ro.random_starts = 3;

  /* unrotated: one unit */
  progress_log_init(&log, -1);
  o.rotation = NULL;
  OK(lode_model_compute(c, &o, &m));
  CHECK(log.first_total == 1 && log.last_done == 1 && log.ordered);
  OK(lode_model_value(m, LODE_MODEL_ROTATION_STARTS, &v));
  CHECK(v == 1.0);
  lode_model_free(m);
  m = NULL;

  /* a caller built against ABI 1.1 passes the struct without the progress fields: they are not read
   * (here they would cancel at once) */
  progress_log_init(&log, 0);
  o.rotation = &ro;
  o.struct_size = offsetof(lode_model_options, progress);
  OK(lode_model_compute(c, &o, &m));
  CHECK(log.calls == 0 && m != NULL);
  lode_model_free(m);
  m = NULL;
  /* and its init leaves bytes beyond its size alone */
  {
    lode_model_options small;
    memset(&small, 0xAB, sizeof small);
    OK(lode_model_options_init(&small, offsetof(lode_model_options, progress)));
    CHECK(small.struct_size == offsetof(lode_model_options, progress) && small.factor_count == NULL);
  }
  /* a caller from a newer header: unknown trailing bytes must be zero */
  {
    struct {
      lode_model_options o;
      double newer;
    } big;
    memset(&big, 0, sizeof big);
    OK(lode_model_options_init(&big.o, sizeof big));
    big.o.factors = 2;
    OK(lode_model_compute(c, &big.o, &m));
    lode_model_free(m);
    m = NULL;
    big.newer = 1.0;
    EXPECT(lode_model_compute(c, &big.o, &m), LODE_E_UNSUPPORTED, "newer");
    CHECK(m == NULL);
  }
  lode_correlation_free(c);
}

static void test_item_flags(void) {
  lode_correlation* c = population_correlation(250);
  lode_model* m = NULL;
  lode_item_flags* f = NULL;
  lode_item_flags_options o;
  lode_model_options fo;
  lode_rotation_options ro;
  double codes[6], table[9 * 5], v;
  char text[2048];
  size_t len = 99;
  int64_t rows = -1, cols = -1;
  int i;

  OK(lode_model_options_init(&fo, sizeof fo));
  OK(lode_rotation_options_init(&ro, sizeof ro));
  fo.factors = 2;
  fo.rotation = &ro;
  OK(lode_model_compute(c, &fo, &m));

  EXPECT(lode_item_flags_options_init(NULL, sizeof o), LODE_E_INVALID_ARGUMENT, "'opts' is NULL");
  EXPECT(lode_item_flags_options_init(&o, 1), LODE_E_INVALID_ARGUMENT, "too small");
  OK(lode_item_flags_options_init(&o, sizeof o));
  /* the defaults (common practice) */
  CHECK(o.salient == 0.40 && o.cross_loading_gap == 0.20 && o.low_communality == 0.20 && o.heywood_uniqueness == 0.005);

  /* The population solution (loadings .8 .7 .6 / .7 .6 .5, no cross-loadings, communalities >= .25)
   * raises no flag under the common-practice defaults. */
  EXPECT(lode_item_flags_compute(NULL, &o, &f), LODE_E_INVALID_ARGUMENT, "'model' is NULL");
  EXPECT(lode_item_flags_compute(m, &o, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  OK(lode_item_flags_compute(m, NULL, &f));
  OK(lode_item_flags_matrix(f, LODE_ITEM_FLAGS_TABLE, NULL, 0, &rows, &cols));
  CHECK(rows == 0 && cols == 5);
  OK(lode_item_flags_matrix(f, LODE_ITEM_FLAGS_CODES, codes, 6, &rows, &cols));
  CHECK(rows == 6 && cols == 1);
  for (i = 0; i < 6; ++i) CHECK(codes[i] == 0.0);
  OK(lode_item_flags_value(f, LODE_ITEM_FLAGS_COUNT, &v));
  CHECK(v == 0.0);
  OK(lode_item_flags_text(f, LODE_ITEM_FLAGS_NOTES, text, sizeof text, &len));
  CHECK(len == 0 && text[0] == '\0');
  OK(lode_item_flags_item_notes(f, 5, text, sizeof text, &len));
  CHECK(len == 0);
  lode_item_flags_free(f);
  f = NULL;

  /* Stricter thresholds, the expected flags worked out by hand from the population loadings and
   * the rules of item_flags.hpp: salient .65 leaves items 3, 5, 6 (largest .6, .6, .5) without a
   * salient loading; communality below .40 flags items 3, 5, 6 (.36, .36, .25); uniqueness at or
   * below .55 flags items 1, 2, 4 (.36, .51, .51) as Heywood cases. */
  o.salient = 0.65;
  o.low_communality = 0.40;
  o.heywood_uniqueness = 0.55;
  OK(lode_item_flags_compute(m, &o, &f));
  OK(lode_item_flags_matrix(f, LODE_ITEM_FLAGS_CODES, codes, 6, NULL, NULL));
  CHECK(codes[0] == LODE_FLAG_HEYWOOD_CASE && codes[1] == LODE_FLAG_HEYWOOD_CASE &&
        codes[3] == LODE_FLAG_HEYWOOD_CASE);
  CHECK(codes[2] == (LODE_FLAG_NO_SALIENT_LOADING | LODE_FLAG_LOW_COMMUNALITY));
  CHECK(codes[4] == codes[2] && codes[5] == codes[2]);
  OK(lode_item_flags_value(f, LODE_ITEM_FLAGS_COUNT, &v));
  CHECK(v == 9.0);
  OK(lode_item_flags_value(f, LODE_ITEM_FLAGS_ITEMS_FLAGGED, &v));
  CHECK(v == 6.0);
  OK(lode_item_flags_value(f, LODE_ITEM_FLAGS_ITEMS, &v));
  CHECK(v == 6.0);
  OK(lode_item_flags_value(f, LODE_ITEM_FLAGS_SALIENT, &v));
  CHECK(v == 0.65);
  OK(lode_item_flags_value(f, LODE_ITEM_FLAGS_CROSS_LOADING_GAP, &v));
  CHECK(v == 0.20);
  OK(lode_item_flags_value(f, LODE_ITEM_FLAGS_LOW_COMMUNALITY, &v));
  CHECK(v == 0.40);
  OK(lode_item_flags_value(f, LODE_ITEM_FLAGS_HEYWOOD_UNIQUENESS, &v));
  CHECK(v == 0.55);
  OK(lode_item_flags_matrix(f, LODE_ITEM_FLAGS_TABLE, table, 9 * 5, &rows, &cols));
  CHECK(rows == 9 && cols == 5);
  /* rows in item order: item 3 (index 2) is rows 2 and 3: no salient loading (.6 on factor 1), then
   * low communality (.36) */
  CHECK(table[2 * 5 + 0] == 2.0 && table[2 * 5 + 1] == LODE_FLAG_NO_SALIENT_LOADING && table[2 * 5 + 2] == 0.0 &&
        table[2 * 5 + 3] == -1.0 && fabs(table[2 * 5 + 4] - 0.6) < 1e-4);
  CHECK(table[3 * 5 + 0] == 2.0 && table[3 * 5 + 1] == LODE_FLAG_LOW_COMMUNALITY && fabs(table[3 * 5 + 4] - 0.36) < 1e-4);
  CHECK(table[0] == 0.0 && table[1] == LODE_FLAG_HEYWOOD_CASE && fabs(table[4] - 0.36) < 1e-4);
  OK(lode_item_flags_matrix(f, LODE_ITEM_FLAGS_COMMUNALITIES, codes, 6, NULL, NULL));
  CHECK(fabs(codes[0] - 0.64) < 1e-4 && fabs(codes[5] - 0.25) < 1e-4);
  OK(lode_item_flags_text(f, LODE_ITEM_FLAGS_NOTES, NULL, 0, &len));
  CHECK(len > 0);
  OK(lode_item_flags_item_notes(f, 2, text, sizeof text, &len));
  CHECK(strstr(text, "no salient loading") != NULL && strstr(text, "low communality") != NULL);
  CHECK(strchr(text, '\n') != NULL && strlen(text) == len);
  OK(lode_item_flags_item_notes(f, 0, text, sizeof text, NULL));
  CHECK(strstr(text, "Heywood") != NULL && strchr(text, '\n') == NULL);
  EXPECT(lode_item_flags_item_notes(f, 6, text, sizeof text, NULL), LODE_E_INVALID_ARGUMENT, "item 6 does not exist");
  EXPECT(lode_item_flags_item_notes(f, -1, text, sizeof text, NULL), LODE_E_INVALID_ARGUMENT, "numbered 0 to 5");
  EXPECT(lode_item_flags_item_notes(f, 2, text, 4, NULL), LODE_E_BUFFER_TOO_SMALL, "buffer holds 4");
  EXPECT(lode_item_flags_item_notes(NULL, 2, text, sizeof text, NULL), LODE_E_INVALID_ARGUMENT, "'flags' is NULL");
  EXPECT(lode_item_flags_matrix(f, LODE_ITEM_FLAGS_CODES, codes, 5, NULL, NULL), LODE_E_BUFFER_TOO_SMALL, "holds 5");
  EXPECT(lode_item_flags_matrix(f, LODE_ITEM_FLAGS_TABLE, NULL, 3, NULL, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  EXPECT(lode_item_flags_matrix(f, LODE_ITEM_FLAGS_COUNT, codes, 6, NULL, NULL), LODE_E_INVALID_ARGUMENT, "key 1020");
  EXPECT(lode_item_flags_value(f, LODE_ITEM_FLAGS_CODES, &v), LODE_E_INVALID_ARGUMENT, "key 1000");
  EXPECT(lode_item_flags_value(f, LODE_ITEM_FLAGS_COUNT, NULL), LODE_E_INVALID_ARGUMENT, "'value' is NULL");
  EXPECT(lode_item_flags_text(f, LODE_ITEM_FLAGS_COUNT, text, sizeof text, NULL), LODE_E_INVALID_ARGUMENT, "key 1020");
  EXPECT(lode_item_flags_matrix(NULL, LODE_ITEM_FLAGS_CODES, codes, 6, NULL, NULL), LODE_E_INVALID_ARGUMENT, "NULL");
  EXPECT(lode_item_flags_value(NULL, LODE_ITEM_FLAGS_COUNT, &v), LODE_E_INVALID_ARGUMENT, "NULL");
  EXPECT(lode_item_flags_text(NULL, LODE_ITEM_FLAGS_NOTES, text, sizeof text, NULL), LODE_E_INVALID_ARGUMENT, "NULL");
  lode_item_flags_free(f);
  f = NULL;

  /* a gap of .75 makes every item whose largest loading is below .75 a cross-loading (its second
   * loading is 0): items 2-6 */
  OK(lode_item_flags_options_init(&o, sizeof o));
  o.cross_loading_gap = 0.75;
  OK(lode_item_flags_compute(m, &o, &f));
  OK(lode_item_flags_matrix(f, LODE_ITEM_FLAGS_CODES, codes, 6, NULL, NULL));
  CHECK(codes[0] == 0.0);
  for (i = 1; i < 6; ++i) CHECK(codes[i] == LODE_FLAG_CROSS_LOADING);
  OK(lode_item_flags_matrix(f, LODE_ITEM_FLAGS_TABLE, table, 9 * 5, &rows, NULL));
  CHECK(rows == 5 && table[3] >= 0.0 && table[3] != table[2] && fabs(table[4]) < 1e-4);
  lode_item_flags_free(f);
  f = NULL;

  /* bad thresholds, non-finite thresholds, an older and a broken struct */
  o.salient = 1.5;
  EXPECT(lode_item_flags_compute(m, &o, &f), LODE_E_INVALID_ARGUMENT, "thresholds must lie in [0, 1]");
  o.salient = nan_value();
  EXPECT(lode_item_flags_compute(m, &o, &f), LODE_E_INVALID_ARGUMENT, "salient nan");
  o.salient = 0.4;
  o.low_communality = -0.1;
  EXPECT(lode_item_flags_compute(m, &o, &f), LODE_E_INVALID_ARGUMENT, "low communality -0.1");
  CHECK(f == NULL);
  o.struct_size = offsetof(lode_item_flags_options, low_communality); /* older: salient and gap only */
  OK(lode_item_flags_compute(m, &o, &f));
  OK(lode_item_flags_value(f, LODE_ITEM_FLAGS_LOW_COMMUNALITY, &v));
  CHECK(v == 0.20);
  lode_item_flags_free(f);
  f = NULL;
  o.struct_size = 0;
  EXPECT(lode_item_flags_compute(m, &o, &f), LODE_E_INVALID_ARGUMENT, "lode_item_flags_options_init");
  CHECK(f == NULL);
  lode_item_flags_free(NULL);
  lode_model_free(m);
  lode_correlation_free(c);
}

/* Type 7 quantile (Hyndman & Fan 1996; R's default, numpy's "linear"), written out here. */
static int compare_doubles(const void* a, const void* b) {
  double x = *(const double*)a, y = *(const double*)b;
  return x < y ? -1 : x > y ? 1 : 0;
}
static double quantile7(double* v, size_t n, double q) {
  double h, lo;
  size_t j;
  qsort(v, n, sizeof *v, compare_doubles);
  h = (double)(n - 1) * q;
  lo = floor(h);
  j = (size_t)lo;
  return j + 1 < n ? v[j] + (h - lo) * (v[j + 1] - v[j]) : v[n - 1];
}

static void test_bootstrap(void) {
  double x[N_ROWS * N_ITEMS], est[12], lo[12], hi[12], se[12], fitted[12], phi[4], philo[4], phihi[4], v;
  double reps[40 * 12], col[40], other[12];
  char text[4096];
  size_t len = 0;
  int64_t rows = -1, cols = -1, used, i, k;
  lode_data *d = NULL, *dm = NULL;
  lode_correlation *c = NULL, *cm = NULL;
  lode_model* m = NULL;
  lode_bootstrap_result *b = NULL, *b2 = NULL;
  lode_bootstrap_options bo;
  lode_model_options fo;
  lode_rotation_options ro;
  progress_log log;

  make_data(x);
  x[9 * N_ITEMS + 4] = nan_value(); /* a missing answer: pairwise correlations in every replicate */
  OK(lode_data_from_raw(x, N_ROWS, N_ITEMS, N_ITEMS, 1, &d));
  OK(lode_correlation_compute(d, NULL, &c));
  OK(lode_model_options_init(&fo, sizeof fo));
  OK(lode_rotation_options_init(&ro, sizeof ro));
  fo.factors = 2;
  fo.rotation = &ro;

  EXPECT(lode_bootstrap_options_init(NULL, sizeof bo), LODE_E_INVALID_ARGUMENT, "'opts' is NULL");
  OK(lode_bootstrap_options_init(&bo, sizeof bo));
  CHECK(bo.replicates == 1000 && bo.level == 0.95 && bo.seed == 1 && bo.threads == 0 &&
        bo.replicate_random_starts == 0 && bo.keep_replicates == 0 && bo.progress == NULL);
  bo.replicates = 40;
  bo.seed = 11;
  bo.keep_replicates = 1;
  progress_log_init(&log, -1);
  bo.progress = log_progress;
  bo.progress_user = &log;

  EXPECT(lode_bootstrap_compute(NULL, &fo, &bo, &b), LODE_E_INVALID_ARGUMENT, "'corr' is NULL");
  EXPECT(lode_bootstrap_compute(c, &fo, &bo, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  EXPECT(lode_bootstrap_compute(c, NULL, &bo, &b), LODE_E_INVALID_ARGUMENT, "number of factors");
  CHECK(b == NULL && log.calls == 0);
  OK(lode_bootstrap_compute(c, &fo, &bo, &b));
  CHECK(log.calls >= 2 && log.ordered && log.first_done == 0 && log.last_done == 40 && log.last_total == 40);

  /* the estimates are lode_model_compute's solution with the same options */
  OK(lode_model_compute(c, &fo, &m));
  OK(lode_model_matrix(m, LODE_MODEL_LOADINGS, fitted, 12, NULL, NULL));
  OK(lode_bootstrap_matrix(b, LODE_BOOTSTRAP_LOADINGS, NULL, 0, &rows, &cols));
  CHECK(rows == N_ITEMS && cols == 2);
  OK(lode_bootstrap_matrix(b, LODE_BOOTSTRAP_LOADINGS, est, 12, NULL, NULL));
  CHECK(max_abs_diff(est, fitted, 12) < 1e-12);
  OK(lode_bootstrap_matrix(b, LODE_BOOTSTRAP_LOADINGS_LOWER, lo, 12, NULL, NULL));
  OK(lode_bootstrap_matrix(b, LODE_BOOTSTRAP_LOADINGS_UPPER, hi, 12, NULL, NULL));
  OK(lode_bootstrap_matrix(b, LODE_BOOTSTRAP_LOADINGS_SE, se, 12, NULL, NULL));
  for (k = 0; k < 12; ++k) CHECK(lo[k] <= hi[k] && se[k] >= 0.0 && hi[k] - lo[k] < 2.0);
  OK(lode_bootstrap_value(b, LODE_BOOTSTRAP_REPLICATES, &v));
  CHECK(v == 40.0);
  OK(lode_bootstrap_value(b, LODE_BOOTSTRAP_USED, &v));
  used = (int64_t)v;
  OK(lode_bootstrap_value(b, LODE_BOOTSTRAP_FAILED, &v));
  CHECK(used + (int64_t)v == 40 && used >= 2);
  OK(lode_bootstrap_value(b, LODE_BOOTSTRAP_POORLY_MATCHED, &v));
  CHECK(v >= 0.0 && v <= (double)used);
  OK(lode_bootstrap_value(b, LODE_BOOTSTRAP_LEVEL, &v));
  CHECK(v == 0.95);
  OK(lode_bootstrap_value(b, LODE_BOOTSTRAP_ITEMS, &v));
  CHECK(v == N_ITEMS);
  OK(lode_bootstrap_value(b, LODE_BOOTSTRAP_FACTORS, &v));
  CHECK(v == 2.0);
  OK(lode_bootstrap_value(b, LODE_BOOTSTRAP_OBLIQUE, &v));
  CHECK(v == 0.0);
  /* orthogonal: the identity with zero-width intervals */
  OK(lode_bootstrap_matrix(b, LODE_BOOTSTRAP_FACTOR_CORRELATIONS, phi, 4, &rows, &cols));
  CHECK(rows == 2 && cols == 2 && phi[0] == 1.0 && phi[1] == 0.0);
  OK(lode_bootstrap_matrix(b, LODE_BOOTSTRAP_FACTOR_CORRELATIONS_LOWER, philo, 4, NULL, NULL));
  OK(lode_bootstrap_matrix(b, LODE_BOOTSTRAP_FACTOR_CORRELATIONS_UPPER, phihi, 4, NULL, NULL));
  CHECK(fabs(philo[1]) < 1e-12 && fabs(phihi[1]) < 1e-12);
  OK(lode_bootstrap_matrix(b, LODE_BOOTSTRAP_FACTOR_CORRELATIONS_SE, phi, 4, NULL, NULL));
  {
    double u[N_ITEMS], ulo[N_ITEMS], uhi[N_ITEMS], use[N_ITEMS];
    OK(lode_bootstrap_matrix(b, LODE_BOOTSTRAP_UNIQUENESSES, u, N_ITEMS, &rows, &cols));
    CHECK(rows == N_ITEMS && cols == 1);
    OK(lode_bootstrap_matrix(b, LODE_BOOTSTRAP_UNIQUENESSES_LOWER, ulo, N_ITEMS, NULL, NULL));
    OK(lode_bootstrap_matrix(b, LODE_BOOTSTRAP_UNIQUENESSES_UPPER, uhi, N_ITEMS, NULL, NULL));
    OK(lode_bootstrap_matrix(b, LODE_BOOTSTRAP_UNIQUENESSES_SE, use, N_ITEMS, NULL, NULL));
    for (k = 0; k < N_ITEMS; ++k) CHECK(ulo[k] <= uhi[k] && ulo[k] > 0.0 && uhi[k] <= 1.0 && use[k] >= 0.0);
  }
  OK(lode_bootstrap_matrix(b, LODE_BOOTSTRAP_MIN_CONGRUENCE, col, 40, &rows, &cols));
  CHECK(rows == used && cols == 1 && col[0] > 0.0 && col[0] <= 1.0 + 1e-12);

  /* kept replicates: the interval of each loading is the type 7 quantile pair of its column, the
   * standard error the column's standard deviation (n - 1) */
  OK(lode_bootstrap_matrix(b, LODE_BOOTSTRAP_REPLICATE_LOADINGS, NULL, 0, &rows, &cols));
  CHECK(rows == used && cols == 12);
  OK(lode_bootstrap_matrix(b, LODE_BOOTSTRAP_REPLICATE_LOADINGS, reps, 40 * 12, NULL, NULL));
  for (k = 0; k < 12; ++k) {
    double mean = 0.0, ss = 0.0;
    for (i = 0; i < used; ++i) mean += col[i] = reps[i * 12 + k];
    mean /= (double)used;
    for (i = 0; i < used; ++i) ss += (col[i] - mean) * (col[i] - mean);
    CHECK(fabs(sqrt(ss / (double)(used - 1)) - se[k]) < 1e-12);
    CHECK(fabs(quantile7(col, (size_t)used, 0.025) - lo[k]) < 1e-12);
    CHECK(fabs(quantile7(col, (size_t)used, 0.975) - hi[k]) < 1e-12);
  }
  OK(lode_bootstrap_matrix(b, LODE_BOOTSTRAP_REPLICATE_UNIQUENESSES, NULL, 0, &rows, &cols));
  CHECK(rows == used && cols == N_ITEMS);
  OK(lode_bootstrap_matrix(b, LODE_BOOTSTRAP_REPLICATE_FACTOR_CORRELATIONS, NULL, 0, &rows, &cols));
  CHECK(rows == used && cols == 4);

  OK(lode_bootstrap_text(b, LODE_BOOTSTRAP_ALIGNMENT, text, sizeof text, &len));
  CHECK(strstr(text, "congruence") != NULL && strlen(text) == len);
  OK(lode_bootstrap_text(b, LODE_BOOTSTRAP_NOTES, text, sizeof text, NULL));
  CHECK(strstr(text, "percentile intervals") != NULL);
  OK(lode_bootstrap_text(b, LODE_BOOTSTRAP_FAILURES, NULL, 0, &len));
  OK(lode_bootstrap_value(b, LODE_BOOTSTRAP_FAILED, &v));
  CHECK((len == 0) == (v == 0.0));

  EXPECT(lode_bootstrap_matrix(b, LODE_BOOTSTRAP_LOADINGS, est, 11, NULL, NULL), LODE_E_BUFFER_TOO_SMALL, "6 x 2");
  EXPECT(lode_bootstrap_matrix(b, LODE_BOOTSTRAP_USED, est, 12, NULL, NULL), LODE_E_INVALID_ARGUMENT, "key 921");
  EXPECT(lode_bootstrap_value(b, LODE_BOOTSTRAP_LOADINGS, &v), LODE_E_INVALID_ARGUMENT, "key 900");
  EXPECT(lode_bootstrap_value(b, LODE_BOOTSTRAP_USED, NULL), LODE_E_INVALID_ARGUMENT, "'value' is NULL");
  EXPECT(lode_bootstrap_text(b, LODE_BOOTSTRAP_USED, text, sizeof text, NULL), LODE_E_INVALID_ARGUMENT, "key 921");
  EXPECT(lode_bootstrap_text(b, LODE_BOOTSTRAP_NOTES, text, 3, NULL), LODE_E_BUFFER_TOO_SMALL, "buffer holds 3");
  EXPECT(lode_bootstrap_matrix(NULL, LODE_BOOTSTRAP_LOADINGS, est, 12, NULL, NULL), LODE_E_INVALID_ARGUMENT, "NULL");
  EXPECT(lode_bootstrap_value(NULL, LODE_BOOTSTRAP_USED, &v), LODE_E_INVALID_ARGUMENT, "NULL");
  EXPECT(lode_bootstrap_text(NULL, LODE_BOOTSTRAP_NOTES, text, sizeof text, NULL), LODE_E_INVALID_ARGUMENT, "NULL");

  /* the same seed gives the same intervals whatever the thread count; another seed other intervals */
  bo.progress = NULL;
  bo.keep_replicates = 0;
  bo.threads = 1;
  OK(lode_bootstrap_compute(c, &fo, &bo, &b2));
  OK(lode_bootstrap_matrix(b2, LODE_BOOTSTRAP_LOADINGS_LOWER, other, 12, NULL, NULL));
  CHECK(memcmp(other, lo, sizeof other) == 0);
  EXPECT(lode_bootstrap_matrix(b2, LODE_BOOTSTRAP_REPLICATE_LOADINGS, reps, 40 * 12, NULL, NULL),
         LODE_E_INVALID_ARGUMENT, "keep_replicates");
  lode_bootstrap_free(b2);
  b2 = NULL;
  bo.threads = 2;
  bo.seed = 12;
  OK(lode_bootstrap_compute(c, &fo, &bo, &b2));
  OK(lode_bootstrap_matrix(b2, LODE_BOOTSTRAP_LOADINGS_LOWER, other, 12, NULL, NULL));
  CHECK(memcmp(other, lo, sizeof other) != 0);
  lode_bootstrap_free(b2);
  b2 = NULL;

  /* oblique rotation: factor correlations with proper intervals; one factor: a 1 x 1 identity */
  ro.method = LODE_CRITERION_OBLIMIN;
  bo.replicates = 20;
  OK(lode_bootstrap_compute(c, &fo, &bo, &b2));
  OK(lode_bootstrap_value(b2, LODE_BOOTSTRAP_OBLIQUE, &v));
  CHECK(v == 1.0);
  OK(lode_bootstrap_matrix(b2, LODE_BOOTSTRAP_FACTOR_CORRELATIONS_LOWER, philo, 4, NULL, NULL));
  OK(lode_bootstrap_matrix(b2, LODE_BOOTSTRAP_FACTOR_CORRELATIONS_UPPER, phihi, 4, NULL, NULL));
  CHECK(philo[1] < phihi[1] && fabs(philo[1] - philo[2]) < 1e-12);
  lode_bootstrap_free(b2);
  b2 = NULL;
  fo.factors = 1;
  OK(lode_bootstrap_compute(c, &fo, &bo, &b2));
  OK(lode_bootstrap_matrix(b2, LODE_BOOTSTRAP_FACTOR_CORRELATIONS, phi, 4, &rows, &cols));
  CHECK(rows == 1 && cols == 1 && phi[0] == 1.0);
  lode_bootstrap_free(b2);
  b2 = NULL;
  fo.factors = 2;
  ro.method = LODE_CRITERION_VARIMAX;

  /* cancelled through the callback: LODE_E_CANCELLED and no result */
  progress_log_init(&log, 0);
  bo.progress = log_progress;
  bo.replicates = 100000;
  EXPECT(lode_bootstrap_compute(c, &fo, &bo, &b2), LODE_E_CANCELLED, "cancelled");
  CHECK(b2 == NULL && log.calls >= 1);
  progress_log_init(&log, 3);
  bo.replicates = 20000; /* far more than 50 ms of work, so a report arrives mid-way */
  EXPECT(lode_bootstrap_compute(c, &fo, &bo, &b2), LODE_E_CANCELLED, "cancelled");
  CHECK(b2 == NULL && log.last_done >= 3 && log.last_done < 20000);

  /* bad options */
  OK(lode_bootstrap_options_init(&bo, sizeof bo));
  bo.replicates = 1;
  EXPECT(lode_bootstrap_compute(c, &fo, &bo, &b2), LODE_E_INVALID_ARGUMENT, "replicates must be between 2 and 1000000; it is 1");
  bo.replicates = 20;
  bo.level = 1.0;
  EXPECT(lode_bootstrap_compute(c, &fo, &bo, &b2), LODE_E_INVALID_ARGUMENT, "level");
  bo.level = nan_value();
  EXPECT(lode_bootstrap_compute(c, &fo, &bo, &b2), LODE_E_INVALID_ARGUMENT, "level");
  bo.level = inf_value();
  EXPECT(lode_bootstrap_compute(c, &fo, &bo, &b2), LODE_E_INVALID_ARGUMENT, "level");
  bo.level = 0.9;
  bo.threads = -1;
  EXPECT(lode_bootstrap_compute(c, &fo, &bo, &b2), LODE_E_INVALID_ARGUMENT, "threads");
  bo.threads = 1;
  bo.replicate_random_starts = -2;
  EXPECT(lode_bootstrap_compute(c, &fo, &bo, &b2), LODE_E_INVALID_ARGUMENT, "replicate_random_starts");
  bo.replicate_random_starts = 0;
  fo.method = 42;
  EXPECT(lode_bootstrap_compute(c, &fo, &bo, &b2), LODE_E_INVALID_ARGUMENT, "unknown extraction method 42");
  fo.method = LODE_EXTRACTION_ML;
  ro.method = 99;
  EXPECT(lode_bootstrap_compute(c, &fo, &bo, &b2), LODE_E_INVALID_ARGUMENT, "unknown rotation method 99");
  ro.method = LODE_CRITERION_VARIMAX;
  fo.factors = 5;
  EXPECT(lode_bootstrap_compute(c, &fo, &bo, &b2), LODE_E_TOO_MANY_FACTORS, NULL);
  fo.factors = 2;
  /* a full-sample fit that does not converge is an error, not intervals around it */
  fo.max_iterations = 1;
  EXPECT(lode_bootstrap_compute(c, &fo, &bo, &b2), LODE_E_NOT_CONVERGED, "full-sample");
  fo.max_iterations = 1000;
  CHECK(b2 == NULL);
  bo.struct_size = 1;
  EXPECT(lode_bootstrap_compute(c, &fo, &bo, &b2), LODE_E_INVALID_ARGUMENT, "lode_bootstrap_options_init");
  /* an older options struct (no keep_replicates or progress): those take their defaults */
  progress_log_init(&log, 0);
  OK(lode_bootstrap_options_init(&bo, sizeof bo));
  bo.replicates = 10;
  bo.keep_replicates = 1;
  bo.progress = log_progress;
  bo.progress_user = &log;
  bo.struct_size = offsetof(lode_bootstrap_options, keep_replicates);
  OK(lode_bootstrap_compute(c, &fo, &bo, &b2));
  CHECK(log.calls == 0);
  EXPECT(lode_bootstrap_matrix(b2, LODE_BOOTSTRAP_REPLICATE_LOADINGS, reps, 40 * 12, NULL, NULL),
         LODE_E_INVALID_ARGUMENT, "keep_replicates");
  lode_bootstrap_free(b2);
  b2 = NULL;
  /* NULL options: the defaults (1000 replicates) */
  OK(lode_bootstrap_compute(c, &fo, NULL, &b2));
  OK(lode_bootstrap_value(b2, LODE_BOOTSTRAP_REPLICATES, &v));
  CHECK(v == 1000.0);
  lode_bootstrap_free(b2);
  b2 = NULL;
  /* a newer caller's struct with a field this library lacks set */
  {
    struct {
      lode_bootstrap_options o;
      int64_t newer;
    } big;
    memset(&big, 0, sizeof big);
    OK(lode_bootstrap_options_init(&big.o, sizeof big));
    big.o.replicates = 5;
    big.newer = 3;
    EXPECT(lode_bootstrap_compute(c, &fo, &big.o, &b2), LODE_E_UNSUPPORTED, "newer");
    big.newer = 0;
    OK(lode_bootstrap_compute(c, &fo, &big.o, &b2));
    lode_bootstrap_free(b2);
    b2 = NULL;
  }
  /* a correlation given as a matrix has no respondents to resample */
  {
    double r[36];
    population_matrix(r);
    OK(lode_data_from_correlation(r, 6, 6, 1, 200, &dm));
    OK(lode_correlation_compute(dm, NULL, &cm));
    EXPECT(lode_bootstrap_compute(cm, &fo, &bo, &b2), LODE_E_INVALID_ARGUMENT, "raw data");
    CHECK(b2 == NULL);
  }
  lode_bootstrap_free(NULL);
  lode_bootstrap_free(b);
  lode_model_free(m);
  lode_correlation_free(c);
  lode_correlation_free(cm);
  lode_data_free(d);
  lode_data_free(dm);
}

static void test_last_error_is_cleared(void) {
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

int main(void) {
  test_version_and_status();
  test_data();
  test_matrix_input();
  test_correlation();
  test_polychoric();
  test_factorability();
  test_factor_count();
  test_rotation();
  test_fit();
  test_scores();
  test_fit_progress();
  test_item_flags();
  test_bootstrap();
  test_last_error_is_cleared();
  printf("%d checks, %d failures\n", checks, failures);
  return failures == 0 ? 0 : 1;
}
