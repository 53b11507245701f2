/* The C ABI of the em rule (LODE_MISSING_EM): option defaults, a caller built before the EM fields
 * (its shorter struct still accepted), the EM keys, and refusals with their messages. The numbers
 * themselves are checked against numpy in tests/core/missing_em_test.cpp and
 * tests/python/test_missing_em.py. Strict C99, also run under ASan+UBSan. */
#include "capi_check.h"
#include "lode.h"

#include <math.h>
#include <stddef.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* CHECK with a description of what failed and the last error beside it. */
#define CHECK_THAT(cond, what)                                                             \
  do {                                                                                     \
    const int held_ = (cond) ? 1 : 0;                                                      \
    CHECK(held_);                                                                          \
    if (!held_) fprintf(stderr, "  that is: %s (last error: %s)\n", what, lode_error_message()); \
  } while (0)

int main(void) {
  enum { ROWS = 40, ITEMS = 4 };
  double x[ROWS * ITEMS];
  const double gap = strtod("nan", NULL);
  lode_data* d = NULL;
  lode_correlation* c = NULL;
  lode_correlation_options o;
  double v = 0.0, means[ITEMS], cov[ITEMS * ITEMS];
  int64_t rows = 0, cols = 0;
  int i, j;
  /* Deterministic correlated answers (a common part plus an item part), a gap in every fifth row. */
  for (i = 0; i < ROWS; ++i)
    for (j = 0; j < ITEMS; ++j) {
      /* the item part from a small linear congruential generator, so no item is a combination of others */
      const double common = sin(1.3 * i), own = (double)((unsigned)(i * 7919 + j * 104729 + 12345) * 2654435761u % 1000u) / 500.0 - 1.0;
      x[i * ITEMS + j] = common + 0.6 * own + j;
    }
  for (i = 0; i < ROWS; i += 5) x[i * ITEMS + 1 + (i / 5) % 3] = gap;
  CHECK_THAT(lode_data_from_raw(x, ROWS, ITEMS, ITEMS, 1, &d) == LODE_OK, "data");

  CHECK_THAT(lode_correlation_options_init(&o, sizeof o) == LODE_OK, "options init");
  CHECK_THAT(o.em_tolerance == 1e-10 && o.em_max_iterations == 1000, "EM defaults");
  o.missing = LODE_MISSING_EM;
  CHECK_THAT(lode_correlation_compute(d, &o, &c) == LODE_OK, "em correlation");
  CHECK_THAT(lode_correlation_value(c, LODE_CORRELATION_MISSING, &v) == LODE_OK && v == LODE_MISSING_EM, "missing key");
  CHECK_THAT(lode_correlation_value(c, LODE_CORRELATION_N_OBS, &v) == LODE_OK && v == ROWS, "n_obs is every row");
  CHECK_THAT(lode_correlation_value(c, LODE_CORRELATION_EM_CONVERGED, &v) == LODE_OK && v == 1.0, "converged");
  CHECK_THAT(lode_correlation_value(c, LODE_CORRELATION_EM_ITERATIONS, &v) == LODE_OK && v >= 2 && v <= 1000, "iterations");
  CHECK_THAT(lode_correlation_value(c, LODE_CORRELATION_EM_TOLERANCE, &v) == LODE_OK && v == 1e-10, "tolerance");
  CHECK_THAT(lode_correlation_value(c, LODE_CORRELATION_EM_MAX_ITERATIONS, &v) == LODE_OK && v == 1000, "cap");
  CHECK_THAT(lode_correlation_value(c, LODE_CORRELATION_EM_FINAL_CHANGE, &v) == LODE_OK && v <= 1e-10, "final change");
  CHECK_THAT(lode_correlation_matrix(c, LODE_CORRELATION_EM_MEANS, means, ITEMS, &rows, &cols) == LODE_OK && rows == ITEMS &&
            cols == 1,
        "means");
  CHECK_THAT(fabs(means[0] - 0.0) < 1.0 && fabs(means[3] - 3.0) < 1.0, "means near the offsets");
  CHECK_THAT(lode_correlation_matrix(c, LODE_CORRELATION_EM_COVARIANCE, cov, ITEMS * ITEMS, &rows, &cols) == LODE_OK &&
            rows == ITEMS && cols == ITEMS && cov[1] == cov[ITEMS],
        "covariance");
  lode_correlation_free(c);
  c = NULL;

  /* A caller compiled before the EM fields: its struct ends at progress_user; defaults apply. */
  CHECK_THAT(lode_correlation_options_init(&o, offsetof(lode_correlation_options, em_tolerance)) == LODE_OK, "old init");
  o.missing = LODE_MISSING_EM;
  CHECK_THAT(lode_correlation_compute(d, &o, &c) == LODE_OK, "old-size options");
  CHECK_THAT(lode_correlation_value(c, LODE_CORRELATION_EM_TOLERANCE, &v) == LODE_OK && v == 1e-10, "old-size default");
  lode_correlation_free(c);
  c = NULL;

  /* Pairwise: no EM keys. */
  lode_correlation_options_init(&o, sizeof o);
  CHECK_THAT(lode_correlation_compute(d, &o, &c) == LODE_OK, "pairwise");
  CHECK_THAT(lode_correlation_value(c, LODE_CORRELATION_EM_ITERATIONS, &v) == LODE_E_INVALID_ARGUMENT &&
            strstr(lode_error_message(), "only for correlations of raw data with the em rule") != NULL,
        "EM keys refused for pairwise");
  lode_correlation_free(c);
  c = NULL;

  o.missing = LODE_MISSING_EM;
  o.em_max_iterations = 0;
  CHECK_THAT(lode_correlation_compute(d, &o, &c) == LODE_E_INVALID_ARGUMENT &&
            strcmp(lode_error_message(), "em_max_iterations must be at least 1; it is 0") == 0,
        "bad cap");
  o.em_max_iterations = 1000;
  o.kind = LODE_COEFFICIENT_POLYCHORIC;
  CHECK_THAT(lode_correlation_compute(d, &o, &c) == LODE_E_INVALID_ARGUMENT && strstr(lode_error_message(), "Pearson correlations only"),
        "polychoric refused");
  CHECK_THAT(c == NULL, "no handle on failure");
  lode_data_free(d);
  return check_report("missing_em");
}
