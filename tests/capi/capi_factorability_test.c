/* The C ABI from C: lode_factorability. */
#include "capi_test.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

void test_factorability(void) {
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
  EXPECT_NULL_HANDLE(lode_factorability, "'f' is NULL", LODE_FACTORABILITY_KMO, LODE_FACTORABILITY_MSA, msa, 6, LODE_FACTORABILITY_NOTES, label, 64);
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
