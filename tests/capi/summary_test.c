/* lode_summary_* from C (strict C99): build a summary from two blocks (one column-major), merge,
 * write and read the byte form, correlate through a data handle, and every error path (NULL
 * pointers, bad options, mismatched merges, truncated and damaged bytes, unknown keys, buffers too
 * small, a listwise request of a pairwise summary). Numerical agreement with outside references is
 * checked by the core and Python suites (pandas, scipy); here the identities of the interface. */
#include "capi_check.h"
#include "lode.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define ROWS 80
#define ITEMS 4

static void make_rows(double* x) { /* row-major 5-point answers, one in eleven skipped */
  int i, j;
  for (i = 0; i < ROWS; ++i)
    for (j = 0; j < ITEMS; ++j) {
      double v = floor(3.0 + 1.4 * sin(0.37 * i) + 0.9 * sin(1.7 * i * (j + 1) + j) + 0.5);
      x[i * ITEMS + j] = (i * ITEMS + j) % 11 == 5 ? strtod("nan", NULL) : (v < 1 ? 1 : v > 5 ? 5 : v);
    }
}

int main(void) {
  double x[ROWS * ITEMS], col_major[ROWS * ITEMS], a[ITEMS * ITEMS], b[ITEMS * ITEMS], v = 0.0;
  const char* names[ITEMS] = {"q1", "q2", "q3", "q4"};
  const char* other_names[ITEMS] = {"q1", "q2", "q3", "q5"};
  lode_summary_options o;
  lode_summary *s = NULL, *t = NULL, *back = NULL, *other = NULL;
  lode_data *raw = NULL, *from_summary = NULL;
  lode_correlation *cr = NULL, *cs = NULL;
  lode_correlation_options co;
  unsigned char* bytes;
  size_t length = 0, name_length = 0, k;
  int64_t rows = 0, cols = 0;
  int i, j;
  char name[8];

  make_rows(x);
  for (i = 0; i < ROWS; ++i)
    for (j = 0; j < ITEMS; ++j) col_major[j * ROWS + i] = x[i * ITEMS + j];

  OK(lode_summary_options_init(&o, sizeof o));
  CHECK(o.max_categories == 11 && o.listwise == 0);
  EXPECT(lode_summary_options_init(NULL, sizeof o), LODE_E_INVALID_ARGUMENT, "NULL");
  EXPECT(lode_summary_create(0, names, &o, &s), LODE_E_INVALID_ARGUMENT, "1 to 100000 items");
  EXPECT(lode_summary_create(ITEMS, names, &o, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  o.max_categories = 1;
  EXPECT(lode_summary_create(ITEMS, names, &o, &s), LODE_E_INVALID_ARGUMENT, "max_categories");
  CHECK(s == NULL);
  o.max_categories = 11;
  OK(lode_summary_create(ITEMS, names, &o, &s));
  OK(lode_summary_create(ITEMS, names, NULL, &t));
  /* The first 30 rows row-major into s, the other 50 column-major into t, then merged. */
  OK(lode_summary_add(s, x, 30, ITEMS, ITEMS, 1));
  OK(lode_summary_add(t, col_major + 30, 50, ITEMS, 1, ROWS));
  EXPECT(lode_summary_add(s, x, 3, ITEMS + 1, ITEMS + 1, 1), LODE_E_INVALID_ARGUMENT, "5 columns");
  EXPECT(lode_summary_add(NULL, x, 3, ITEMS, ITEMS, 1), LODE_E_INVALID_ARGUMENT, "NULL");
  OK(lode_summary_merge(s, t));
  OK(lode_summary_value(s, LODE_SUMMARY_N_ROWS, &v));
  CHECK(v == ROWS);
  OK(lode_summary_value(s, LODE_SUMMARY_FORMAT_VERSION, &v));
  CHECK(v == 1.0);
  EXPECT(lode_summary_value(s, 9999, &v), LODE_E_INVALID_ARGUMENT, NULL);
  OK(lode_summary_create(ITEMS, other_names, NULL, &other));
  EXPECT(lode_summary_merge(s, other), LODE_E_INVALID_ARGUMENT, "item 4 is 'q4' in one and 'q5' in the other");
  OK(lode_summary_value(s, LODE_SUMMARY_N_ROWS, &v));
  CHECK(v == ROWS); /* unchanged by the refused merge */

  /* Byte form: size query, too small a buffer, round trip, damage. */
  OK(lode_summary_to_bytes(s, NULL, 0, &length));
  CHECK(length > 64);
  bytes = (unsigned char*)malloc(length);
  EXPECT(lode_summary_to_bytes(s, bytes, length - 1, NULL), LODE_E_BUFFER_TOO_SMALL, NULL);
  OK(lode_summary_to_bytes(s, bytes, length, NULL));
  OK(lode_summary_from_bytes(bytes, length, &back));
  {
    lode_summary* cut = NULL;
    EXPECT(lode_summary_from_bytes(bytes, length - 3, &cut), LODE_E_INVALID_ARGUMENT, "readable");
    CHECK(cut == NULL);
  }
  for (k = 0; k < length; k += 5) {
    lode_summary* bad = NULL;
    bytes[k] ^= 0x20;
    EXPECT(lode_summary_from_bytes(bytes, length, &bad), LODE_E_INVALID_ARGUMENT, "summary");
    CHECK(bad == NULL);
    bytes[k] ^= 0x20;
  }
  {
    lode_summary* none = NULL;
    EXPECT(lode_summary_from_bytes(NULL, 10, &none), LODE_E_INVALID_ARGUMENT, "NULL");
    CHECK(none == NULL);
  }
  free(bytes);
  OK(lode_summary_item_name(back, 2, name, sizeof name, &name_length));
  CHECK(strcmp(name, "q3") == 0 && name_length == 2);
  EXPECT(lode_summary_item_name(back, 4, name, sizeof name, &name_length), LODE_E_INVALID_ARGUMENT, "item 4");
  OK(lode_summary_table(back, 0, 1, NULL, 0, &rows, &cols));
  CHECK(rows >= 2 && rows <= 5 && cols >= 2 && cols <= 5);
  EXPECT(lode_summary_table(back, 1, 1, NULL, 0, &rows, &cols), LODE_E_INVALID_ARGUMENT, "pair");
  OK(lode_summary_matrix(back, LODE_SUMMARY_PAIR_COUNTS, NULL, 0, &rows, &cols));
  CHECK(rows == ITEMS && cols == ITEMS);
  EXPECT(lode_summary_matrix(back, 1199, NULL, 0, &rows, &cols), LODE_E_INVALID_ARGUMENT, NULL);

  /* Correlations from the summary equal those from the rows. */
  OK(lode_data_from_raw(x, ROWS, ITEMS, ITEMS, 1, &raw));
  OK(lode_summary_to_data(back, &from_summary));
  OK(lode_correlation_options_init(&co, sizeof co));
  for (i = 0; i < 3; ++i) {
    co.kind = i;
    OK(lode_correlation_compute(raw, &co, &cr));
    OK(lode_correlation_compute(from_summary, &co, &cs));
    OK(lode_correlation_matrix(cr, LODE_CORRELATION_MATRIX, a, ITEMS * ITEMS, NULL, NULL));
    OK(lode_correlation_matrix(cs, LODE_CORRELATION_MATRIX, b, ITEMS * ITEMS, NULL, NULL));
    for (j = 0; j < ITEMS * ITEMS; ++j) CHECK(fabs(a[j] - b[j]) < 1e-12);
    OK(lode_correlation_value(cs, LODE_CORRELATION_N_OBS, &v));
    OK(lode_correlation_value(cr, LODE_CORRELATION_N_OBS, a));
    CHECK(v == a[0]);
    lode_correlation_free(cr);
    lode_correlation_free(cs);
  }
  co.kind = LODE_COEFFICIENT_PEARSON;
  co.missing = LODE_MISSING_LISTWISE;
  EXPECT(lode_correlation_compute(from_summary, &co, &cs), LODE_E_INVALID_ARGUMENT, "listwise");

  /* What needs respondents' rows says that a summary keeps none (not that it is "a matrix"). */
  {
    lode_model_options fo;
    lode_bootstrap_options bo;
    lode_model* m = NULL;
    lode_scores* sc = NULL;
    lode_reliability* rel = NULL;
    lode_bootstrap* bs = NULL;
    OK(lode_correlation_options_init(&co, sizeof co));
    OK(lode_correlation_compute(from_summary, &co, &cs));
    OK(lode_model_options_init(&fo, sizeof fo));
    fo.factors = 1;
    OK(lode_model_compute(cs, &fo, &m));
    EXPECT(lode_scores_compute(m, NULL, NULL, &sc), LODE_E_INVALID_ARGUMENT, "fitted to a summary");
    EXPECT(lode_scores_compute(m, from_summary, NULL, &sc), LODE_E_INVALID_ARGUMENT, "come from a summary");
    EXPECT(lode_reliability_compute_alpha(from_summary, &rel), LODE_E_INVALID_ARGUMENT, "come from a summary");
    OK(lode_bootstrap_options_init(&bo, sizeof bo));
    bo.replicates = 10;
    EXPECT(lode_bootstrap_compute(cs, &fo, &bo, &bs), LODE_E_INVALID_ARGUMENT, "no respondent's answers");
    lode_model_free(m);
    lode_correlation_free(cs);
  }

  lode_data_free(raw);
  lode_data_free(from_summary);
  lode_summary_free(s);
  lode_summary_free(t);
  lode_summary_free(back);
  lode_summary_free(other);
  lode_summary_free(NULL);
  return check_report("summary_test");
}
