/* Shared by the C ABI's tests from C (capi_test.c and capi_<handle>_test.c): the check macros, the
 * counters they update, data every handle's test starts from, and one test function per part. */
#ifndef LODE_CAPI_TEST_H
#define LODE_CAPI_TEST_H

#include "capi_check.h"
#include "lode.h"

#include <stddef.h>
#include <stdint.h>
#include <stdio.h>

/* The three getters of a handle (lode_<handle>_value, _matrix, _text) refuse a NULL handle, each asked
 * for a key it has; the message must contain `fragment`. */
#define EXPECT_NULL_HANDLE(prefix, fragment, value_key, matrix_key, buf, capacity, text_key, text, text_capacity) \
  do {                                                                                                         \
    double value_;                                                                                             \
    EXPECT(prefix##_value(NULL, value_key, &value_), LODE_E_INVALID_ARGUMENT, fragment);                       \
    EXPECT(prefix##_matrix(NULL, matrix_key, buf, capacity, NULL, NULL), LODE_E_INVALID_ARGUMENT, fragment);   \
    EXPECT(prefix##_text(NULL, text_key, text, text_capacity, NULL), LODE_E_INVALID_ARGUMENT, fragment);       \
  } while (0)

/* Two-construct survey-like data, row-major, 5-point items (deterministic, no randomness needed). */
#define N_ROWS 60
#define N_ITEMS 6
void make_data(double* x);

/* The largest |a[k] - b[k]| (huge when either is NaN). */
double max_abs_diff(const double* a, const double* b, size_t n);

/* An exact two-factor population correlation matrix: items 1-3 load .8/.7/.6 on factor 1, items
 * 4-6 load .7/.6/.5 on factor 2, uncorrelated factors. A two-factor model reproduces it exactly
 * (common practice: the population check of an extraction). Its eigenvalues (numpy.linalg.eigvalsh)
 * are 1.976, 1.716, 0.711, 0.593, 0.573, 0.431: two above one. */
void population_matrix(double* r);
lode_correlation* population_correlation(int64_t n_obs);

/* The loadings of that population (items x 2, row-major): the simple structure rotations find. */
extern const double simple_loadings[12];

/* The fixture of the scores, reliability and comparison tests: make_data's answers with one answer
 * missing (row 6, item 3), a two-factor principal-axis model of them rotated by varimax, the first
 * three items alone, and the correlation matrix given as a matrix (no respondents behind it). */
typedef struct fitted_example {
  double x[N_ROWS * N_ITEMS];
  lode_data *data, *first_three, *matrix;
  lode_correlation* corr;
  lode_rotation_options rotation;
  lode_model_options fit; /* fit.rotation points at rotation: keep the fixture where it was opened */
  lode_model* model;
} fitted_example;
void fitted_example_open(fitted_example* f);
void fitted_example_close(fitted_example* f);

/* A progress callback that counts its calls in progress_calls, checks 0 <= done <= total, and cancels
 * when `user` points at a nonzero int. */
extern int progress_calls;
int count_progress(void* user, int64_t done, int64_t total);

/* What a progress callback saw; `cancel_at` >= 0 cancels at the first report with done >= it. */
typedef struct progress_log {
  int calls;
  int64_t first_done, first_total, last_done, last_total;
  int ordered; /* every report had 0 <= done <= total, the same total, and done never fell */
  int64_t cancel_at;
} progress_log;
void progress_log_init(progress_log* log, int64_t cancel_at);
int log_progress(void* user, int64_t done, int64_t total);

/* One per part of lode.h, in capi_<handle>_test.c. */
void test_version_and_status(void);
void test_data(void);
void test_matrix_input(void);
void test_last_error_is_cleared(void);
void test_correlation(void);
void test_polychoric(void);
void test_factorability(void);
void test_factor_count(void);
void test_rotation(void);
void test_fit(void);
void test_fit_progress(void);
void test_scores(void);
void test_reliability(void);
void test_comparison(void);
void test_item_flags(void);
void test_bootstrap(void);
void test_schmid_leiman(void);

#endif
