/* The C ABI from C: lode_rotation and the rotation criteria. */
#include "capi_test.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

/* The criteria by name, and their canonical names. */
static void check_criterion_names(void) {
  int m = -1;
  OK(lode_criterion_from_name("Oblimin", &m));
  CHECK(m == LODE_CRITERION_OBLIMIN);
  OK(lode_criterion_from_name("geomin", &m));
  CHECK(m == LODE_CRITERION_GEOMIN);
  EXPECT(lode_criterion_from_name("spin", &m), LODE_E_INVALID_ARGUMENT, "varimax");
  EXPECT(lode_criterion_from_name(NULL, &m), LODE_E_INVALID_ARGUMENT, "'name' is NULL");
  EXPECT(lode_criterion_from_name("varimax", NULL), LODE_E_INVALID_ARGUMENT, "'method' is NULL");
  CHECK(strcmp(lode_criterion_name(LODE_CRITERION_PROMAX), "promax") == 0);
  CHECK(lode_criterion_name(99) == NULL && lode_criterion_name(-1) == NULL);
}

/* Target rotation of `a` (the simple structure turned): a partial target (NaN = unspecified). */
static void check_target_rotation(const double* a) {
  const double* simple = simple_loadings;
  double out[12];
  int i;
  lode_rotation* r = NULL;
  lode_rotation_options o;
  double target[12];
  for (i = 0; i < 12; ++i) target[i] = simple[i] > 0 ? nan_value() : 0.0;
  OK(lode_rotation_options_init(&o, sizeof o));
  o.method = LODE_CRITERION_TARGET_ORTHOGONAL;
  o.target = target;
  o.target_rows = 6;
  o.target_cols = 2;
  o.target_row_stride = 2;
  o.target_col_stride = 1;
  OK(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r));
  OK(lode_rotation_matrix(r, LODE_ROTATION_PATTERN, out, 12, NULL, NULL));
  CHECK(max_abs_diff(out, simple, 12) < 1e-6);
  lode_rotation_free(r);
  r = NULL;
  o.target_rows = 3;
  EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "target");
  o.target_rows = 6;
  target[3] = inf_value();
  EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "infinite");
  o.target = NULL;
  EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "'target' is NULL");
}

