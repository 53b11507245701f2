/* The C ABI from C: lode_model (the fit, its options and progress). */
#include "capi_test.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* Every matrix and number key of a model answers. */
static void check_every_model_key(const lode_model* m) {
  double v;
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

void test_fit(void) {
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
  check_every_model_key(m);
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
  EXPECT_NULL_HANDLE(lode_model, "'model' is NULL", LODE_MODEL_RMSEA, LODE_MODEL_LOADINGS, l, 12, LODE_MODEL_NOTES, notes, 8);
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

void test_fit_progress(void) {
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

  /* a caller built against a shorter struct (without the progress fields) passes it: they are not read
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
