/* The C ABI from C: lode_bootstrap. */
#include "capi_test.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

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

/* The first result (40 kept replicates, varimax, 2 factors): the estimates are lode_model_compute's,
 * the intervals and standard errors those of the kept replicates; `lo` receives the lower limits. */
static void check_bootstrap_result(const lode_bootstrap* b, const lode_correlation* c, const lode_model_options* fo,
                                   double lo[12]) {
  double est[12], hi[12], se[12], fitted[12], phi[4], philo[4], phihi[4], v;
  double reps[40 * 12], col[40];
  char text[4096];
  size_t len = 0;
  int64_t rows = -1, cols = -1, used, i, k;
  lode_model* m = NULL;

  /* the estimates are lode_model_compute's solution with the same options */
  OK(lode_model_compute(c, fo, &m));
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

  lode_model_free(m);
}

/* The same seed gives the same intervals whatever the thread count; the rotation and factor count
 * as the model options say. */
static void check_bootstrap_reruns(const lode_correlation* c, lode_model_options* fo, lode_rotation_options* ro,
                                   lode_bootstrap_options* bo, const double lo[12]) {
  double other[12], reps[40 * 12], phi[4], philo[4], phihi[4], v;
  int64_t rows = -1, cols = -1;
  lode_bootstrap* b2 = NULL;

  /* the same seed gives the same intervals whatever the thread count; another seed other intervals */
  bo->progress = NULL;
  bo->keep_replicates = 0;
  bo->threads = 1;
  OK(lode_bootstrap_compute(c, fo, bo, &b2));
  OK(lode_bootstrap_matrix(b2, LODE_BOOTSTRAP_LOADINGS_LOWER, other, 12, NULL, NULL));
  CHECK(memcmp(other, lo, sizeof other) == 0);
  EXPECT(lode_bootstrap_matrix(b2, LODE_BOOTSTRAP_REPLICATE_LOADINGS, reps, 40 * 12, NULL, NULL),
         LODE_E_INVALID_ARGUMENT, "keep_replicates");
  lode_bootstrap_free(b2);
  b2 = NULL;
  bo->threads = 2;
  bo->seed = 12;
  OK(lode_bootstrap_compute(c, fo, bo, &b2));
  OK(lode_bootstrap_matrix(b2, LODE_BOOTSTRAP_LOADINGS_LOWER, other, 12, NULL, NULL));
  CHECK(memcmp(other, lo, sizeof other) != 0);
  lode_bootstrap_free(b2);
  b2 = NULL;

  /* oblique rotation: factor correlations with proper intervals; one factor: a 1 x 1 identity */
  ro->method = LODE_CRITERION_OBLIMIN;
  bo->replicates = 20;
  OK(lode_bootstrap_compute(c, fo, bo, &b2));
  OK(lode_bootstrap_value(b2, LODE_BOOTSTRAP_OBLIQUE, &v));
  CHECK(v == 1.0);
  OK(lode_bootstrap_matrix(b2, LODE_BOOTSTRAP_FACTOR_CORRELATIONS_LOWER, philo, 4, NULL, NULL));
  OK(lode_bootstrap_matrix(b2, LODE_BOOTSTRAP_FACTOR_CORRELATIONS_UPPER, phihi, 4, NULL, NULL));
  CHECK(philo[1] < phihi[1] && fabs(philo[1] - philo[2]) < 1e-12);
  lode_bootstrap_free(b2);
  b2 = NULL;
  fo->factors = 1;
  OK(lode_bootstrap_compute(c, fo, bo, &b2));
  OK(lode_bootstrap_matrix(b2, LODE_BOOTSTRAP_FACTOR_CORRELATIONS, phi, 4, &rows, &cols));
  CHECK(rows == 1 && cols == 1 && phi[0] == 1.0);
  lode_bootstrap_free(b2);
  b2 = NULL;
  fo->factors = 2;
  ro->method = LODE_CRITERION_VARIMAX;

}

/* Cancelled through the callback: LODE_E_CANCELLED and no result. */
static void check_bootstrap_cancel(const lode_correlation* c, const lode_model_options* fo, lode_bootstrap_options* bo) {
  progress_log log;
  lode_bootstrap* b2 = NULL;

  progress_log_init(&log, 0);
  bo->progress = log_progress;
  bo->progress_user = &log;
  bo->replicates = 100000;
  EXPECT(lode_bootstrap_compute(c, fo, bo, &b2), LODE_E_CANCELLED, "cancelled");
  CHECK(b2 == NULL && log.calls >= 1);
  progress_log_init(&log, 3);
  bo->replicates = 20000; /* far more than 50 ms of work, so a report arrives mid-way */
  EXPECT(lode_bootstrap_compute(c, fo, bo, &b2), LODE_E_CANCELLED, "cancelled");
  CHECK(b2 == NULL && log.last_done >= 3 && log.last_done < 20000);

}

