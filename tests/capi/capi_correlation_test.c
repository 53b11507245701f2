/* The C ABI from C: lode_correlation (Pearson, Spearman, polychoric; options, keys, errors). */
#include "capi_test.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* The numbers and texts of a pairwise Pearson result over make_data with two answers missing. */
static void check_correlation_values(const lode_correlation* c) {
  double v;
  char text[4];
  size_t len = 99;

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
}

/* Bad option values, older and newer option structs, and content errors from the core for the data
 * behind `d` (make_data's answers `x`). */
static void check_correlation_options(const lode_data* d, const double* x) {
  double v;
  int i;
  lode_correlation* c = NULL;
  lode_correlation_options o;

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

}

void test_correlation(void) {
  double x[N_ROWS * N_ITEMS], xt[N_ROWS * N_ITEMS], out[N_ITEMS * N_ITEMS], out2[N_ITEMS * N_ITEMS];
  double ev[N_ITEMS], smc[N_ITEMS], counts[N_ITEMS * N_ITEMS], v;
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

  check_correlation_values(c);
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

  check_correlation_options(d, x);

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

void test_polychoric(void) {
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
