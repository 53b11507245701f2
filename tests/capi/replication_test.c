/* lode_restricted_fit_*, lode_replication_* and lode_holdout_* from C (strict C99): a population
 * structure recovered exactly through the interface, the shapes and identities of every key, progress
 * and cancel, and every error path (NULL pointers, patterns that do not identify the model, bad options,
 * a matrix where respondents are needed, shares too small, unknown keys, buffers too small). Numerical
 * agreement with outside references is checked by the core and Python suites. */
#include "capi_check.h"
#include "lode.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

#define ITEMS 6
#define ROWS 400

static const double true_loadings[ITEMS] = {0.8, 0.7, 0.6, 0.75, 0.65, 0.55};
static const double true_phi = 0.4;

/* Sigma = L Phi L' + Psi of two factors, three items each, correlated true_phi. */
static void population_matrix(double* r) {
  int i, j;
  for (i = 0; i < ITEMS; ++i)
    for (j = 0; j < ITEMS; ++j)
      r[i * ITEMS + j] = i == j ? 1.0 : true_loadings[i] * true_loadings[j] * ((i < 3) == (j < 3) ? 1.0 : true_phi);
}

/* A 64-bit linear congruential generator (Knuth's MMIX constants) and Box-Muller normals: data from the
 * same model, deterministic on every platform. */
static unsigned long long lcg_state = 12345u;
static double uniform01(void) {
  lcg_state = lcg_state * 6364136223846793005ULL + 1442695040888963407ULL;
  return ((double)(lcg_state >> 11) + 0.5) / 9007199254740992.0;
}
static double normal(void) { return sqrt(-2.0 * log(uniform01())) * cos(6.283185307179586 * uniform01()); }

static void simulate(double* x) {
  int i, j;
  for (i = 0; i < ROWS; ++i) {
    const double f1 = normal(), f2 = true_phi * f1 + sqrt(1.0 - true_phi * true_phi) * normal();
    for (j = 0; j < ITEMS; ++j) {
      const double l = true_loadings[j];
      x[i * ITEMS + j] = l * (j < 3 ? f1 : f2) + sqrt(1.0 - l * l) * normal();
    }
  }
}

static const double pattern[ITEMS * 2] = {1, 0, 1, 0, 1, 0, 0, 1, 0, 1, 0, 1};

