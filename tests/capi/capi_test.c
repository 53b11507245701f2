/* The C ABI from C: every entry point of lode.h, its results and its error paths (NULL pointers,
 * wrong sizes and strides, unknown keys, option structs of an older and a newer size, non-finite
 * input, cancelling through a progress callback), one file per handle (capi_<handle>_test.c) run from
 * main below, with the helpers they share (capi_test.h). Compiled as strict C99 (-std=c99 -pedantic
 * -Werror), also under ASan+UBSan.
 * Numerical agreement with outside references is checked by the Python suite (numpy, R); the
 * numbers checked here are a published example (Higham 2002) and identities of the interface. */
#include "capi_test.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

void make_data(double* x) {
  int i, j;
  for (i = 0; i < N_ROWS; ++i) {
    double f1 = sin(0.37 * i) * 1.4, f2 = cos(0.91 * i + 0.3) * 1.4;
    for (j = 0; j < N_ITEMS; ++j) {
      double noise = sin(1.7 * i * (j + 1) + j) * 0.9;
      double v = 3.0 + (j < 3 ? f1 : f2) + noise;
      x[i * N_ITEMS + j] = floor(v + 0.5);
    }
  }
}

double max_abs_diff(const double* a, const double* b, size_t n) {
  double m = 0.0;
  size_t k;
  for (k = 0; k < n; ++k) {
    double d = fabs(a[k] - b[k]);
    if (d > m || d != d) m = d != d ? 1e300 : d;
  }
  return m;
}

void population_matrix(double* r) {
  const double l[6] = {0.8, 0.7, 0.6, 0.7, 0.6, 0.5};
  int i, j;
  for (i = 0; i < 6; ++i)
    for (j = 0; j < 6; ++j) r[i * 6 + j] = i == j ? 1.0 : ((i < 3) == (j < 3) ? l[i] * l[j] : 0.0);
}

lode_correlation* population_correlation(int64_t n_obs) {
  double r[36];
  lode_data* d = NULL;
  lode_correlation* c = NULL;
  population_matrix(r);
  OK(lode_data_from_correlation(r, 6, 6, 1, n_obs, &d));
  OK(lode_correlation_compute(d, NULL, &c));
  lode_data_free(d);
  return c;
}

/* the loadings behind population_matrix */
const double simple_loadings[12] = {0.8, 0, 0.7, 0, 0.6, 0, 0, 0.7, 0, 0.6, 0, 0.5};

void fitted_example_open(fitted_example* f) {
  double r[N_ITEMS * N_ITEMS];
  memset(f, 0, sizeof *f);
  make_data(f->x);
  f->x[5 * N_ITEMS + 2] = nan_value();
  OK(lode_data_from_raw(f->x, N_ROWS, N_ITEMS, N_ITEMS, 1, &f->data));
  OK(lode_correlation_compute(f->data, NULL, &f->corr));
  OK(lode_model_options_init(&f->fit, sizeof f->fit));
  OK(lode_rotation_options_init(&f->rotation, sizeof f->rotation));
  f->fit.factors = 2;
  f->fit.method = LODE_EXTRACTION_PAF;
  f->fit.rotation = &f->rotation;
  OK(lode_model_compute(f->corr, &f->fit, &f->model));
  OK(lode_data_from_raw(f->x, N_ROWS, 3, N_ITEMS, 1, &f->first_three));
  OK(lode_correlation_matrix(f->corr, LODE_CORRELATION_MATRIX, r, N_ITEMS * N_ITEMS, NULL, NULL));
  OK(lode_data_from_correlation(r, N_ITEMS, N_ITEMS, 1, N_ROWS, &f->matrix));
}

void fitted_example_close(fitted_example* f) {
  lode_model_free(f->model);
  lode_correlation_free(f->corr);
  lode_data_free(f->data);
  lode_data_free(f->first_three);
  lode_data_free(f->matrix);
}

int progress_calls = 0;
int count_progress(void* user, int64_t done, int64_t total) {
  ++progress_calls;
  CHECK(done >= 0 && done <= total);
  return user != NULL && *(const int*)user != 0; /* nonzero cancels */
}

void progress_log_init(progress_log* log, int64_t cancel_at) {
  memset(log, 0, sizeof *log);
  log->ordered = 1;
  log->cancel_at = cancel_at;
}

int log_progress(void* user, int64_t done, int64_t total) {
  progress_log* log = (progress_log*)user;
  if (log->calls == 0) {
    log->first_done = done;
    log->first_total = total;
  } else if (total != log->last_total || done < log->last_done) {
    log->ordered = 0;
  }
  if (done < 0 || done > total) log->ordered = 0;
  ++log->calls;
  log->last_done = done;
  log->last_total = total;
  return log->cancel_at >= 0 && done >= log->cancel_at;
}

int main(void) {
  test_version_and_status();
  test_data();
  test_matrix_input();
  test_correlation();
  test_polychoric();
  test_factorability();
  test_factor_count();
  test_rotation();
  test_fit();
  test_scores();
  test_reliability();
  test_comparison();
  test_fit_progress();
  test_item_flags();
  test_bootstrap();
  test_schmid_leiman();
  test_last_error_is_cleared();
  return check_report("capi_test");
}
