/* The C ABI from C: lode_scores of a fitted model. */
#include "capi_test.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

void test_scores(void) {
  double v, buf[N_ROWS * 2], det[2], w[N_ITEMS * 2];
  char text[4096];
  size_t len = 0;
  int64_t rows, cols;
  fitted_example f;
  lode_correlation* cm = NULL;
  lode_model* mm = NULL;
  lode_scores_options so;
  lode_scores* s = NULL;
  fitted_example_open(&f);

  /* scores of the data the model was fitted to */
  EXPECT(lode_scores_options_init(NULL, sizeof so), LODE_E_INVALID_ARGUMENT, "'opts' is NULL");
  OK(lode_scores_options_init(&so, sizeof so));
  CHECK(so.method == LODE_ESTIMATOR_REGRESSION && so.missing == LODE_GAPS_FROM_ANSWERED && so.min_answered_share == 0.5);
  OK(lode_scores_compute(f.model, NULL, &so, &s));
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
  EXPECT_NULL_HANDLE(lode_scores, "NULL", LODE_SCORES_ROWS_TOTAL, LODE_SCORES_VALUES, buf, 10, LODE_SCORES_NOTES, text, 10);
  lode_scores_free(s);
  s = NULL;

  /* other methods, explicit data, the leave-missing rule, an older options struct */
  so.method = LODE_ESTIMATOR_BARTLETT;
  so.missing = LODE_GAPS_LEAVE_MISSING;
  OK(lode_scores_compute(f.model, f.data, &so, &s));
  OK(lode_scores_value(s, LODE_SCORES_ROWS_MISSING, &v));
  CHECK(v == 1.0);
  lode_scores_free(s);
  s = NULL;
  so.method = LODE_ESTIMATOR_CORRELATION_PRESERVING;
  so.struct_size = offsetof(lode_scores_options, missing); /* older: the rule defaults to from-answered */
  OK(lode_scores_compute(f.model, f.data, &so, &s));
  OK(lode_scores_value(s, LODE_SCORES_ROWS_MISSING, &v));
  CHECK(v == 0.0);
  lode_scores_free(s);
  s = NULL;
  OK(lode_scores_options_init(&so, sizeof so));
  so.method = 9;
  EXPECT(lode_scores_compute(f.model, NULL, &so, &s), LODE_E_INVALID_ARGUMENT, "unknown score method 9");
  so.method = LODE_ESTIMATOR_REGRESSION;
  so.missing = 4;
  EXPECT(lode_scores_compute(f.model, NULL, &so, &s), LODE_E_INVALID_ARGUMENT, "missing-item rule");
  so.missing = LODE_GAPS_FROM_ANSWERED;
  so.min_answered_share = 0.0;
  EXPECT(lode_scores_compute(f.model, NULL, &so, &s), LODE_E_INVALID_ARGUMENT, "min_answered_share");
  so.min_answered_share = 0.5;
  so.low_determinacy = 2.0;
  EXPECT(lode_scores_compute(f.model, NULL, &so, &s), LODE_E_INVALID_ARGUMENT, "low_determinacy");
  EXPECT(lode_scores_compute(NULL, NULL, NULL, &s), LODE_E_INVALID_ARGUMENT, "'model' is NULL");
  EXPECT(lode_scores_compute(f.model, NULL, NULL, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  EXPECT(lode_scores_compute(f.model, f.first_three, NULL, &s), LODE_E_INVALID_ARGUMENT, "the data have 3 items but the model has 6");
  {
    /* a model fitted to a matrix has no respondents to score */
    OK(lode_correlation_compute(f.matrix, NULL, &cm));
    OK(lode_model_compute(cm, &f.fit, &mm));
    EXPECT(lode_scores_compute(mm, NULL, NULL, &s), LODE_E_INVALID_ARGUMENT, "fitted to a matrix");
    EXPECT(lode_scores_compute(mm, f.matrix, NULL, &s), LODE_E_INVALID_ARGUMENT, "raw data");
    OK(lode_scores_compute(mm, f.data, NULL, &s));
    lode_scores_free(s);
    s = NULL;
  }
  lode_scores_free(NULL);
  lode_model_free(mm);
  lode_correlation_free(cm);
  fitted_example_close(&f);
}