static void test_restricted_fit(void) {
  double r[ITEMS * ITEMS], bad[ITEMS * 2], l[ITEMS * 2], se[ITEMS * 2], phi[4], u[ITEMS], v = 0.0;
  lode_data* d = NULL;
  lode_correlation *c = NULL, *c0 = NULL;
  lode_restricted_fit* f = NULL;
  lode_restricted_fit_options o;
  int64_t rows = 0, cols = 0;
  size_t length = 0;
  char text[16];
  int i;

  population_matrix(r);
  OK(lode_data_from_correlation(r, ITEMS, ITEMS, 1, 250, &d));
  OK(lode_correlation_compute(d, NULL, &c));
  lode_data_free(d);
  OK(lode_data_from_correlation(r, ITEMS, ITEMS, 1, 0, &d));
  OK(lode_correlation_compute(d, NULL, &c0));
  lode_data_free(d);
  OK(lode_restricted_fit_options_init(&o, sizeof o));
  CHECK(o.max_iterations == 500 && o.tolerance == 1e-10 && o.min_uniqueness == 0.005 && o.interval_level == 0.90);

  OK(lode_restricted_fit_compute(c, pattern, ITEMS, 2, 2, 1, &o, &f));
  OK(lode_restricted_fit_matrix(f, LODE_RESTRICTED_FIT_LOADINGS, NULL, 0, &rows, &cols));
  CHECK(rows == ITEMS && cols == 2);
  OK(lode_restricted_fit_matrix(f, LODE_RESTRICTED_FIT_LOADINGS, l, ITEMS * 2, NULL, NULL));
  for (i = 0; i < ITEMS; ++i) {
    CHECK(fabs(l[i * 2 + (i < 3 ? 0 : 1)] - true_loadings[i]) < 1e-8);
    CHECK(l[i * 2 + (i < 3 ? 1 : 0)] == 0.0);
  }
  OK(lode_restricted_fit_matrix(f, LODE_RESTRICTED_FIT_LOADINGS_SE, se, ITEMS * 2, NULL, NULL));
  CHECK(se[0] > 0.0 && se[0] < 0.2 && isnan(se[1]));
  OK(lode_restricted_fit_matrix(f, LODE_RESTRICTED_FIT_FACTOR_CORRELATIONS, phi, 4, NULL, NULL));
  CHECK(fabs(phi[1] - true_phi) < 1e-8 && phi[0] == 1.0);
  OK(lode_restricted_fit_matrix(f, LODE_RESTRICTED_FIT_FACTOR_CORRELATIONS_SE, phi, 4, NULL, NULL));
  CHECK(isnan(phi[0]) && phi[1] > 0.0 && phi[1] == phi[2]);
  OK(lode_restricted_fit_matrix(f, LODE_RESTRICTED_FIT_UNIQUENESSES, u, ITEMS, &rows, &cols));
  CHECK(rows == ITEMS && cols == 1 && fabs(u[0] - 0.36) < 1e-8);
  OK(lode_restricted_fit_matrix(f, LODE_RESTRICTED_FIT_UNIQUENESSES_SE, u, ITEMS, NULL, NULL));
  CHECK(u[0] > 0.0);
  OK(lode_restricted_fit_matrix(f, LODE_RESTRICTED_FIT_HEYWOOD, u, ITEMS, NULL, NULL));
  CHECK(u[0] == 0.0);
  OK(lode_restricted_fit_matrix(f, LODE_RESTRICTED_FIT_PATTERN, bad, ITEMS * 2, NULL, NULL));
  CHECK(memcmp(bad, pattern, sizeof bad) == 0);
  OK(lode_restricted_fit_value(f, LODE_RESTRICTED_FIT_CHI_SQUARE, &v));
  CHECK(v >= 0.0 && v < 1e-9);
  OK(lode_restricted_fit_value(f, LODE_RESTRICTED_FIT_DF, &v));
  CHECK(v == 21.0 - 13.0);
  OK(lode_restricted_fit_value(f, LODE_RESTRICTED_FIT_CFI, &v));
  CHECK(v == 1.0);
  OK(lode_restricted_fit_value(f, LODE_RESTRICTED_FIT_RMSEA, &v));
  CHECK(v == 0.0);
  OK(lode_restricted_fit_value(f, LODE_RESTRICTED_FIT_SRMR, &v));
  CHECK(v < 1e-8);
  OK(lode_restricted_fit_value(f, LODE_RESTRICTED_FIT_CONVERGED, &v));
  CHECK(v == 1.0);
  OK(lode_restricted_fit_value(f, LODE_RESTRICTED_FIT_N_OBS, &v));
  CHECK(v == 250.0);
  OK(lode_restricted_fit_value(f, LODE_RESTRICTED_FIT_FREE_PARAMETERS, &v));
  CHECK(v == 13.0);
  for (i = LODE_RESTRICTED_FIT_ITEMS; i <= LODE_RESTRICTED_FIT_PROPER_CORRELATIONS; ++i)
    OK(lode_restricted_fit_value(f, i, &v));
  OK(lode_restricted_fit_text(f, LODE_RESTRICTED_FIT_NOTES, NULL, 0, &length));
  CHECK(length > 10);
  EXPECT(lode_restricted_fit_text(f, LODE_RESTRICTED_FIT_NOTES, text, sizeof text, &length), LODE_E_BUFFER_TOO_SMALL,
         NULL);
  EXPECT(lode_restricted_fit_matrix(f, LODE_RESTRICTED_FIT_LOADINGS, l, 3, NULL, NULL), LODE_E_BUFFER_TOO_SMALL, NULL);
  EXPECT(lode_restricted_fit_matrix(f, 1620, l, ITEMS * 2, NULL, NULL), LODE_E_INVALID_ARGUMENT, "1620");
  EXPECT(lode_restricted_fit_value(f, 1600, &v), LODE_E_INVALID_ARGUMENT, "1600");
  EXPECT(lode_restricted_fit_value(f, LODE_RESTRICTED_FIT_DF, NULL), LODE_E_INVALID_ARGUMENT, "'value' is NULL");
  EXPECT(lode_restricted_fit_text(f, 1600, text, sizeof text, &length), LODE_E_INVALID_ARGUMENT, "1600");
  lode_restricted_fit_free(f);
  f = NULL;

  /* column-major pattern through the strides; NULL options are the defaults */
  for (i = 0; i < ITEMS; ++i) {
    bad[i] = pattern[i * 2];
    bad[ITEMS + i] = pattern[i * 2 + 1];
  }
  OK(lode_restricted_fit_compute(c, bad, ITEMS, 2, 1, ITEMS, NULL, &f));
  lode_restricted_fit_free(f);
  f = NULL;

  /* errors */
  EXPECT(lode_restricted_fit_compute(NULL, pattern, ITEMS, 2, 2, 1, &o, &f), LODE_E_INVALID_ARGUMENT, "'corr' is NULL");
  EXPECT(lode_restricted_fit_compute(c, pattern, ITEMS, 2, 2, 1, &o, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  EXPECT(lode_restricted_fit_compute(c, NULL, ITEMS, 2, 2, 1, &o, &f), LODE_E_INVALID_ARGUMENT, "is NULL");
  EXPECT(lode_restricted_fit_compute(c, pattern, ITEMS - 1, 2, 2, 1, &o, &f), LODE_E_INVALID_ARGUMENT,
         "5 rows but there are 6 items");
  memcpy(bad, pattern, sizeof bad);
  bad[2 * 2] = 0.0; /* item 3 on no factor */
  EXPECT(lode_restricted_fit_compute(c, bad, ITEMS, 2, 2, 1, &o, &f), LODE_E_INVALID_ARGUMENT,
         "column 3 is on no factor");
  memcpy(bad, pattern, sizeof bad);
  bad[0] = 0.0;
  bad[1] = 1.0;
  bad[2] = 0.0;
  bad[3] = 1.0; /* factor 1 keeps one item */
  EXPECT(lode_restricted_fit_compute(c, bad, ITEMS, 2, 2, 1, &o, &f), LODE_E_INVALID_ARGUMENT,
         "factor 1 has 1 item");
  memcpy(bad, pattern, sizeof bad);
  bad[0] = 2.0;
  EXPECT(lode_restricted_fit_compute(c, bad, ITEMS, 2, 2, 1, &o, &f), LODE_E_INVALID_ARGUMENT, "only 0 and 1");
  EXPECT(lode_restricted_fit_compute(c0, pattern, ITEMS, 2, 2, 1, &o, &f), LODE_E_INSUFFICIENT_DATA, "n_obs");
  o.tolerance = 0.0;
  EXPECT(lode_restricted_fit_compute(c, pattern, ITEMS, 2, 2, 1, &o, &f), LODE_E_INVALID_ARGUMENT, "tolerance");
  OK(lode_restricted_fit_options_init(&o, sizeof o));
  o.struct_size = 0;
  EXPECT(lode_restricted_fit_compute(c, pattern, ITEMS, 2, 2, 1, &o, &f), LODE_E_INVALID_ARGUMENT, "struct_size");
  EXPECT(lode_restricted_fit_options_init(NULL, sizeof o), LODE_E_INVALID_ARGUMENT, NULL);
  CHECK(f == NULL);
  EXPECT(lode_restricted_fit_matrix(NULL, LODE_RESTRICTED_FIT_LOADINGS, l, 12, NULL, NULL), LODE_E_INVALID_ARGUMENT,
         "'fit' is NULL");
  lode_restricted_fit_free(NULL);
  lode_correlation_free(c);
  lode_correlation_free(c0);
}

typedef struct {
  int calls;
  int64_t last_done, last_total, cancel_at;
} progress_log;
static int log_progress(void* user, int64_t done, int64_t total) {
  progress_log* log = (progress_log*)user;
  ++log->calls;
  log->last_done = done;
  log->last_total = total;
  return log->cancel_at >= 0 && done >= log->cancel_at;
}

static void test_replication_and_holdout(void) {
  static double x[ROWS * ITEMS];
  double m[64], v = 0.0, r[ITEMS * ITEMS];
  lode_data *d = NULL, *dm = NULL;
  lode_correlation *c = NULL, *cm = NULL;
  lode_model_options fo;
  lode_rotation_options ro;
  lode_replication_options o;
  lode_replication *rep = NULL, *rep2 = NULL;
  lode_holdout_options ho;
  lode_holdout* h = NULL;
  lode_restricted_fit* f = NULL;
  progress_log log = {0, 0, 0, -1};
  int64_t rows = 0, cols = 0;
  size_t length = 0;
  int i;

  simulate(x);
  OK(lode_data_from_raw(x, ROWS, ITEMS, ITEMS, 1, &d));
  OK(lode_correlation_compute(d, NULL, &c));
  population_matrix(r);
  OK(lode_data_from_correlation(r, ITEMS, ITEMS, 1, 300, &dm));
  OK(lode_correlation_compute(dm, NULL, &cm));
  OK(lode_rotation_options_init(&ro, sizeof ro));
  ro.method = LODE_CRITERION_OBLIMIN;
  OK(lode_model_options_init(&fo, sizeof fo));
  fo.factors = 2;
  fo.rotation = &ro;
  OK(lode_replication_options_init(&o, sizeof o));
  CHECK(o.splits == 100 && o.seed == 1 && o.threads == 0);
  o.splits = 12;
  o.progress = log_progress;
  o.progress_user = &log;

  OK(lode_replication_compute(c, &fo, &o, &rep));
  CHECK(log.calls >= 2 && log.last_done == 12 && log.last_total == 12);
  OK(lode_replication_matrix(rep, LODE_REPLICATION_CONGRUENCE_MEDIAN, m, 64, &rows, &cols));
  CHECK(rows == 2 && cols == 1 && m[0] > 0.95 && m[0] <= 1.0 && m[1] > 0.95);
  OK(lode_replication_matrix(rep, LODE_REPLICATION_ITEM_STABILITY, m, 64, &rows, &cols));
  CHECK(rows == ITEMS && cols == 1);
  for (i = 0; i < ITEMS; ++i) CHECK(m[i] >= 0.0 && m[i] <= 1.0);
  OK(lode_replication_matrix(rep, LODE_REPLICATION_CONGRUENCE, NULL, 0, &rows, &cols));
  CHECK(rows == 12 && cols == 2);
  for (i = LODE_REPLICATION_CONGRUENCE_MEDIAN; i <= LODE_REPLICATION_LOADINGS; ++i) {
    OK(lode_replication_matrix(rep, i, NULL, 0, &rows, &cols));
    CHECK(rows * cols > 0 && rows * cols <= 64);
  }
  OK(lode_replication_value(rep, LODE_REPLICATION_USED, &v));
  CHECK(v == 12.0);
  OK(lode_replication_value(rep, LODE_REPLICATION_SHARE_SAME_COUNT, &v));
  CHECK(v >= 0.0 && v <= 1.0);
  for (i = LODE_REPLICATION_SPLITS; i <= LODE_REPLICATION_SHARE_FULL_COUNT; ++i) OK(lode_replication_value(rep, i, &v));
  OK(lode_replication_text(rep, LODE_REPLICATION_NOTES, NULL, 0, &length));
  CHECK(length > 20);
  OK(lode_replication_text(rep, LODE_REPLICATION_FAILURES, NULL, 0, &length));
  CHECK(length == 0);
  EXPECT(lode_replication_matrix(rep, 1720, m, 64, NULL, NULL), LODE_E_INVALID_ARGUMENT, "1720");
  EXPECT(lode_replication_value(rep, 1700, &v), LODE_E_INVALID_ARGUMENT, "1700");
  EXPECT(lode_replication_text(rep, 1700, NULL, 0, &length), LODE_E_INVALID_ARGUMENT, "1700");

  /* the same seed with another thread count gives the same numbers */
  o.threads = 1;
  o.progress = NULL;
  OK(lode_replication_compute(c, &fo, &o, &rep2));
  {
    double a[24], b[24];
    OK(lode_replication_matrix(rep, LODE_REPLICATION_CONGRUENCE, a, 24, NULL, NULL));
    OK(lode_replication_matrix(rep2, LODE_REPLICATION_CONGRUENCE, b, 24, NULL, NULL));
    CHECK(memcmp(a, b, sizeof a) == 0);
  }
  lode_replication_free(rep2);
  rep2 = NULL;

  /* errors and cancel */
  o.progress = log_progress;
  log.cancel_at = 0; /* cancels at the first report, before any split */
  EXPECT(lode_replication_compute(c, &fo, &o, &rep2), LODE_E_CANCELLED, NULL);
  CHECK(rep2 == NULL);
  o.progress = NULL;
  EXPECT(lode_replication_compute(NULL, &fo, &o, &rep2), LODE_E_INVALID_ARGUMENT, "'corr' is NULL");
  EXPECT(lode_replication_compute(c, &fo, &o, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  EXPECT(lode_replication_compute(c, NULL, &o, &rep2), LODE_E_INVALID_ARGUMENT, "number of factors");
  EXPECT(lode_replication_compute(cm, &fo, &o, &rep2), LODE_E_INVALID_ARGUMENT, "needs raw data");
  o.splits = 1;
  EXPECT(lode_replication_compute(c, &fo, &o, &rep2), LODE_E_INVALID_ARGUMENT, "splits must be between 2");
  o.splits = 12;
  o.threads = -1;
  EXPECT(lode_replication_compute(c, &fo, &o, &rep2), LODE_E_INVALID_ARGUMENT, "threads");
  CHECK(rep2 == NULL);
  EXPECT(lode_replication_value(NULL, LODE_REPLICATION_USED, &v), LODE_E_INVALID_ARGUMENT, "NULL");
  lode_replication_free(rep);
  lode_replication_free(NULL);

  /* the hold-out check */
  OK(lode_holdout_options_init(&ho, sizeof ho));
  CHECK(ho.share == 0.5 && ho.seed == 1 && ho.salient == 0.40 && ho.restricted == NULL);
  OK(lode_holdout_compute(c, &fo, &ho, &h));
  OK(lode_holdout_value(h, LODE_HOLDOUT_N_HOLDOUT, &v));
  CHECK(v == ROWS / 2);
  OK(lode_holdout_value(h, LODE_HOLDOUT_N_EXPLORE, &v));
  CHECK(v == ROWS / 2);
  for (i = LODE_HOLDOUT_N_EXPLORE; i <= LODE_HOLDOUT_SALIENT; ++i) OK(lode_holdout_value(h, i, &v));
  OK(lode_holdout_matrix(h, LODE_HOLDOUT_PATTERN, m, 64, &rows, &cols));
  CHECK(rows == ITEMS && cols == 2);
  OK(lode_holdout_matrix(h, LODE_HOLDOUT_ITEMS_LEFT_OUT, NULL, 0, &rows, &cols));
  CHECK(rows == 0 && cols == 1);
  OK(lode_holdout_matrix(h, LODE_HOLDOUT_ROWS, NULL, 0, &rows, &cols));
  CHECK(rows == ROWS / 2);
  for (i = LODE_HOLDOUT_EXPLORATORY_LOADINGS; i <= LODE_HOLDOUT_ITEMS_LEFT_OUT; ++i)
    OK(lode_holdout_matrix(h, i, NULL, 0, &rows, &cols));
  OK(lode_holdout_text(h, LODE_HOLDOUT_NOTES, NULL, 0, &length));
  CHECK(length > 20);
  OK(lode_restricted_fit_from_holdout(h, &f));
  OK(lode_restricted_fit_value(f, LODE_RESTRICTED_FIT_N_OBS, &v));
  CHECK(v == ROWS / 2);
  OK(lode_restricted_fit_value(f, LODE_RESTRICTED_FIT_CFI, &v));
  CHECK(v > 0.95 && v <= 1.0);
  lode_restricted_fit_free(f);
  f = NULL;
  EXPECT(lode_holdout_matrix(h, 1820, m, 64, NULL, NULL), LODE_E_INVALID_ARGUMENT, "1820");
  EXPECT(lode_holdout_value(h, 1800, &v), LODE_E_INVALID_ARGUMENT, "1800");
  EXPECT(lode_holdout_text(h, 1800, NULL, 0, &length), LODE_E_INVALID_ARGUMENT, "1800");
  EXPECT(lode_restricted_fit_from_holdout(NULL, &f), LODE_E_INVALID_ARGUMENT, "'holdout' is NULL");
  EXPECT(lode_restricted_fit_from_holdout(h, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  lode_holdout_free(h);
  h = NULL;
  ho.share = 0.01;
  EXPECT(lode_holdout_compute(c, &fo, &ho, &h), LODE_E_INSUFFICIENT_DATA, "workable shares run from 0.018");
  ho.share = 0.5;
  ho.salient = 0.0;
  EXPECT(lode_holdout_compute(c, &fo, &ho, &h), LODE_E_INVALID_ARGUMENT, "salient");
  ho.salient = 0.4;
  EXPECT(lode_holdout_compute(cm, &fo, &ho, &h), LODE_E_INVALID_ARGUMENT, "needs raw data");
  EXPECT(lode_holdout_compute(c, &fo, &ho, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  EXPECT(lode_holdout_options_init(NULL, sizeof ho), LODE_E_INVALID_ARGUMENT, NULL);
  CHECK(h == NULL);
  lode_holdout_free(NULL);

  lode_correlation_free(c);
  lode_correlation_free(cm);
  lode_data_free(d);
  lode_data_free(dm);
}

int main(void) {
  test_restricted_fit();
  test_replication_and_holdout();
  return check_report("replication_test");
}