/* Bad options, older and newer option structs, NULL options, and data without respondents. */
static void check_bootstrap_options(const lode_correlation* c, lode_model_options* fo, lode_rotation_options* ro) {
  double reps[40 * 12], v;
  lode_data* dm = NULL;
  lode_correlation* cm = NULL;
  lode_bootstrap* b2 = NULL;
  lode_bootstrap_options bo;
  progress_log log;

  /* bad options */
  OK(lode_bootstrap_options_init(&bo, sizeof bo));
  bo.replicates = 1;
  EXPECT(lode_bootstrap_compute(c, fo, &bo, &b2), LODE_E_INVALID_ARGUMENT, "replicates must be between 2 and 1000000; it is 1");
  bo.replicates = 20;
  bo.level = 1.0;
  EXPECT(lode_bootstrap_compute(c, fo, &bo, &b2), LODE_E_INVALID_ARGUMENT, "level");
  bo.level = nan_value();
  EXPECT(lode_bootstrap_compute(c, fo, &bo, &b2), LODE_E_INVALID_ARGUMENT, "level");
  bo.level = inf_value();
  EXPECT(lode_bootstrap_compute(c, fo, &bo, &b2), LODE_E_INVALID_ARGUMENT, "level");
  bo.level = 0.9;
  bo.threads = -1;
  EXPECT(lode_bootstrap_compute(c, fo, &bo, &b2), LODE_E_INVALID_ARGUMENT, "threads");
  bo.threads = 1;
  bo.replicate_random_starts = -2;
  EXPECT(lode_bootstrap_compute(c, fo, &bo, &b2), LODE_E_INVALID_ARGUMENT, "replicate_random_starts");
  bo.replicate_random_starts = 0;
  fo->method = 42;
  EXPECT(lode_bootstrap_compute(c, fo, &bo, &b2), LODE_E_INVALID_ARGUMENT, "unknown extraction method 42");
  fo->method = LODE_EXTRACTION_ML;
  ro->method = 99;
  EXPECT(lode_bootstrap_compute(c, fo, &bo, &b2), LODE_E_INVALID_ARGUMENT, "unknown rotation method 99");
  ro->method = LODE_CRITERION_VARIMAX;
  fo->factors = 5;
  EXPECT(lode_bootstrap_compute(c, fo, &bo, &b2), LODE_E_TOO_MANY_FACTORS, NULL);
  fo->factors = 2;
  /* a full-sample fit that does not converge is an error, not intervals around it */
  fo->max_iterations = 1;
  EXPECT(lode_bootstrap_compute(c, fo, &bo, &b2), LODE_E_NOT_CONVERGED, "full-sample");
  fo->max_iterations = 1000;
  CHECK(b2 == NULL);
  bo.struct_size = 1;
  EXPECT(lode_bootstrap_compute(c, fo, &bo, &b2), LODE_E_INVALID_ARGUMENT, "lode_bootstrap_options_init");
  /* an older options struct (no keep_replicates or progress): those take their defaults */
  progress_log_init(&log, 0);
  OK(lode_bootstrap_options_init(&bo, sizeof bo));
  bo.replicates = 10;
  bo.keep_replicates = 1;
  bo.progress = log_progress;
  bo.progress_user = &log;
  bo.struct_size = offsetof(lode_bootstrap_options, keep_replicates);
  OK(lode_bootstrap_compute(c, fo, &bo, &b2));
  CHECK(log.calls == 0);
  EXPECT(lode_bootstrap_matrix(b2, LODE_BOOTSTRAP_REPLICATE_LOADINGS, reps, 40 * 12, NULL, NULL),
         LODE_E_INVALID_ARGUMENT, "keep_replicates");
  lode_bootstrap_free(b2);
  b2 = NULL;
  /* NULL options: the defaults (1000 replicates) */
  OK(lode_bootstrap_compute(c, fo, NULL, &b2));
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
    EXPECT(lode_bootstrap_compute(c, fo, &big.o, &b2), LODE_E_UNSUPPORTED, "newer");
    big.newer = 0;
    OK(lode_bootstrap_compute(c, fo, &big.o, &b2));
    lode_bootstrap_free(b2);
    b2 = NULL;
  }
  /* a correlation given as a matrix has no respondents to resample */
  {
    double r[36];
    population_matrix(r);
    OK(lode_data_from_correlation(r, 6, 6, 1, 200, &dm));
    OK(lode_correlation_compute(dm, NULL, &cm));
    EXPECT(lode_bootstrap_compute(cm, fo, &bo, &b2), LODE_E_INVALID_ARGUMENT, "raw data");
    CHECK(b2 == NULL);
  }
  lode_correlation_free(cm);
  lode_data_free(dm);
}

void test_bootstrap(void) {
  double x[N_ROWS * N_ITEMS], lo[12];
  lode_data* d = NULL;
  lode_correlation* c = NULL;
  lode_bootstrap* b = NULL;
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

  check_bootstrap_result(b, c, &fo, lo);
  check_bootstrap_reruns(c, &fo, &ro, &bo, lo);
  check_bootstrap_cancel(c, &fo, &bo);
  check_bootstrap_options(c, &fo, &ro);
  lode_bootstrap_free(NULL);
  lode_bootstrap_free(b);
  lode_correlation_free(c);
  lode_data_free(d);
}
