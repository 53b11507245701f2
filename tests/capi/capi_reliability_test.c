/* The C ABI from C: lode_reliability (alpha, omega of a model's scales, omega of a single scale). */
#include "capi_test.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* Alpha of the first three items, and what an alpha result refuses. */
static void check_alpha(const fitted_example* f) {
  double v, buf[N_ROWS * 2];
  char text[4096];
  size_t len = 0;
  int64_t rows, cols;
  lode_reliability* rel = NULL;
  /* alpha of the first three items: standardised alpha is the Spearman-Brown form of the mean
   * inter-item correlation, k r / (1 + (k - 1) r) (Cronbach 1951; published identity) */
  OK(lode_reliability_compute_alpha(f->first_three, &rel));
  OK(lode_reliability_value(rel, LODE_RELIABILITY_ALPHA, &v));
  CHECK(v > 0.0 && v < 1.0);
  {
    double rbar, std_alpha;
    OK(lode_reliability_value(rel, LODE_RELIABILITY_ALPHA_MEAN_INTER_ITEM, &rbar));
    OK(lode_reliability_value(rel, LODE_RELIABILITY_ALPHA_STANDARDIZED, &std_alpha));
    CHECK(fabs(std_alpha - 3 * rbar / (1 + 2 * rbar)) < 1e-12);
  }
  OK(lode_reliability_value(rel, LODE_RELIABILITY_ALPHA_ROWS_USED, &v));
  CHECK(v == N_ROWS - 1);
  OK(lode_reliability_value(rel, LODE_RELIABILITY_ALPHA_ROWS_TOTAL, &v));
  OK(lode_reliability_value(rel, LODE_RELIABILITY_ALPHA_ITEMS, &v));
  CHECK(v == 3.0);
  {
    static const int keys[] = {LODE_RELIABILITY_ALPHA_IF_DELETED, LODE_RELIABILITY_ALPHA_STANDARDIZED_IF_DELETED, LODE_RELIABILITY_ALPHA_ITEM_TOTAL,
                               LODE_RELIABILITY_ALPHA_ITEM_MEANS, LODE_RELIABILITY_ALPHA_ITEM_SDS};
    size_t k;
    for (k = 0; k < sizeof keys / sizeof keys[0]; ++k) {
      OK(lode_reliability_matrix(rel, keys[k], buf, 3, &rows, &cols));
      CHECK(rows == 3 && cols == 1);
    }
  }
  OK(lode_reliability_text(rel, LODE_RELIABILITY_NOTES, NULL, 0, &len));
  EXPECT(lode_reliability_matrix(rel, LODE_RELIABILITY_OMEGA, buf, 3, NULL, NULL), LODE_E_INVALID_ARGUMENT, "omega");
  EXPECT(lode_reliability_value(rel, LODE_RELIABILITY_OMEGA, &v), LODE_E_INVALID_ARGUMENT, "key 740");
  EXPECT(lode_reliability_text(rel, LODE_RELIABILITY_ALPHA, text, 10, NULL), LODE_E_INVALID_ARGUMENT, "key 720");
  EXPECT_NULL_HANDLE(lode_reliability, "NULL", LODE_RELIABILITY_ALPHA, LODE_RELIABILITY_OMEGA, buf, 3, LODE_RELIABILITY_NOTES, text, 10);
  lode_reliability_free(rel);
  rel = NULL;
  EXPECT(lode_reliability_compute_alpha(f->matrix, &rel), LODE_E_INVALID_ARGUMENT, "raw data");
  EXPECT(lode_reliability_compute_alpha(NULL, &rel), LODE_E_INVALID_ARGUMENT, "'data' is NULL");
  EXPECT(lode_reliability_compute_alpha(f->first_three, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
}

/* Omega of a model's scales, by largest loading and by a given assignment, and its error paths. */
static void check_omega(const fitted_example* f) {
  double v, buf[N_ROWS * 2], det[2];
  char text[4096];
  int64_t rows, cols, assignment[N_ITEMS] = {0, 0, 0, 1, 1, 1};
  int i;
  lode_reliability* rel = NULL;
  /* omega: by largest loading, and by a given assignment */
  OK(lode_reliability_compute_omega(f->model, NULL, 0, &rel));
  OK(lode_reliability_matrix(rel, LODE_RELIABILITY_OMEGA, det, 2, &rows, &cols));
  CHECK(rows == 2 && cols == 1 && det[0] > 0.0 && det[0] < 1.0);
  OK(lode_reliability_matrix(rel, LODE_RELIABILITY_OMEGA_ASSIGNMENT, buf, N_ITEMS, &rows, NULL));
  CHECK(rows == N_ITEMS);
  OK(lode_reliability_matrix(rel, LODE_RELIABILITY_OMEGA_SUM_LOADINGS, det, 2, NULL, NULL));
  {
    /* the factor's share is (sum of loadings)^2 over the model-implied variance of the sum (McDonald 1999) */
    double share[2], var[2];
    OK(lode_reliability_matrix(rel, LODE_RELIABILITY_OMEGA_FACTOR_SHARE, share, 2, &rows, &cols));
    CHECK(rows == 2 && cols == 1);
    OK(lode_reliability_matrix(rel, LODE_RELIABILITY_OMEGA_SCALE_VARIANCE, var, 2, &rows, &cols));
    CHECK(rows == 2 && cols == 1);
    for (i = 0; i < 2; ++i) CHECK(fabs(share[i] * var[i] - det[i] * det[i]) < 1e-12 * var[i]);
  }
  OK(lode_reliability_matrix(rel, LODE_RELIABILITY_OMEGA_SUM_UNIQUENESSES, det, 2, NULL, NULL));
  OK(lode_reliability_text(rel, LODE_RELIABILITY_NOTES, text, sizeof text, NULL));
  EXPECT(lode_reliability_value(rel, LODE_RELIABILITY_ALPHA, &v), LODE_E_INVALID_ARGUMENT, "alpha");
  EXPECT(lode_reliability_matrix(rel, LODE_RELIABILITY_ALPHA_IF_DELETED, buf, 6, NULL, NULL), LODE_E_INVALID_ARGUMENT, "alpha");
  lode_reliability_free(rel);
  rel = NULL;
  OK(lode_reliability_compute_omega(f->model, assignment, N_ITEMS, &rel));
  OK(lode_reliability_matrix(rel, LODE_RELIABILITY_OMEGA_ASSIGNMENT, buf, N_ITEMS, NULL, NULL));
  for (i = 0; i < N_ITEMS; ++i) CHECK(buf[i] == (double)assignment[i]);
  lode_reliability_free(rel);
  rel = NULL;
  assignment[2] = 5;
  EXPECT(lode_reliability_compute_omega(f->model, assignment, N_ITEMS, &rel), LODE_E_INVALID_ARGUMENT, "column 3 is assigned to factor 5");
  EXPECT(lode_reliability_compute_omega(f->model, assignment, 4, &rel), LODE_E_INVALID_ARGUMENT, "4 assignments were given for 6 items");
  EXPECT(lode_reliability_compute_omega(f->model, NULL, 3, &rel), LODE_E_INVALID_ARGUMENT, "'assignment' is NULL");
  EXPECT(lode_reliability_compute_omega(NULL, NULL, 0, &rel), LODE_E_INVALID_ARGUMENT, "'model' is NULL");
  EXPECT(lode_reliability_compute_omega(f->model, NULL, 0, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  lode_reliability_free(NULL);
}

/* omega with reverse-keyed items (lode_reliability_compute_keyed_omega): a reverse-scored item enters
 * with its row of loadings reversed. Checked against McDonald's (1999) formula written out here,
 * omega total = 1' (D L Phi L' D)_SS 1 / (that + sum over S of psi), over the model's loadings,
 * factor correlations and uniquenesses read through the C ABI (sums of under 200 products of numbers
 * below 1 in size: rounding far below 1e-12). */
static void check_keyed_omega(const fitted_example* f) {
  lode_reliability* rel = NULL;
  int64_t rows, cols, assignment[N_ITEMS] = {0, 0, 0, 1, 1, 1};
  int i;
  {
    lode_reliability_options qo;
    int32_t rev[N_ITEMS] = {1, 0, 0, 0, 0, 0};
    double L[N_ITEMS * 2], phi[4], u[N_ITEMS], om[2], plain[2], flags[N_ITEMS];
    int64_t fac, j, k, a, b;
    OK(lode_model_matrix(f->model, LODE_MODEL_LOADINGS, L, N_ITEMS * 2, NULL, NULL));
    OK(lode_model_matrix(f->model, LODE_MODEL_FACTOR_CORRELATIONS, phi, 4, NULL, NULL));
    OK(lode_model_matrix(f->model, LODE_MODEL_UNIQUENESSES, u, N_ITEMS, NULL, NULL));
    EXPECT(lode_reliability_options_init(NULL, sizeof qo), LODE_E_INVALID_ARGUMENT, "'opts' is NULL");
    OK(lode_reliability_options_init(&qo, sizeof qo));
    CHECK(qo.keying == LODE_KEYING_AS_SCORED && qo.assignment == NULL && qo.reverse == NULL && qo.reverse_count == 0);
    qo.assignment = assignment;
    qo.assignment_count = N_ITEMS;
    OK(lode_reliability_compute_keyed_omega(f->model, &qo, &rel)); /* nothing reversed: lode_reliability_compute_omega's figures */
    OK(lode_reliability_matrix(rel, LODE_RELIABILITY_OMEGA, plain, 2, NULL, NULL));
    OK(lode_reliability_matrix(rel, LODE_RELIABILITY_REVERSED, flags, N_ITEMS, &rows, &cols));
    CHECK(rows == N_ITEMS && cols == 1);
    for (i = 0; i < N_ITEMS; ++i) CHECK(flags[i] == 0.0);
    lode_reliability_free(rel);
    rel = NULL;
    qo.reverse = rev;
    qo.reverse_count = N_ITEMS;
    OK(lode_reliability_compute_keyed_omega(f->model, &qo, &rel));
    OK(lode_reliability_matrix(rel, LODE_RELIABILITY_OMEGA, om, 2, NULL, NULL));
    OK(lode_reliability_matrix(rel, LODE_RELIABILITY_REVERSED, flags, N_ITEMS, NULL, NULL));
    CHECK(flags[0] == 1.0 && flags[1] == 0.0);
    lode_reliability_free(rel);
    rel = NULL;
    for (fac = 0; fac < 2; ++fac) {
      double common = 0.0, psi = 0.0;
      for (j = 0; j < N_ITEMS; ++j) {
        if (assignment[j] != fac) continue;
        psi += u[j];
        for (k = 0; k < N_ITEMS; ++k) {
          if (assignment[k] != fac) continue;
          for (a = 0; a < 2; ++a)
            for (b = 0; b < 2; ++b)
              common += (rev[j] ? -1.0 : 1.0) * L[j * 2 + a] * phi[a * 2 + b] * L[k * 2 + b] * (rev[k] ? -1.0 : 1.0);
        }
      }
      CHECK(fabs(om[fac] - common / (common + psi)) < 1e-12);
    }
    CHECK(fabs(om[0] - plain[0]) > 1e-3 && om[1] == plain[1]); /* only the scale holding item 1 changes */
    /* the rule: items loading negatively on their scale's factor */
    qo.reverse = NULL;
    qo.reverse_count = 0;
    qo.keying = LODE_KEYING_REVERSE_NEGATIVE;
    OK(lode_reliability_compute_keyed_omega(f->model, &qo, &rel));
    OK(lode_reliability_matrix(rel, LODE_RELIABILITY_REVERSED, flags, N_ITEMS, NULL, NULL));
    for (j = 0; j < N_ITEMS; ++j) CHECK(flags[j] == (L[j * 2 + assignment[j]] < 0.0 ? 1.0 : 0.0));
    lode_reliability_free(rel);
    rel = NULL;
    /* an older struct without the keying field: as scored */
    qo.struct_size = offsetof(lode_reliability_options, keying);
    OK(lode_reliability_compute_keyed_omega(f->model, &qo, &rel));
    OK(lode_reliability_matrix(rel, LODE_RELIABILITY_OMEGA, om, 2, NULL, NULL));
    CHECK(om[0] == plain[0] && om[1] == plain[1]);
    lode_reliability_free(rel);
    rel = NULL;
    OK(lode_reliability_options_init(&qo, sizeof qo));
    qo.keying = 7;
    EXPECT(lode_reliability_compute_keyed_omega(f->model, &qo, &rel), LODE_E_INVALID_ARGUMENT, "unknown keying 7");
    qo.keying = LODE_KEYING_AS_SCORED;
    qo.reverse = rev;
    qo.reverse_count = 3;
    EXPECT(lode_reliability_compute_keyed_omega(f->model, &qo, &rel), LODE_E_INVALID_ARGUMENT,
           "3 reverse-keyed flags were given for 6 items");
    qo.reverse = NULL;
    EXPECT(lode_reliability_compute_keyed_omega(f->model, &qo, &rel), LODE_E_INVALID_ARGUMENT, "'reverse' is NULL");
    qo.reverse_count = 0;
    qo.assignment_count = 2;
    EXPECT(lode_reliability_compute_keyed_omega(f->model, &qo, &rel), LODE_E_INVALID_ARGUMENT, "'assignment' is NULL");
    qo.struct_size = 0;
    EXPECT(lode_reliability_compute_keyed_omega(f->model, &qo, &rel), LODE_E_INVALID_ARGUMENT, "struct_size");
    EXPECT(lode_reliability_compute_keyed_omega(NULL, NULL, &rel), LODE_E_INVALID_ARGUMENT, "'model' is NULL");
    EXPECT(lode_reliability_compute_keyed_omega(f->model, NULL, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  }
}

/* omega of a single scale from a one-factor fit of its items' correlations: the stored loadings
 * and uniquenesses reproduce McDonald's (1999) formula (sum l)^2 / ((sum l)^2 + sum psi) */
static void check_scale_omega(const fitted_example* f) {
  double v, buf[N_ROWS * 2];
  size_t len = 0;
  int64_t rows, cols;
  lode_reliability* rel = NULL;
  {
    lode_correlation* c3 = NULL;
    lode_model_options f1;
    double lam[3], psi[3], om, sl;
    OK(lode_correlation_compute(f->first_three, NULL, &c3));
    OK(lode_reliability_compute_scale_omega(c3, NULL, &rel));
    OK(lode_reliability_matrix(rel, LODE_RELIABILITY_OMEGA, &om, 1, &rows, &cols));
    CHECK(rows == 1 && cols == 1 && om > 0.0 && om < 1.0);
    OK(lode_reliability_matrix(rel, LODE_RELIABILITY_OMEGA_LOADINGS, lam, 3, &rows, &cols));
    CHECK(rows == 3 && cols == 1);
    OK(lode_reliability_matrix(rel, LODE_RELIABILITY_OMEGA_UNIQUENESSES, psi, 3, NULL, NULL));
    sl = lam[0] + lam[1] + lam[2];
    CHECK(fabs(om - sl * sl / (sl * sl + psi[0] + psi[1] + psi[2])) < 1e-12);
    OK(lode_reliability_matrix(rel, LODE_RELIABILITY_OMEGA_FACTOR_SHARE, &sl, 1, NULL, NULL));
    CHECK(sl == om); /* one factor: omega total and the factor's share agree */
    OK(lode_reliability_matrix(rel, LODE_RELIABILITY_OMEGA_ASSIGNMENT, buf, 3, &rows, NULL));
    CHECK(rows == 3 && buf[0] == 0.0 && buf[2] == 0.0);
    OK(lode_reliability_value(rel, LODE_RELIABILITY_OMEGA_CONVERGED, &v));
    CHECK(v == 1.0);
    OK(lode_reliability_text(rel, LODE_RELIABILITY_NOTES, NULL, 0, &len));
    EXPECT(lode_reliability_value(rel, LODE_RELIABILITY_ALPHA, &v), LODE_E_INVALID_ARGUMENT, "alpha");
    EXPECT(lode_reliability_matrix(rel, LODE_RELIABILITY_OMEGA_LOADINGS, lam, 2, NULL, NULL), LODE_E_BUFFER_TOO_SMALL, NULL);
    lode_reliability_free(rel);
    rel = NULL;
    OK(lode_model_options_init(&f1, sizeof f1));
    f1.method = LODE_EXTRACTION_PAF;
    OK(lode_reliability_compute_scale_omega(c3, &f1, &rel));
    OK(lode_reliability_matrix(rel, LODE_RELIABILITY_OMEGA, &om, 1, NULL, NULL));
    CHECK(om > 0.0 && om < 1.0);
    lode_reliability_free(rel);
    rel = NULL;
    f1.method = 9;
    EXPECT(lode_reliability_compute_scale_omega(c3, &f1, &rel), LODE_E_INVALID_ARGUMENT, "unknown extraction method 9");
    f1.method = LODE_EXTRACTION_ML;
    f1.tolerance = -1.0;
    EXPECT(lode_reliability_compute_scale_omega(c3, &f1, &rel), LODE_E_INVALID_ARGUMENT, "tolerance");
    f1.tolerance = 1e-9;
    f1.max_iterations = 0;
    EXPECT(lode_reliability_compute_scale_omega(c3, &f1, &rel), LODE_E_INVALID_ARGUMENT, "max_iterations");
    f1.max_iterations = 1000;
    f1.min_uniqueness = 1.0;
    EXPECT(lode_reliability_compute_scale_omega(c3, &f1, &rel), LODE_E_INVALID_ARGUMENT, "min_uniqueness");
    f1.struct_size = 1;
    EXPECT(lode_reliability_compute_scale_omega(c3, &f1, &rel), LODE_E_INVALID_ARGUMENT, "struct_size");
    EXPECT(lode_reliability_compute_scale_omega(NULL, NULL, &rel), LODE_E_INVALID_ARGUMENT, "'corr' is NULL");
    EXPECT(lode_reliability_compute_scale_omega(c3, NULL, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
    CHECK(rel == NULL);
    lode_correlation_free(c3);
  }
}

void test_reliability(void) {
  double v, buf[N_ROWS * 2];
  fitted_example f;
  lode_reliability* rel = NULL;
  fitted_example_open(&f);
  check_alpha(&f);
  check_omega(&f);
  check_keyed_omega(&f);
  check_scale_omega(&f);
  /* a model's omega has no single-scale loadings; an alpha result has no convergence */
  OK(lode_reliability_compute_omega(f.model, NULL, 0, &rel));
  EXPECT(lode_reliability_matrix(rel, LODE_RELIABILITY_OMEGA_LOADINGS, buf, 6, NULL, NULL), LODE_E_INVALID_ARGUMENT, "single-scale");
  OK(lode_reliability_value(rel, LODE_RELIABILITY_OMEGA_CONVERGED, &v));
  CHECK(v == 1.0);
  lode_reliability_free(rel);
  rel = NULL;
  OK(lode_reliability_compute_alpha(f.first_three, &rel));
  EXPECT(lode_reliability_value(rel, LODE_RELIABILITY_OMEGA_CONVERGED, &v), LODE_E_INVALID_ARGUMENT, "omega");
  lode_reliability_free(rel);
  rel = NULL;
  fitted_example_close(&f);
}