void test_rotation(void) {
  /* unrotated two-factor loadings: the simple structure of population_matrix turned by 30 degrees */
  const double s = 0.5, co = 0.86602540378443865;
  const double* simple = simple_loadings;
  double a[12], a_cm[12], out[12], out2[12], phi[4], t[4], v;
  char name[32];
  int i;
  int64_t rows, cols;
  lode_rotation *r = NULL, *r2 = NULL;
  lode_rotation_options o;
  for (i = 0; i < 6; ++i) {
    a[i * 2] = simple[i * 2] * co - simple[i * 2 + 1] * s;
    a[i * 2 + 1] = simple[i * 2] * s + simple[i * 2 + 1] * co;
    a_cm[i] = a[i * 2];
    a_cm[6 + i] = a[i * 2 + 1];
  }

  check_criterion_names();

  EXPECT(lode_rotation_options_init(NULL, sizeof o), LODE_E_INVALID_ARGUMENT, "'opts' is NULL");
  OK(lode_rotation_options_init(&o, sizeof o));
  CHECK(o.method == LODE_CRITERION_VARIMAX && o.normalize == 1 && o.random_starts == -1 && o.target == NULL);
  OK(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r));
  OK(lode_rotation_compute(a_cm, 6, 2, 1, 6, &o, &r2)); /* column-major: the same */
  OK(lode_rotation_matrix(r, LODE_ROTATION_PATTERN, out, 12, &rows, &cols));
  OK(lode_rotation_matrix(r2, LODE_ROTATION_PATTERN, out2, 12, NULL, NULL));
  CHECK(rows == 6 && cols == 2);
  CHECK(max_abs_diff(out, out2, 12) < 1e-12);
  CHECK(max_abs_diff(out, simple, 12) < 1e-6); /* varimax finds the simple structure back */
  OK(lode_rotation_value(r, LODE_ROTATION_FINAL_CHANGE, &v));
  CHECK(v >= 0.0);
  OK(lode_rotation_value(r, LODE_ROTATION_TOLERANCE, &v));
  CHECK(v > 0.0 && v < 1e-3);
  OK(lode_rotation_value(r, LODE_ROTATION_MAX_ITERATIONS, &v));
  CHECK(v >= 1000.0);
  lode_rotation_free(r2);
  r2 = NULL;
  OK(lode_rotation_matrix(r, LODE_ROTATION_STRUCTURE, out2, 12, NULL, NULL));
  CHECK(max_abs_diff(out, out2, 12) < 1e-12);
  OK(lode_rotation_matrix(r, LODE_ROTATION_FACTOR_CORRELATIONS, phi, 4, NULL, NULL));
  CHECK(fabs(phi[0] - 1) < 1e-12 && fabs(phi[1]) < 1e-12);
  OK(lode_rotation_matrix(r, LODE_ROTATION_TRANSFORM, t, 4, NULL, NULL));
  CHECK(fabs(t[0] * t[0] + t[2] * t[2] - 1.0) < 1e-10);
  OK(lode_rotation_matrix(r, LODE_ROTATION_SS_PATTERN, out2, 2, &rows, &cols));
  CHECK(rows == 2 && cols == 1 && fabs(out2[0] - 1.49) < 1e-6);
  OK(lode_rotation_matrix(r, LODE_ROTATION_SS_STRUCTURE, out2, 2, NULL, NULL));
  OK(lode_rotation_matrix(r, LODE_ROTATION_START_CRITERIA, NULL, 0, &rows, &cols));
  CHECK(rows >= 1);
  OK(lode_rotation_value(r, LODE_ROTATION_CONVERGED, &v));
  OK(lode_rotation_value(r, LODE_ROTATION_OBLIQUE, &v));
  CHECK(v == 0.0);
  OK(lode_rotation_value(r, LODE_ROTATION_METHOD, &v));
  CHECK(v == LODE_CRITERION_VARIMAX);
  {
    static const int keys[] = {LODE_ROTATION_CRITERION, LODE_ROTATION_ITERATIONS, LODE_ROTATION_STARTS,
                               LODE_ROTATION_STARTS_CONVERGED, LODE_ROTATION_REACHED_BEST,
                               LODE_ROTATION_DISTINCT_SOLUTIONS};
    size_t k;
    for (k = 0; k < sizeof keys / sizeof keys[0]; ++k) OK(lode_rotation_value(r, keys[k], &v));
  }
  OK(lode_rotation_text(r, LODE_ROTATION_METHOD_NAME, name, sizeof name, NULL));
  CHECK(strcmp(name, "varimax") == 0);
  EXPECT(lode_rotation_value(r, LODE_ROTATION_PATTERN, &v), LODE_E_INVALID_ARGUMENT, "key 500");
  EXPECT(lode_rotation_matrix(r, LODE_ROTATION_CRITERION, out, 12, NULL, NULL), LODE_E_INVALID_ARGUMENT, "key 520");
  EXPECT(lode_rotation_text(r, LODE_ROTATION_CRITERION, name, 32, NULL), LODE_E_INVALID_ARGUMENT, "key 520");
  EXPECT_NULL_HANDLE(lode_rotation, "NULL", LODE_ROTATION_CRITERION, LODE_ROTATION_PATTERN, out, 12, LODE_ROTATION_METHOD_NAME, name, 32);
  lode_rotation_free(r);
  r = NULL;

  /* Kaiser's pairwise varimax converges on it (the convergence flag comes through) */
  o.method = LODE_CRITERION_VARIMAX_KAISER;
  OK(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r));
  OK(lode_rotation_value(r, LODE_ROTATION_CONVERGED, &v));
  CHECK(v == 1.0);
  OK(lode_rotation_matrix(r, LODE_ROTATION_PATTERN, out, 12, NULL, NULL));
  CHECK(max_abs_diff(out, simple, 12) < 1e-6);
  lode_rotation_free(r);
  r = NULL;

  /* oblique, with random starts; an older struct (only method and normalize) */
  o.method = LODE_CRITERION_GEOMIN;
  o.random_starts = 5;
  o.seed = 7;
  OK(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r));
  OK(lode_rotation_value(r, LODE_ROTATION_STARTS, &v));
  CHECK(v == 6.0);
  OK(lode_rotation_value(r, LODE_ROTATION_OBLIQUE, &v));
  CHECK(v == 1.0);
  lode_rotation_free(r);
  r = NULL;
  o.struct_size = offsetof(lode_rotation_options, gamma);
  o.method = LODE_CRITERION_QUARTIMAX;
  o.tolerance = -1.0; /* beyond the old size: not read */
  OK(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r));
  lode_rotation_free(r);
  r = NULL;

  check_target_rotation(a);

  /* bad input and options */
  OK(lode_rotation_options_init(&o, sizeof o));
  EXPECT(lode_rotation_compute(NULL, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "'values' is NULL");
  EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  EXPECT(lode_rotation_compute(a, 6, 1, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "factor");
  EXPECT(lode_rotation_compute(a, 6, 2, 0, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "strides");
  a[3] = nan_value();
  EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, NULL);
  a[3] = inf_value();
  EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, NULL);
  a[3] = 0.5;
  o.method = 99;
  EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "unknown rotation method 99");
  o.method = LODE_CRITERION_OBLIMIN;
  o.gamma = nan_value();
  EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "gamma");
  o.gamma = 0.0;
  o.random_starts = -5;
  EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "random_starts");
  o.random_starts = 0;
  o.max_iterations = 0;
  EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "max_iterations");
  o.max_iterations = 100;
  o.tolerance = 0.0;
  EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "tolerance");
  o.tolerance = 1e-8;
  o.threads = -1;
  EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "threads");
  o.struct_size = 1;
  EXPECT(lode_rotation_compute(a, 6, 2, 2, 1, &o, &r), LODE_E_INVALID_ARGUMENT, "struct_size is 1");
  CHECK(r == NULL);
  lode_rotation_free(NULL);
}
