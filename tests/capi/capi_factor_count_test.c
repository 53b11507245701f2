/* The C ABI from C: lode_factor_count. */
#include "capi_test.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

void test_factor_count(void) {
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
  EXPECT_NULL_HANDLE(lode_factor_count, "NULL", LODE_FACTOR_COUNT_SUGGESTED, LODE_FACTOR_COUNT_MAP_SQUARED, col, 6, LODE_FACTOR_COUNT_REASON, text, 8);
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
