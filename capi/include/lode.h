/*
 * lode.h - the stable C interface of Lode (liblode), exploratory factor analysis.
 *
 * One header, usable from C99 and C++. Every exported name starts with `lode_` (types, functions)
 * or `LODE_` (macros, constants). The ABI major version is in the shared object's name
 * (liblode.so.2); within a major version the ABI only grows. DEVELOPERS.md states the rules.
 *
 * Conventions, the same for every function:
 *
 * - Status. Every function that can fail returns an `int` status: LODE_OK (0) or one of the
 *   LODE_E_* codes below. The text of the most recent failure on the calling thread, naming the
 *   problem in the analyst's terms (which item, which value, how many rows survive), is returned
 *   by lode_error_message(). No C++ exception ever leaves the library.
 *
 * - Handles. Results live in opaque handles (lode_data, lode_correlation, ...) created by one
 *   function and released by its `_free` partner; `_free(NULL)` does nothing. A handle is
 *   immutable once created, except where a function says it changes one; any number of threads may
 *   read the same handle at once, and independent handles may be used from any threads. The
 *   library keeps no global mutable state.
 *
 * - Options. Option structs begin with `size_t struct_size` and are filled with their defaults by
 *   `lode_*_options_init(&opts, sizeof opts)` before the caller changes fields. The library reads
 *   only the fields that lie within `struct_size`, so a program built against an older header (a
 *   smaller struct) keeps working: the fields it does not know take their defaults. Passing NULL
 *   for an options pointer means "all defaults".
 *
 * - Input matrices are given as (values, rows, cols, row_stride, col_stride), strides counted in
 *   doubles: element (i, j) is values[i * row_stride + j * col_stride]. A row-major block (a
 *   spreadsheet range) has row_stride = cols, col_stride = 1; a column-major one (Fortran, numpy
 *   order='F', R) has row_stride = 1, col_stride = rows. Strides must be positive. The caller's
 *   memory is read during the call only and never kept. NaN marks a missing value; infinities are
 *   errors.
 *
 * - Outputs go into buffers the caller owns. Matrix getters write row-major and report the shape
 *   through `rows`/`cols` (either may be NULL); with `out == NULL` and `capacity == 0` they only
 *   report the shape (a size query). A buffer smaller than rows * cols gives
 *   LODE_E_BUFFER_TOO_SMALL and writes nothing. Text getters write UTF-8 with a terminating NUL,
 *   report the length without the NUL through `length`, and follow the same size-query rule
 *   (capacity must be at least length + 1). Nothing the library returns must be freed by the
 *   caller except through a lode_*_free function.
 *
 * - Results are read through keys: lode_correlation_matrix(c, LODE_CORRELATION_MATRIX, ...),
 *   lode_correlation_value(c, LODE_CORRELATION_N_OBS, &x). Each kind of handle has its own key
 *   range, so a key given to the wrong kind of handle is reported as such. New results are added
 *   as new keys, never by changing an existing one.
 */
#ifndef LODE_H
#define LODE_H

#include <stddef.h>
#include <stdint.h>

/* Export macro: the library is built with hidden visibility and exports exactly these. */
#if defined(_WIN32) || defined(__CYGWIN__)
#  if defined(LODE_BUILDING_LIBRARY)
#    define LODE_API __declspec(dllexport)
#  else
#    define LODE_API __declspec(dllimport)
#  endif
#elif defined(__GNUC__) && __GNUC__ >= 4
#  define LODE_API __attribute__((visibility("default")))
#else
#  define LODE_API
#endif

#ifdef __cplusplus
extern "C" {
#endif

/* ABI version of this header. The major version is the shared object's SONAME suffix
 * (liblode.so.LODE_ABI_VERSION_MAJOR); the minor version counts compatible additions. */
#define LODE_ABI_VERSION_MAJOR 2
#define LODE_ABI_VERSION_MINOR 0

/* ------------------------------------------------------------------------------------------- */
/* Status codes, version, errors                                                                */
/* ------------------------------------------------------------------------------------------- */

enum lode_status {
  LODE_OK = 0,
  LODE_E_INVALID_ARGUMENT = 1,      /* NULL pointer, bad size or stride, unknown key, bad option */
  LODE_E_INSUFFICIENT_DATA = 2,     /* too few rows or items, a constant item, an empty pair */
  LODE_E_NOT_POSITIVE_DEFINITE = 3, /* a matrix that must be positive definite is not */
  LODE_E_TOO_MANY_FACTORS = 4,      /* more factors than the data can identify */
  LODE_E_NOT_CONVERGED = 5,         /* only where the caller asked for strictness */
  LODE_E_CANCELLED = 6,             /* a progress callback returned nonzero */
  LODE_E_INTERNAL = 7,              /* a bug in Lode; the message says where */
  LODE_E_NOMEM = 8,                 /* memory ran out */
  LODE_E_BUFFER_TOO_SMALL = 9,      /* an output buffer is smaller than the result */
  LODE_E_UNSUPPORTED = 10           /* options from a newer header set fields this library lacks */
};

/* What lode_version() returns. The library owns it; it lives as long as the library is loaded.
 * Fields may be appended in later minor versions (the caller never allocates this struct). */
typedef struct lode_version_info {
  int major, minor, patch; /* the library's release version */
  int abi_major;           /* the ABI major version (SONAME) the library implements */
  int abi_minor;           /* the ABI minor version: compatible additions */
  const char* string;      /* the release version as text, e.g. "0.1.0" */
} lode_version_info;

/* The library's release and ABI versions. Compare abi_major with LODE_ABI_VERSION_MAJOR and
 * abi_minor >= LODE_ABI_VERSION_MINOR to check that the loaded library offers this header. */
LODE_API const lode_version_info* lode_version(void);

/* The name of a status code, e.g. "invalid argument"; "unknown status" for an unknown code. */
LODE_API const char* lode_status_name(int status);

/* The message of the most recent call on this thread that returned a status: "" after LODE_OK,
 * else the reason of the failure. The text stays valid until the next lode_ call on this thread. */
LODE_API const char* lode_error_message(void);

/* ------------------------------------------------------------------------------------------- */
/* Progress and cancellation of long calls                                                       */
/* ------------------------------------------------------------------------------------------- */

/* Called from the thread that made the call, about every 50 ms and once at the end, with the units
 * of work done and their total. Return 0 to go on, nonzero to cancel: the call then returns
 * LODE_E_CANCELLED and creates nothing. Must not call back into the same handle. */
typedef int (*lode_progress_fn)(void* user, int64_t done, int64_t total);

/* ------------------------------------------------------------------------------------------- */
/* Data: raw responses, or a correlation or covariance matrix computed elsewhere                */
/* ------------------------------------------------------------------------------------------- */

typedef struct lode_data lode_data;

/* Raw data: rows are respondents, columns are items, NaN is a missing answer. The values are
 * copied; checks on content (constant items, too few answers) happen when correlations are
 * computed, where the options (listwise or pairwise) are known. Infinite values are rejected here,
 * naming the item and the row. */
LODE_API int lode_data_from_raw(const double* values, int64_t rows, int64_t cols, int64_t row_stride,
                                int64_t col_stride, lode_data** out);

/* A correlation matrix (items x items: symmetric, unit diagonal, entries in [-1, 1], no missing
 * values) with the number of observations behind it (0 = unknown; tests and fit indices that need
 * it then refuse). */
LODE_API int lode_data_from_correlation(const double* values, int64_t items, int64_t row_stride, int64_t col_stride,
                                        int64_t n_obs, lode_data** out);

/* A covariance matrix (positive variances), turned into correlations; n_obs as above. */
LODE_API int lode_data_from_covariance(const double* values, int64_t items, int64_t row_stride, int64_t col_stride,
                                       int64_t n_obs, lode_data** out);

/* Names the items (UTF-8, copied) for messages: `count` must equal the number of items; a NULL or
 * empty name leaves that item as "column j". `names == NULL` with count 0 removes all names.
 * Changes the handle: do not call it while another thread uses the same handle. Correlations
 * already computed keep the names they were computed with. */
LODE_API int lode_data_set_item_names(lode_data* data, const char* const* names, int64_t count);

/* The shape of the data: respondents (rows; for a matrix, its n_obs) and items. Either may be NULL. */
LODE_API int lode_data_shape(const lode_data* data, int64_t* rows, int64_t* items);

LODE_API void lode_data_free(lode_data* data);

/* ------------------------------------------------------------------------------------------- */
/* Correlations                                                                                  */
/* ------------------------------------------------------------------------------------------- */

enum lode_coefficient {
  LODE_COEFFICIENT_PEARSON = 0,
  LODE_COEFFICIENT_SPEARMAN = 1,
  LODE_COEFFICIENT_POLYCHORIC = 2 /* ordinal items (Olsson 1979, two-step); tetrachoric for binary items */
};
/* LODE_MISSING_EM: maximum likelihood means and covariances under missing at random by the EM
 * algorithm (Dempster, Laird & Rubin 1977), Pearson only, raw data only; n_obs is every row with at
 * least one answer. */
enum lode_missing { LODE_MISSING_PAIRWISE = 0, LODE_MISSING_LISTWISE = 1, LODE_MISSING_EM = 2 };
/* Polychoric: what to do with empty cells of a pair's table (adding zero_cell_add to them). */
enum lode_zero_cells {
  LODE_ZERO_CELLS_NONE = 0,
  LODE_ZERO_CELLS_AT_BOUND = 1, /* only where the uncorrected estimate runs to |rho| = 1 (default) */
  LODE_ZERO_CELLS_ALWAYS = 2
};

typedef struct lode_correlation_options {
  size_t struct_size;            /* set by lode_correlation_options_init */
  int kind;                      /* enum lode_coefficient; default LODE_COEFFICIENT_PEARSON */
  int missing;                   /* enum lode_missing; default LODE_MISSING_PAIRWISE */
  int smooth;                    /* nonzero: replace a matrix that is not positive definite by the
                                    nearest correlation matrix (Higham 2002); default 0 (flag it) */
  double min_eigenvalue;         /* the smallest eigenvalue smoothing allows; default 1e-6 */
  int64_t min_pair_observations; /* fewer observations behind any correlation is an error; default 3 */
  int threads;                   /* polychoric pairs, em rows in parallel; 0 (default) = all cores */
  int max_categories;            /* polychoric: an item with more distinct codes is refused; default 10 */
  int zero_cells;                /* polychoric: enum lode_zero_cells; default LODE_ZERO_CELLS_AT_BOUND */
  double zero_cell_add;          /* polychoric: added to empty cells; default 0.5 */
  lode_progress_fn progress;     /* polychoric: pairs done / all pairs; em: iterations done / cap; optional */
  void* progress_user;           /* passed to progress */
  /* appended after 1.3 (the em rule) */
  double em_tolerance;           /* em: stop when no mean or covariance of the standardised items changes
                                    by more than this; default 1e-10 */
  int em_max_iterations;         /* em: iteration cap; default 1000 (not converging is reported) */
} lode_correlation_options;

/* Fills `opts` with the defaults; pass sizeof(*opts). */
LODE_API int lode_correlation_options_init(lode_correlation_options* opts, size_t struct_size);

typedef struct lode_correlation lode_correlation;

/* The correlation matrix of `data` (for matrix input: the matrix as given, checked, and smoothed
 * on request). The result keeps what it needs of `data`; `data` may be freed at once. */
LODE_API int lode_correlation_compute(const lode_data* data, const lode_correlation_options* opts, lode_correlation** out);

LODE_API void lode_correlation_free(lode_correlation* corr);

/* Keys of a lode_correlation. Matrices are items x items, vectors items x 1. */
enum lode_correlation_key {
  /* matrices: lode_correlation_matrix */
  LODE_CORRELATION_MATRIX = 100,           /* the correlation matrix (smoothed when smoothing applied) */
  LODE_CORRELATION_PAIR_COUNTS = 101,      /* observations behind each correlation */
  LODE_CORRELATION_EIGENVALUES = 102,      /* eigenvalues, largest first (items x 1) */
  LODE_CORRELATION_REDUCED_EIGENVALUES = 103, /* eigenvalues with SMCs on the diagonal (items x 1);
                                                 LODE_E_NOT_POSITIVE_DEFINITE when SMCs are undefined */
  LODE_CORRELATION_SMC = 104,              /* squared multiple correlations (items x 1); same error */
  LODE_CORRELATION_STANDARD_ERRORS = 105,  /* polychoric only: standard error of each estimate (before
                                              smoothing); 0 on the diagonal, NaN at the bound. Two-step:
                                              the thresholds are taken as known, so it runs smaller
                                              than a full maximum likelihood standard error */
  LODE_CORRELATION_THRESHOLDS = 106,       /* polychoric only: items x (most categories - 1), each item's
                                              thresholds from the left, NaN-padded */
  LODE_CORRELATION_EM_MEANS = 107,         /* em only: the estimated means (items x 1) */
  LODE_CORRELATION_EM_COVARIANCE = 108,    /* em only: the estimated covariance matrix (divisor: rows used) */
  /* numbers: lode_correlation_value */
  LODE_CORRELATION_ITEMS = 120,            /* number of items */
  LODE_CORRELATION_N_OBS = 121,            /* sample size for tests: listwise, rows used; pairwise, the
                                              smallest pair count; em, rows with an answer; matrix input,
                                              as given */
  LODE_CORRELATION_ROWS_TOTAL = 122,       /* rows in the input */
  LODE_CORRELATION_ROWS_COMPLETE = 123,    /* rows with every item answered */
  LODE_CORRELATION_ROWS_USED = 124,        /* rows that contributed */
  LODE_CORRELATION_MIN_PAIR_COUNT = 125,   /* the smallest number of observations behind a correlation */
  LODE_CORRELATION_MISSING_FRACTION = 126, /* share of missing cells in the input */
  LODE_CORRELATION_POSITIVE_DEFINITE = 127,/* 1 when the (returned) matrix is positive definite, else 0 */
  LODE_CORRELATION_SMOOTHED = 128,         /* 1 when smoothing replaced the matrix, else 0 */
  LODE_CORRELATION_SMALLEST_EIGENVALUE_BEFORE = 129, /* before smoothing (0 when it was not needed) */
  LODE_CORRELATION_SMOOTHING_MAX_CHANGE = 130,       /* largest change of a correlation by smoothing */
  LODE_CORRELATION_SMOOTHING_RMS_CHANGE = 131,       /* root mean square change off the diagonal */
  LODE_CORRELATION_SMOOTHING_CONVERGED = 132,        /* 1 when the smoothing iteration converged */
  LODE_CORRELATION_SMOOTHING_ITERATIONS = 133,
  LODE_CORRELATION_KIND = 134,             /* enum lode_coefficient */
  LODE_CORRELATION_MISSING = 135,          /* enum lode_missing */
  LODE_CORRELATION_PAIRS_NOT_CONVERGED = 136, /* polychoric: pairs whose estimate did not converge */
  LODE_CORRELATION_PAIRS_AT_BOUND = 137,      /* polychoric: pairs estimated at |rho| = bound */
  LODE_CORRELATION_PAIRS_ZERO_CELL_CORRECTED = 138, /* polychoric: pairs with the zero-cell addition */
  LODE_CORRELATION_EM_CONVERGED = 139,     /* em only: 1 when the EM iteration met its criterion, else 0 */
  LODE_CORRELATION_EM_ITERATIONS = 140,    /* em only: iterations run */
  LODE_CORRELATION_EM_FINAL_CHANGE = 141,  /* em only: largest change at the last iteration */
  LODE_CORRELATION_EM_TOLERANCE = 142,     /* em only: the criterion it was tested against */
  LODE_CORRELATION_EM_MAX_ITERATIONS = 143,/* em only: the iteration cap */
  /* text: lode_correlation_text */
  LODE_CORRELATION_NOTES = 150             /* plain-language remarks, one per line ("" when none) */
};

LODE_API int lode_correlation_matrix(const lode_correlation* corr, int key, double* out, size_t capacity,
                                     int64_t* rows, int64_t* cols);
LODE_API int lode_correlation_value(const lode_correlation* corr, int key, double* value);
LODE_API int lode_correlation_text(const lode_correlation* corr, int key, char* out, size_t capacity,
                                   size_t* length);

/* ------------------------------------------------------------------------------------------- */
/* Factorability: is the correlation matrix worth factoring?                                    */
/* ------------------------------------------------------------------------------------------- */

typedef struct lode_factorability lode_factorability;

/* Kaiser-Meyer-Olkin overall and per item (MSA), Bartlett's (1950) test of sphericity, the
 * determinant and the squared multiple correlations of `corr`'s matrix. Parts that cannot be
 * computed (KMO of a matrix that is not positive definite, Bartlett's test without n_obs) are left
 * out with a note; asking for them gives the status and the reason. */
LODE_API int lode_factorability_compute(const lode_correlation* corr, lode_factorability** out);

LODE_API void lode_factorability_free(lode_factorability* f);

enum lode_factorability_key {
  /* matrices: lode_factorability_matrix */
  LODE_FACTORABILITY_MSA = 200,  /* items x 1: each item's measure of sampling adequacy
                                    (LODE_E_NOT_POSITIVE_DEFINITE when unavailable) */
  LODE_FACTORABILITY_SMC = 201,  /* items x 1: squared multiple correlations (same) */
  /* numbers: lode_factorability_value */
  LODE_FACTORABILITY_KMO = 220,  /* overall KMO (LODE_E_NOT_POSITIVE_DEFINITE when unavailable) */
  LODE_FACTORABILITY_BARTLETT_CHI_SQUARE = 221, /* LODE_E_INSUFFICIENT_DATA without n_obs */
  LODE_FACTORABILITY_BARTLETT_DF = 222,
  LODE_FACTORABILITY_BARTLETT_P_VALUE = 223,
  LODE_FACTORABILITY_BARTLETT_N_OBS = 224,
  LODE_FACTORABILITY_DETERMINANT = 225,     /* of the correlation matrix */
  LODE_FACTORABILITY_LOG_DETERMINANT = 226, /* NaN when the determinant is not positive */
  /* text: lode_factorability_text */
  LODE_FACTORABILITY_KMO_LABEL = 250,       /* Kaiser's (1974) verbal label of the overall KMO */
  LODE_FACTORABILITY_NOTES = 251            /* remarks, one per line */
};

LODE_API int lode_factorability_matrix(const lode_factorability* f, int key, double* out, size_t capacity,
                                       int64_t* rows, int64_t* cols);
LODE_API int lode_factorability_value(const lode_factorability* f, int key, double* value);
LODE_API int lode_factorability_text(const lode_factorability* f, int key, char* out, size_t capacity,
                                     size_t* length);

/* ------------------------------------------------------------------------------------------- */
/* How many factors: parallel analysis, the MAP test, eigenvalue rules, a consensus              */
/* ------------------------------------------------------------------------------------------- */

enum lode_random_source {
  LODE_RANDOM_SOURCE_NORMAL = 0,      /* normal-theory random correlation matrices (Wishart, Bartlett decomposition) */
  LODE_RANDOM_SOURCE_PERMUTATION = 1  /* each item's answers shuffled (needs raw data) */
};
enum lode_threshold { LODE_THRESHOLD_PERCENTILE = 0, LODE_THRESHOLD_MEAN = 1 };

typedef struct lode_factor_count_options {
  size_t struct_size;
  int64_t replicates;         /* random data sets; default 500 */
  int threshold;              /* enum lode_threshold; default LODE_THRESHOLD_PERCENTILE */
  double percentile;          /* in (0, 100); default 95 */
  int source;                 /* enum lode_random_source; default LODE_RANDOM_SOURCE_NORMAL */
  uint64_t seed;              /* replicate i draws from stream i of this seed; default 20260101 */
  int threads;                /* 0 = all cores; results do not depend on it */
  lode_progress_fn progress;  /* optional; replicates done / total */
  void* progress_user;        /* passed to progress */
} lode_factor_count_options;

LODE_API int lode_factor_count_options_init(lode_factor_count_options* opts, size_t struct_size);

typedef struct lode_factor_count lode_factor_count;

/* Parallel analysis (Horn 1965) on component and reduced-matrix eigenvalues, Velicer's (1976) MAP
 * test (squared and fourth-power), eigenvalues above one, the empirical Kaiser criterion (Braeken &
 * van Assen 2017), and the suggested count with its reason. Needs n_obs. */
LODE_API int lode_factor_count_compute(const lode_correlation* corr, const lode_factor_count_options* opts,
                                lode_factor_count** out);

LODE_API void lode_factor_count_free(lode_factor_count* count);

enum lode_factor_count_key {
  /* matrices (items x 1, by position, largest first): lode_factor_count_matrix */
  LODE_FACTOR_COUNT_OBSERVED_PC = 300,              /* eigenvalues of the correlation matrix */
  LODE_FACTOR_COUNT_OBSERVED_FACTOR = 301,          /* eigenvalues of the reduced matrix (SMC diagonal) */
  LODE_FACTOR_COUNT_RANDOM_PC_MEAN = 302,
  LODE_FACTOR_COUNT_RANDOM_PC_PERCENTILE = 303,
  LODE_FACTOR_COUNT_RANDOM_FACTOR_MEAN = 304,
  LODE_FACTOR_COUNT_RANDOM_FACTOR_PERCENTILE = 305,
  LODE_FACTOR_COUNT_MAP_SQUARED = 306,              /* entry m: average squared partial correlation after m components */
  LODE_FACTOR_COUNT_MAP_FOURTH = 307,
  LODE_FACTOR_COUNT_EKC_REFERENCE = 308,            /* empirical Kaiser criterion reference values */
  /* numbers: lode_factor_count_value */
  LODE_FACTOR_COUNT_SUGGESTED = 320,                /* the suggested number of factors */
  LODE_FACTOR_COUNT_PARALLEL_PC = 321,              /* parallel analysis, component eigenvalues */
  LODE_FACTOR_COUNT_PARALLEL_FACTOR = 322,          /* parallel analysis, factor eigenvalues */
  LODE_FACTOR_COUNT_MAP_SQUARED_SUGGESTED = 323,
  LODE_FACTOR_COUNT_MAP_FOURTH_SUGGESTED = 324,
  LODE_FACTOR_COUNT_KAISER = 325,                   /* eigenvalues above one */
  LODE_FACTOR_COUNT_EMPIRICAL_KAISER = 326,
  LODE_FACTOR_COUNT_REPLICATES = 327,
  LODE_FACTOR_COUNT_N_OBS = 328,
  LODE_FACTOR_COUNT_PERCENTILE = 329,
  /* text: lode_factor_count_text */
  LODE_FACTOR_COUNT_REASON = 350,                   /* why the suggested count */
  LODE_FACTOR_COUNT_TABLE = 351,                    /* one line per rule: rule TAB count TAB primary(0/1) TAB basis */
  LODE_FACTOR_COUNT_NOTES = 352
};

LODE_API int lode_factor_count_matrix(const lode_factor_count* count, int key, double* out, size_t capacity,
                                      int64_t* rows, int64_t* cols);
LODE_API int lode_factor_count_value(const lode_factor_count* count, int key, double* value);
LODE_API int lode_factor_count_text(const lode_factor_count* count, int key, char* out, size_t capacity,
                                    size_t* length);

/* ------------------------------------------------------------------------------------------- */
/* Rotation                                                                                      */
/* ------------------------------------------------------------------------------------------- */

enum lode_criterion {
  LODE_CRITERION_NONE = 0,              /* unrotated (still ordered and reflected) */
  LODE_CRITERION_VARIMAX = 1,           /* orthogonal, gradient projection */
  LODE_CRITERION_VARIMAX_KAISER = 2,    /* varimax by Kaiser's (1958) pairwise algorithm */
  LODE_CRITERION_QUARTIMAX = 3,
  LODE_CRITERION_EQUAMAX = 4,
  LODE_CRITERION_CRAWFORD_FERGUSON = 5, /* orthogonal, with kappa */
  LODE_CRITERION_GEOMIN_ORTHOGONAL = 6, /* with epsilon */
  LODE_CRITERION_TARGET_ORTHOGONAL = 7, /* toward target */
  LODE_CRITERION_OBLIMIN = 8,           /* oblique, with gamma */
  LODE_CRITERION_QUARTIMIN = 9,         /* oblimin with gamma 0 */
  LODE_CRITERION_CRAWFORD_FERGUSON_OBLIQUE = 10,
  LODE_CRITERION_GEOMIN = 11,           /* oblique, with epsilon */
  LODE_CRITERION_TARGET_OBLIQUE = 12,
  LODE_CRITERION_PROMAX = 13            /* oblique, with power */
};

/* The method of a name ("varimax", "oblimin", "geomin", "target", ...; case-insensitive, '-', ' '
 * and '_' alike). An unknown name is LODE_E_INVALID_ARGUMENT with the valid names in the message. */
LODE_API int lode_criterion_from_name(const char* name, int* method);
/* The canonical name of a method; NULL for an unknown one. */
LODE_API const char* lode_criterion_name(int method);

typedef struct lode_rotation_options {
  size_t struct_size;
  int method;              /* enum lode_criterion; default LODE_CRITERION_VARIMAX */
  int normalize;           /* Kaiser row normalisation; default 1 */
  double gamma;            /* oblimin; default 0 */
  double kappa;            /* Crawford-Ferguson, 0..1; default 0 */
  double epsilon;          /* geomin; default 0.01 */
  double power;            /* promax; default 4 */
  const double* target;    /* items x factors target for the target methods (NaN = unspecified entry);
                              read during the call only */
  int64_t target_rows, target_cols, target_row_stride, target_col_stride;
  int random_starts;       /* extra random starts; -1 (default) = 10 for geomin, oblimin, quartimin and
                              oblique Crawford-Ferguson, 0 otherwise */
  uint64_t seed;           /* for the random starts; default 1 */
  int max_iterations;      /* per start; default 20000 */
  double tolerance;        /* of the projected gradient (radians for varimax_kaiser); default 1e-6 */
  int threads;             /* for the random starts (0 = all cores); default 1 */
} lode_rotation_options;

LODE_API int lode_rotation_options_init(lode_rotation_options* opts, size_t struct_size);

typedef struct lode_rotation lode_rotation;

/* Rotates a caller's loading matrix (items x factors, at least 2 factors, finite). Presentation:
 * factors ordered by the variance they account for, each reflected to sum positive (target
 * rotations keep the target's order). */
LODE_API int lode_rotation_compute(const double* loadings, int64_t items, int64_t factors, int64_t row_stride,
                         int64_t col_stride, const lode_rotation_options* opts, lode_rotation** out);

LODE_API void lode_rotation_free(lode_rotation* rotation);

enum lode_rotation_key {
  /* matrices: lode_rotation_matrix */
  LODE_ROTATION_PATTERN = 500,             /* items x factors */
  LODE_ROTATION_STRUCTURE = 501,           /* items x factors: pattern times factor correlations */
  LODE_ROTATION_FACTOR_CORRELATIONS = 502, /* factors x factors (identity when orthogonal) */
  LODE_ROTATION_TRANSFORM = 503,           /* the rotation matrix T: pattern = A T (orthogonal) or A inv(T)' (oblique) */
  LODE_ROTATION_SS_PATTERN = 504,          /* factors x 1: sums of squared pattern loadings */
  LODE_ROTATION_SS_STRUCTURE = 505,        /* factors x 1: sums of squared structure loadings */
  LODE_ROTATION_START_CRITERIA = 506,      /* starts x 1: final criterion of every start */
  /* numbers: lode_rotation_value */
  LODE_ROTATION_CRITERION = 520,           /* with normalize: the criterion of the Kaiser-normalised loadings */
  LODE_ROTATION_CONVERGED = 521,           /* 1 or 0 */
  LODE_ROTATION_ITERATIONS = 522,
  LODE_ROTATION_OBLIQUE = 523,             /* 1 or 0 */
  LODE_ROTATION_STARTS = 524,
  LODE_ROTATION_STARTS_CONVERGED = 525,
  LODE_ROTATION_REACHED_BEST = 526,        /* converged starts within tolerance of the best criterion */
  LODE_ROTATION_DISTINCT_SOLUTIONS = 527,
  LODE_ROTATION_METHOD = 528,              /* enum lode_criterion */
  LODE_ROTATION_FINAL_CHANGE = 529,        /* the convergence criterion at the last iteration */
  LODE_ROTATION_TOLERANCE = 530,           /* what it was tested against */
  LODE_ROTATION_MAX_ITERATIONS = 531,
  /* text: lode_rotation_text */
  LODE_ROTATION_METHOD_NAME = 550
};

LODE_API int lode_rotation_matrix(const lode_rotation* rotation, int key, double* out, size_t capacity,
                                  int64_t* rows, int64_t* cols);
LODE_API int lode_rotation_value(const lode_rotation* rotation, int key, double* value);
LODE_API int lode_rotation_text(const lode_rotation* rotation, int key, char* out, size_t capacity,
                                size_t* length);

/* ------------------------------------------------------------------------------------------- */
/* Fitting a factor model: extraction, rotation, fit statistics, residuals                      */
/* ------------------------------------------------------------------------------------------- */

enum lode_extraction {
  LODE_EXTRACTION_ML = 0,     /* maximum likelihood (Joreskog 1967; Lawley & Maxwell 1971) */
  LODE_EXTRACTION_PAF = 1,    /* iterated principal axis factoring from SMCs */
  LODE_EXTRACTION_MINRES = 2, /* minimum residual (unweighted least squares) */
  LODE_EXTRACTION_PCA = 3     /* principal components, a comparison method */
};

typedef struct lode_model_options {
  size_t struct_size;
  int factors;              /* number of factors; 0 (default) = the count suggested by
                               lode_factor_count_compute with `factor_count`'s options */
  int method;               /* enum lode_extraction; default LODE_EXTRACTION_ML */
  int max_iterations;       /* extraction; default 1000 */
  double tolerance;         /* extraction; default 1e-9 */
  double min_uniqueness;    /* lower bound of uniquenesses (ML, MINRES); default 0.005 */
  double interval_level;    /* of the RMSEA interval; default 0.90 */
  const lode_rotation_options* rotation;         /* NULL (default) = unrotated */
  const lode_factor_count_options* factor_count; /* used when factors == 0; NULL = defaults */
  /* Progress of extraction and rotation (the factor count, when factors == 0, reports
     through factor_count's own callback). Units: the extraction counts one, each rotation start one
     (lode_model_value LODE_MODEL_ROTATION_STARTS after the fact); reported before the extraction, after
     it, as rotation starts finish, and once at the end. Optional; never changes a result. */
  lode_progress_fn progress;
  void* progress_user;                           /* passed to progress */
} lode_model_options;

LODE_API int lode_model_options_init(lode_model_options* opts, size_t struct_size);

typedef struct lode_model lode_model;

/* Extracts, rotates and assesses a factor model of `corr`'s matrix. Non-convergence and Heywood
 * cases are reported (LODE_MODEL_CONVERGED, LODE_MODEL_HEYWOOD, the notes), not errors. Fit
 * statistics need n_obs: without it they are unavailable (their getters say why) while loadings and
 * residuals are there. */
LODE_API int lode_model_compute(const lode_correlation* corr, const lode_model_options* opts, lode_model** out);

LODE_API void lode_model_free(lode_model* model);

enum lode_model_key {
  /* matrices: lode_model_matrix */
  LODE_MODEL_LOADINGS = 400,            /* items x factors: rotated pattern (unrotated without rotation) */
  LODE_MODEL_STRUCTURE = 401,           /* items x factors */
  LODE_MODEL_FACTOR_CORRELATIONS = 402, /* factors x factors */
  LODE_MODEL_ROTATION_MATRIX = 403,     /* factors x factors */
  LODE_MODEL_UNROTATED_LOADINGS = 404,  /* items x factors */
  LODE_MODEL_UNIQUENESSES = 405,        /* items x 1 */
  LODE_MODEL_COMMUNALITIES = 406,       /* items x 1 */
  LODE_MODEL_RESIDUALS = 407,           /* items x items: observed minus implied correlations */
  LODE_MODEL_HEYWOOD = 408,             /* items x 1: 1 for an improper item (communality >= 1 or
                                           uniqueness at its bound), else 0 */
  LODE_MODEL_SS_LOADINGS = 409,         /* factors x 1: sums of squared pattern loadings */
  LODE_MODEL_SS_STRUCTURE = 410,        /* factors x 1: sums of squared structure loadings */
  /* numbers: lode_model_value */
  LODE_MODEL_FACTORS = 420,
  LODE_MODEL_ITEMS = 421,
  LODE_MODEL_N_OBS = 422,
  LODE_MODEL_CONVERGED = 423,           /* extraction converged: 1 or 0 */
  LODE_MODEL_ITERATIONS = 424,
  LODE_MODEL_HEYWOOD_COUNT = 425,
  LODE_MODEL_OBJECTIVE = 426,           /* the extraction's fitting function at the solution */
  LODE_MODEL_RMSR = 427,                /* root mean square of off-diagonal residuals (no n_obs needed) */
  LODE_MODEL_MAX_ABS_RESIDUAL = 428,
  LODE_MODEL_CHI_SQUARE = 429,          /* with Bartlett's correction; the following need n_obs */
  LODE_MODEL_DF = 430,
  LODE_MODEL_P_VALUE = 431,             /* NaN when df = 0 */
  LODE_MODEL_RMSEA = 432,
  LODE_MODEL_RMSEA_LOWER = 433,
  LODE_MODEL_RMSEA_UPPER = 434,
  LODE_MODEL_TLI = 435,
  LODE_MODEL_BIC = 436,
  LODE_MODEL_NULL_CHI_SQUARE = 437,
  LODE_MODEL_NULL_DF = 438,
  LODE_MODEL_ROTATION_CRITERION = 439,
  LODE_MODEL_ROTATION_CONVERGED = 440,
  LODE_MODEL_OBLIQUE = 441,
  LODE_MODEL_METHOD = 442,              /* enum lode_extraction */
  LODE_MODEL_ROTATION_METHOD = 443,     /* enum lode_criterion */
  LODE_MODEL_SUGGESTED_FACTORS = 444,   /* when factors was 0: the count used; else 0 */
  LODE_MODEL_FINAL_CHANGE = 445,        /* extraction's convergence criterion at the last iteration */
  LODE_MODEL_TOLERANCE = 446,           /* what it was tested against */
  LODE_MODEL_MAX_ITERATIONS = 447,
  LODE_MODEL_ROTATION_STARTS = 448,     /* starts the rotation ran (1 when unrotated) */
  /* text: lode_model_text */
  LODE_MODEL_NOTES = 450                /* remarks (Heywood cases, non-convergence, fit caveats) */
};

LODE_API int lode_model_matrix(const lode_model* model, int key, double* out, size_t capacity, int64_t* rows,
                               int64_t* cols);
LODE_API int lode_model_value(const lode_model* model, int key, double* value);
LODE_API int lode_model_text(const lode_model* model, int key, char* out, size_t capacity, size_t* length);

/* ------------------------------------------------------------------------------------------- */
/* Factor scores                                                                                  */
/* ------------------------------------------------------------------------------------------- */

enum lode_estimator {
  LODE_ESTIMATOR_REGRESSION = 0, /* Thurstone (1935) */
  LODE_ESTIMATOR_BARTLETT = 1,   /* Bartlett (1937) */
  LODE_ESTIMATOR_CORRELATION_PRESERVING = 2    /* correlation-preserving (ten Berge et al. 1999) */
};
enum lode_gaps {
  LODE_GAPS_FROM_ANSWERED = 0, /* weights from the answered items, when enough were answered */
  LODE_GAPS_LEAVE_MISSING = 1  /* any missing item leaves the row's scores NaN */
};

typedef struct lode_scores_options {
  size_t struct_size;
  int method;                /* enum lode_estimator; default LODE_ESTIMATOR_REGRESSION */
  int missing;               /* enum lode_gaps; default LODE_GAPS_FROM_ANSWERED */
  double min_answered_share; /* share of items a row must answer to be scored; default 0.5 */
  double low_determinacy;    /* determinacy below this is flagged; default 0.80 */
} lode_scores_options;

LODE_API int lode_scores_options_init(lode_scores_options* opts, size_t struct_size);

typedef struct lode_scores lode_scores;

/* Scores the respondents of `data` (raw data with the model's items in the same order; NULL = the raw
 * data the model was fitted to) on the model's factors. Items are standardised with the means and
 * standard deviations of `data` (n - 1 denominator), each over its answered values; when `data` holds
 * the model's own respondents (NULL, the same handle or the same values) and its correlations dropped
 * incomplete rows (listwise), over the complete rows, the ones behind the correlation matrix. Factor scores are estimates: the notes carry the cautions that go
 * with using them to select, rate or diagnose people. */
LODE_API int lode_scores_compute(const lode_model* model, const lode_data* data, const lode_scores_options* opts,
                        lode_scores** out);

LODE_API void lode_scores_free(lode_scores* scores);

enum lode_scores_key {
  /* matrices: lode_scores_matrix */
  LODE_SCORES_VALUES = 600,             /* rows x factors; NaN where a row is left missing */
  LODE_SCORES_WEIGHTS = 601,            /* items x factors, applied to standardised complete rows */
  LODE_SCORES_DETERMINACY = 602,        /* factors x 1: correlation of the best linear score with the factor */
  LODE_SCORES_VALIDITY = 603,           /* factors x 1: correlation of these scores with their factor */
  LODE_SCORES_CORRELATIONS = 604,       /* factors x factors: correlations among the scores */
  LODE_SCORES_LOW_DETERMINACY = 605,    /* factors x 1: 1 where determinacy is below the threshold */
  /* numbers: lode_scores_value */
  LODE_SCORES_ROWS_TOTAL = 620,
  LODE_SCORES_ROWS_COMPLETE = 621,
  LODE_SCORES_ROWS_PARTIAL = 622,       /* scored from the answered items only */
  LODE_SCORES_ROWS_MISSING = 623,       /* left missing */
  /* text: lode_scores_text */
  LODE_SCORES_NOTES = 650,              /* remarks, ending with the cautions */
  LODE_SCORES_CAUTIONS = 651            /* the cautions alone */
};

LODE_API int lode_scores_matrix(const lode_scores* scores, int key, double* out, size_t capacity, int64_t* rows,
                                int64_t* cols);
LODE_API int lode_scores_value(const lode_scores* scores, int key, double* value);
LODE_API int lode_scores_text(const lode_scores* scores, int key, char* out, size_t capacity, size_t* length);

/* ------------------------------------------------------------------------------------------- */
/* Reliability: Cronbach's alpha, McDonald's omega                                               */
/* ------------------------------------------------------------------------------------------- */

typedef struct lode_reliability lode_reliability;

/* Cronbach's (1951) alpha of one scale: `data` holds the scale's items (raw data, already
 * reverse-scored where needed); rows with a missing item are left out. */
LODE_API int lode_reliability_compute_alpha(const lode_data* data, lode_reliability** out);

/* McDonald's (1999) omega for the scale (the sum) of each factor's items S of `model`, both as ratios
 * to the model-implied variance of that sum, 1' Sigma_SS 1 with Sigma = Lambda Phi Lambda' + Psi:
 * omega total, 1' (Lambda Phi Lambda')_SS 1 / 1' Sigma_SS 1 (LODE_RELIABILITY_OMEGA: every common factor counts,
 * cross-loadings and factor correlations included), and the factor's share, (sum over S of the
 * loadings on the scale's factor)^2 / 1' Sigma_SS 1 (LODE_RELIABILITY_OMEGA_FACTOR_SHARE). With one
 * factor both are (sum lambda)^2 / ((sum lambda)^2 + sum psi). Earlier builds gave as LODE_RELIABILITY_OMEGA of a
 * several-factor model (sum lambda)^2 / ((sum lambda)^2 + sum psi), which is neither (a bug).
 * `assignment` gives each item's factor (0-based; -1 = in no scale), `count` the number of items;
 * NULL with count 0 assigns each item to the factor of its largest absolute loading (stated in the
 * notes). */
LODE_API int lode_reliability_compute_omega(const lode_model* model, const int64_t* assignment, int64_t count,
                                 lode_reliability** out);

/* McDonald's (1999) omega for a single scale from a one-factor fit of `corr` (the correlations of
 * the scale's items alone). Of `opts` only method, max_iterations, tolerance and min_uniqueness are
 * read (NULL = maximum likelihood with the defaults); non-convergence and Heywood cases are stated in
 * the notes and LODE_RELIABILITY_OMEGA_CONVERGED, not hidden. */
LODE_API int lode_reliability_compute_scale_omega(const lode_correlation* corr, const lode_model_options* opts,
                                     lode_reliability** out);

/* How items enter their scale in lode_reliability_compute_keyed_omega (ABI 2.0 names). */
enum lode_keying {
  LODE_KEYING_AS_SCORED = 0,        /* every item enters its scale's sum as scored */
  LODE_KEYING_REVERSE_NEGATIVE = 1  /* an item loading negatively on its scale's factor is reverse-scored */
};

typedef struct lode_reliability_options {
  size_t struct_size;
  const int64_t* assignment; /* each item's factor (0-based, -1 = none); NULL = largest absolute loading */
  int64_t assignment_count;  /* items in `assignment` (0 with NULL) */
  int keying;                /* enum lode_keying; default LODE_KEYING_AS_SCORED */
  const int32_t* reverse;    /* per item, nonzero = reverse-keyed (on top of `keying`); NULL = none */
  int64_t reverse_count;     /* items in `reverse` (0 with NULL) */
} lode_reliability_options;

LODE_API int lode_reliability_options_init(lode_reliability_options* opts, size_t struct_size);

/* Omega as lode_reliability_compute_omega, with reverse-keyed items: a reverse-scored item (a constant minus the
 * answer) changes the correlations R to D R D (D = diag(+-1)), whose common factor fit is D Lambda
 * with the same factor correlations and uniquenesses (the extraction's discrepancy and every rotation
 * criterion other than a fixed target see the loadings only through D Sigma D and their squares); so
 * these items enter with their rows of loadings reversed, exactly, without a refit.
 * LODE_RELIABILITY_REVERSED tells which items were reverse-scored. NULL opts = the defaults. */
LODE_API int lode_reliability_compute_keyed_omega(const lode_model* model, const lode_reliability_options* opts,
                                                  lode_reliability** out);

LODE_API void lode_reliability_free(lode_reliability* reliability);

enum lode_reliability_key {
  /* alpha (lode_reliability_compute_alpha) - matrices, items x 1 */
  LODE_RELIABILITY_ALPHA_IF_DELETED = 700,
  LODE_RELIABILITY_ALPHA_STANDARDIZED_IF_DELETED = 701,
  LODE_RELIABILITY_ALPHA_ITEM_TOTAL = 702,      /* corrected item-total correlations */
  LODE_RELIABILITY_ALPHA_ITEM_MEANS = 703,
  LODE_RELIABILITY_ALPHA_ITEM_SDS = 704,
  /* alpha - numbers */
  LODE_RELIABILITY_ALPHA = 720,                 /* raw alpha */
  LODE_RELIABILITY_ALPHA_STANDARDIZED = 721,
  LODE_RELIABILITY_ALPHA_MEAN_INTER_ITEM = 722, /* mean inter-item correlation */
  LODE_RELIABILITY_ALPHA_ROWS_TOTAL = 723,
  LODE_RELIABILITY_ALPHA_ROWS_USED = 724,
  LODE_RELIABILITY_ALPHA_ITEMS = 725,
  /* omega (lode_reliability_compute_omega) - matrices */
  LODE_RELIABILITY_OMEGA = 740,                 /* factors x 1: omega total of each factor's scale
                                                   (NaN: no items) */
  LODE_RELIABILITY_OMEGA_ASSIGNMENT = 741,      /* items x 1: the factor of each item (0-based, -1 = none) */
  LODE_RELIABILITY_OMEGA_SUM_LOADINGS = 742,    /* factors x 1 */
  LODE_RELIABILITY_OMEGA_SUM_UNIQUENESSES = 743, /* factors x 1 */
  LODE_RELIABILITY_OMEGA_LOADINGS = 744,        /* single scale only: items x 1, the one-factor loadings */
  LODE_RELIABILITY_OMEGA_UNIQUENESSES = 745,    /* single scale only: items x 1 */
  LODE_RELIABILITY_OMEGA_FACTOR_SHARE = 746,    /* factors x 1: the factor's share of its scale's variance */
  LODE_RELIABILITY_OMEGA_SCALE_VARIANCE = 747,  /* factors x 1: 1' Sigma_SS 1, the model-implied variance
                                                   of the sum */
  LODE_RELIABILITY_REVERSED = 748,              /* items x 1: 1 where the item was reverse-scored in its
                                                   scale, else 0 */
  /* omega - numbers */
  LODE_RELIABILITY_OMEGA_CONVERGED = 760,       /* single scale: the one-factor fit converged (1 or 0); model: 1 */
  /* text, both kinds */
  LODE_RELIABILITY_NOTES = 750
};

LODE_API int lode_reliability_matrix(const lode_reliability* reliability, int key, double* out, size_t capacity,
                                     int64_t* rows, int64_t* cols);
LODE_API int lode_reliability_value(const lode_reliability* reliability, int key, double* value);
LODE_API int lode_reliability_text(const lode_reliability* reliability, int key, char* out, size_t capacity,
                                   size_t* length);

/* ------------------------------------------------------------------------------------------- */
/* A general factor: the Schmid-Leiman transformation and omega hierarchical                    */
/* ------------------------------------------------------------------------------------------- */

typedef struct lode_schmid_leiman lode_schmid_leiman;

typedef struct lode_schmid_leiman_options {
  size_t struct_size;  /* set by lode_schmid_leiman_options_init */
  int second_order;    /* enum lode_extraction of the one-factor fit of the factor correlations;
                          default LODE_EXTRACTION_MINRES */
  int max_iterations;  /* of that fit; default 1000 */
  double tolerance;    /* its convergence criterion; default 1e-10 */
} lode_schmid_leiman_options;

LODE_API int lode_schmid_leiman_options_init(lode_schmid_leiman_options* opts, size_t struct_size);

/* The Schmid & Leiman (1957) transformation of `model`'s oblique solution (at least 3 factors): the
 * factor correlations Phi get a one-factor (second-order) fit with loadings gamma; general loadings
 * L gamma and group loadings L diag(sqrt(1 - gamma^2)), which reproduce L Phi L' wherever the second-
 * order model reproduces Phi (always with 3 factors). Omega total, omega hierarchical and omega
 * subscales (McDonald 1999; Zinbarg et al. 2005) are ratios to the model-implied variance of the
 * unit-weighted sum (of all items; of a subscale's items, each item in the subscale of its largest
 * absolute pattern loading); ECV is the general factor's share of the common variance. `assignment`
 * (items entries, 0-based factor or -1) may be NULL with count 0. Opts may be NULL (defaults). */
LODE_API int lode_schmid_leiman_compute(const lode_model* model, const lode_schmid_leiman_options* opts,
                                        const int64_t* assignment, int64_t count, lode_schmid_leiman** out);

LODE_API void lode_schmid_leiman_free(lode_schmid_leiman* result);

enum lode_schmid_leiman_key {
  /* matrices */
  LODE_SCHMID_LEIMAN_GENERAL = 1400,              /* items x 1: loadings on the general factor */
  LODE_SCHMID_LEIMAN_GROUP = 1401,                /* items x factors: loadings on the group factors */
  LODE_SCHMID_LEIMAN_UNIQUENESSES = 1402,         /* items x 1 */
  LODE_SCHMID_LEIMAN_SECOND_ORDER_LOADINGS = 1403,/* factors x 1: gamma */
  LODE_SCHMID_LEIMAN_OMEGA_SUBSCALES = 1404,      /* factors x 1: the group factor's share of its subscale
                                                     (NaN: no items) */
  LODE_SCHMID_LEIMAN_SUBSCALE_OMEGA_TOTAL = 1405, /* factors x 1: all common factors' share of it */
  LODE_SCHMID_LEIMAN_ASSIGNMENT = 1406,           /* items x 1: each item's subscale (0-based, -1 = none) */
  /* numbers */
  LODE_SCHMID_LEIMAN_OMEGA_TOTAL = 1420,
  LODE_SCHMID_LEIMAN_OMEGA_HIERARCHICAL = 1421,
  LODE_SCHMID_LEIMAN_ECV = 1422,                  /* explained common variance of the general factor */
  LODE_SCHMID_LEIMAN_SECOND_ORDER_MAX_RESIDUAL = 1423, /* largest |Phi - implied| off the diagonal */
  LODE_SCHMID_LEIMAN_SECOND_ORDER_CONVERGED = 1424,    /* 1 or 0 */
  LODE_SCHMID_LEIMAN_SECOND_ORDER_ITERATIONS = 1425,
  /* text */
  LODE_SCHMID_LEIMAN_NOTES = 1450                 /* remarks (Heywood cases, a rough second-order fit) */
};

LODE_API int lode_schmid_leiman_matrix(const lode_schmid_leiman* result, int key, double* out, size_t capacity,
                                       int64_t* rows, int64_t* cols);
LODE_API int lode_schmid_leiman_value(const lode_schmid_leiman* result, int key, double* value);
LODE_API int lode_schmid_leiman_text(const lode_schmid_leiman* result, int key, char* out, size_t capacity,
                                     size_t* length);

/* ------------------------------------------------------------------------------------------- */
/* Groups: does the structure hold in every group of respondents?                               */
/* ------------------------------------------------------------------------------------------- */

typedef struct lode_group_comparison lode_group_comparison;

typedef struct lode_group_comparison_options {
  size_t struct_size;                            /* set by lode_group_comparison_options_init */
  int factors;                                   /* at least 1; no default (0 is refused) */
  int method;                                    /* enum lode_extraction; default LODE_EXTRACTION_ML */
  int rotation;                                  /* enum lode_criterion of the pooled solution, not a
                                                    target method; default LODE_CRITERION_OBLIMIN. Oblique
                                                    methods give oblique Procrustes in the groups */
  const lode_correlation_options* correlation;   /* NULL = defaults (Pearson, pairwise) */
  int64_t min_group;                             /* smaller groups are listed and skipped; default 100
                                                    (common practice; the rule is max(min_group, items + 1)) */
  double difference_threshold;                   /* |group - pooled loading| above this is flagged; default 0.2 */
  int threads;                                   /* groups in parallel; 0 (default) = all cores */
  lode_progress_fn progress;                     /* groups done / groups analysed; optional */
  void* progress_user;
} lode_group_comparison_options;

LODE_API int lode_group_comparison_options_init(lode_group_comparison_options* opts, size_t struct_size);

/* The analysis of all rows of `data` (raw answers) together, then of each group of rows sharing a code
 * in `groups` (`rows` entries, one per row of data) with enough respondents: extraction of the same
 * number of factors, rotated towards the pooled pattern by orthogonal (Schonemann 1966) or oblique
 * (Hurley & Cattell 1962) Procrustes; Tucker's congruence per factor; alpha and omega per group and
 * scale (each item in the scale of its largest absolute pooled loading, reversed when that loading is
 * negative); loadings differing from the pooled ones by more than the threshold. Congruence is a
 * descriptive check, not a formal test of measurement invariance. */
LODE_API int lode_group_comparison_compute(const lode_data* data, const int64_t* groups, int64_t rows,
                                           const lode_group_comparison_options* opts, lode_group_comparison** out);

LODE_API void lode_group_comparison_free(lode_group_comparison* comparison);

enum lode_group_comparison_key {
  /* matrices (groups: the analysed groups by ascending code) */
  LODE_GROUP_COMPARISON_CODES = 1500,           /* groups x 1 */
  LODE_GROUP_COMPARISON_ROWS = 1501,            /* groups x 1: respondents per group */
  LODE_GROUP_COMPARISON_CONGRUENCE = 1502,      /* groups x factors: Tucker's congruence with the pooled factor */
  LODE_GROUP_COMPARISON_ALPHA = 1503,           /* groups x factors: raw alpha of each scale (NaN: < 2 items) */
  LODE_GROUP_COMPARISON_OMEGA = 1504,           /* groups x factors: omega total of each scale */
  LODE_GROUP_COMPARISON_POOLED_PATTERN = 1505,  /* items x factors */
  LODE_GROUP_COMPARISON_POOLED_FACTOR_CORRELATIONS = 1506, /* factors x factors */
  LODE_GROUP_COMPARISON_ASSIGNMENT = 1507,      /* items x 1: each item's scale (0-based factor) */
  LODE_GROUP_COMPARISON_SKIPPED = 1508,         /* skipped x 2: code, respondents */
  LODE_GROUP_COMPARISON_DIFFERENCES = 1509,     /* flagged x 5: code, item (0-based), factor (0-based), group
                                                   loading, pooled loading */
  LODE_GROUP_COMPARISON_PATTERNS = 1510,        /* (groups * items) x factors: each group's rotated pattern,
                                                   groups stacked in order */
  /* numbers */
  LODE_GROUP_COMPARISON_GROUPS = 1520,          /* groups analysed */
  LODE_GROUP_COMPARISON_FACTORS = 1521,
  LODE_GROUP_COMPARISON_OBLIQUE = 1522,         /* 1 when oblique Procrustes was used */
  LODE_GROUP_COMPARISON_POOLED_N_OBS = 1523,
  /* text, one line each */
  LODE_GROUP_COMPARISON_NOTES = 1550,           /* readings per group and factor, the caution */
  LODE_GROUP_COMPARISON_SKIPPED_REASONS = 1551, /* one per skipped group */
  LODE_GROUP_COMPARISON_DIFFERENCE_TEXTS = 1552 /* one per flagged loading, in plain words */
};

LODE_API int lode_group_comparison_matrix(const lode_group_comparison* comparison, int key, double* out,
                                          size_t capacity, int64_t* rows, int64_t* cols);
LODE_API int lode_group_comparison_value(const lode_group_comparison* comparison, int key, double* value);
LODE_API int lode_group_comparison_text(const lode_group_comparison* comparison, int key, char* out,
                                        size_t capacity, size_t* length);

/* ------------------------------------------------------------------------------------------- */
/* Comparing two solutions: Tucker's congruence after matching factors                           */
/* ------------------------------------------------------------------------------------------- */

typedef struct lode_comparison lode_comparison;

/* Tucker's (1951) congruence between every factor of loading matrix `a` and every factor of `b`
 * (same items, same number of factors), then the one-to-one matching of b's factors to a's with the
 * largest total |congruence| (Hungarian method), reflecting matched factors with negative congruence. */
LODE_API int lode_comparison_compute(const double* a, const double* b, int64_t items, int64_t factors,
                                   int64_t a_row_stride, int64_t a_col_stride, int64_t b_row_stride,
                                   int64_t b_col_stride, lode_comparison** out);

LODE_API void lode_comparison_free(lode_comparison* comparison);

enum lode_comparison_key {
  LODE_COMPARISON_CONGRUENCE = 800,         /* factors x factors, before matching (signed) */
  LODE_COMPARISON_ORDER = 801,              /* factors x 1: the factor of b matched to each factor of a (0-based) */
  LODE_COMPARISON_SIGNS = 802,              /* factors x 1: +1 or -1 applied to that factor of b */
  LODE_COMPARISON_MATCHED_CONGRUENCE = 803, /* factors x 1: congruence of each matched pair (>= 0) */
  LODE_COMPARISON_ALIGNED = 804,            /* items x factors: b reordered and reflected */
  LODE_COMPARISON_NOTES = 850               /* text: a plain reading of each matched pair */
};

LODE_API int lode_comparison_matrix(const lode_comparison* comparison, int key, double* out, size_t capacity,
                                    int64_t* rows, int64_t* cols);
LODE_API int lode_comparison_text(const lode_comparison* comparison, int key, char* out, size_t capacity,
                                  size_t* length);

/* ------------------------------------------------------------------------------------------- */
/* Items to look at: cross-loadings, no salient loading, low communality, Heywood cases         */
/* ------------------------------------------------------------------------------------------- */

/* Kinds of flag. Each is a bit, so an item's code (LODE_ITEM_FLAGS_CODES) is the OR of its flags. */
enum lode_flag {
  LODE_FLAG_CROSS_LOADING = 1,      /* a second loading salient too, or within cross_loading_gap of the largest */
  LODE_FLAG_NO_SALIENT_LOADING = 2, /* the largest |loading| is below salient */
  LODE_FLAG_LOW_COMMUNALITY = 4,    /* communality below low_communality */
  LODE_FLAG_HEYWOOD_CASE = 8        /* uniqueness at or below heywood_uniqueness, or negative */
};

/* Thresholds. The defaults of the first three are rules of thumb of the trade (common practice), not
 * results of a method; the notes say so. */
typedef struct lode_item_flags_options {
  size_t struct_size;
  double salient;            /* a loading is salient when |loading| >= this; default 0.40 */
  double cross_loading_gap;  /* a second loading within this of the largest (in |.|) cross-loads; default 0.20 */
  double low_communality;    /* communality below this is low; default 0.20 */
  double heywood_uniqueness; /* uniqueness at or below this is a Heywood case; default 0.005 (the lower
                                bound of uniquenesses in lode_model_options and R's stats::factanal) */
} lode_item_flags_options;

LODE_API int lode_item_flags_options_init(lode_item_flags_options* opts, size_t struct_size);

typedef struct lode_item_flags lode_item_flags;

/* Flags the items of a fitted model from its pattern loadings, factor correlations and uniquenesses
 * (communality = 1 - uniqueness). Every threshold must lie in [0, 1]. */
LODE_API int lode_item_flags_compute(const lode_model* model, const lode_item_flags_options* opts, lode_item_flags** out);

LODE_API void lode_item_flags_free(lode_item_flags* flags);

enum lode_item_flags_key {
  /* matrices: lode_item_flags_matrix */
  LODE_ITEM_FLAGS_CODES = 1000,      /* items x 1: the OR of the item's enum lode_flag values (0 = none) */
  LODE_ITEM_FLAGS_TABLE = 1001,      /* flags x 5, one row per flag in item order: item (0-based), kind,
                                        first factor, second factor (0-based; -1 where none), value (the
                                        loading, communality or uniqueness that raised the flag; for a
                                        cross-loading the second loading) */
  LODE_ITEM_FLAGS_COMMUNALITIES = 1002, /* items x 1: the communalities the flags were judged on */
  /* numbers: lode_item_flags_value */
  LODE_ITEM_FLAGS_COUNT = 1020,      /* flags in all */
  LODE_ITEM_FLAGS_ITEMS_FLAGGED = 1021,
  LODE_ITEM_FLAGS_ITEMS = 1022,
  LODE_ITEM_FLAGS_SALIENT = 1023,    /* the thresholds used */
  LODE_ITEM_FLAGS_CROSS_LOADING_GAP = 1024,
  LODE_ITEM_FLAGS_LOW_COMMUNALITY = 1025,
  LODE_ITEM_FLAGS_HEYWOOD_UNIQUENESS = 1026,
  /* text: lode_item_flags_text */
  LODE_ITEM_FLAGS_NOTES = 1050       /* one plain-language note per flag, in the order of the table's rows */
};

LODE_API int lode_item_flags_matrix(const lode_item_flags* flags, int key, double* out, size_t capacity,
                                    int64_t* rows, int64_t* cols);
LODE_API int lode_item_flags_value(const lode_item_flags* flags, int key, double* value);
LODE_API int lode_item_flags_text(const lode_item_flags* flags, int key, char* out, size_t capacity, size_t* length);
/* The notes of one item (0-based), one per line; "" for an item without flags. */
LODE_API int lode_item_flags_item_notes(const lode_item_flags* flags, int64_t item, char* out, size_t capacity,
                                        size_t* length);

/* ------------------------------------------------------------------------------------------- */
/* Bootstrap intervals for a rotated solution                                                  */
/* ------------------------------------------------------------------------------------------- */

typedef struct lode_bootstrap_options {
  size_t struct_size;
  int64_t replicates;          /* B: resamples of the respondents (at least 2); default 1000 */
  double level;                /* two-sided coverage of the percentile intervals, in (0, 1); default 0.95 */
  uint64_t seed;               /* replicate i resamples from stream i of this seed; default 1 */
  int threads;                 /* 0 (default) = all cores; results do not depend on it */
  int replicate_random_starts; /* random starts of the rotation in each replicate: 0 (default) = from the
                                  unrotated loadings only (the alignment to the full sample follows);
                                  -1 = as the fit's rotation options say. The full-sample rotation always
                                  uses the fit's rotation options. */
  int keep_replicates;         /* nonzero: keep every aligned replicate (LODE_BOOTSTRAP_REPLICATE_*);
                                  memory B x items x factors; default 0 */
  lode_progress_fn progress;   /* replicates done / B; optional. Cancelling returns LODE_E_CANCELLED and
                                  no result. */
  void* progress_user;         /* passed to progress */
} lode_bootstrap_options;

LODE_API int lode_bootstrap_options_init(lode_bootstrap_options* opts, size_t struct_size);

typedef struct lode_bootstrap lode_bootstrap;

/* Percentile bootstrap (Efron & Tibshirani 1993) of the factor solution that lode_model_compute(corr, fit) gives:
 * the respondents behind `corr` (raw data; a correlation handle made from a matrix is refused) are
 * resampled with replacement, their correlations recomputed with corr's options, and each replicate is
 * extracted and rotated as `fit` says, then aligned to the full-sample solution (factors matched by
 * Tucker's congruence and reflected; no further rotation: LODE_BOOTSTRAP_ALIGNMENT states it). Of
 * `fit` these are read: factors (at least 1; 0 is refused), method, max_iterations, tolerance,
 * min_uniqueness, rotation (NULL = unrotated); its progress is not used (`opts` has its own).
 * Replicates that fail or do not converge are counted, named by reason and excluded. A full-sample fit
 * that does not converge is LODE_E_NOT_CONVERGED; fewer than 2 usable replicates LODE_E_INSUFFICIENT_DATA. */
LODE_API int lode_bootstrap_compute(const lode_correlation* corr, const lode_model_options* fit,
                                    const lode_bootstrap_options* opts, lode_bootstrap** out);

LODE_API void lode_bootstrap_free(lode_bootstrap* bootstrap);

enum lode_bootstrap_key {
  /* matrices: lode_bootstrap_matrix. Estimates are the full-sample solution's; lower and upper the
     percentile interval (type 7 quantiles of the used replicates); se their standard deviation. */
  LODE_BOOTSTRAP_LOADINGS = 900,            /* items x factors: pattern */
  LODE_BOOTSTRAP_LOADINGS_LOWER = 901,
  LODE_BOOTSTRAP_LOADINGS_UPPER = 902,
  LODE_BOOTSTRAP_LOADINGS_SE = 903,
  LODE_BOOTSTRAP_UNIQUENESSES = 904,        /* items x 1 */
  LODE_BOOTSTRAP_UNIQUENESSES_LOWER = 905,
  LODE_BOOTSTRAP_UNIQUENESSES_UPPER = 906,
  LODE_BOOTSTRAP_UNIQUENESSES_SE = 907,
  LODE_BOOTSTRAP_FACTOR_CORRELATIONS = 908, /* factors x factors (identity with zero-width intervals when
                                               orthogonal) */
  LODE_BOOTSTRAP_FACTOR_CORRELATIONS_LOWER = 909,
  LODE_BOOTSTRAP_FACTOR_CORRELATIONS_UPPER = 910,
  LODE_BOOTSTRAP_FACTOR_CORRELATIONS_SE = 911,
  LODE_BOOTSTRAP_MIN_CONGRUENCE = 912,      /* used x 1: each used replicate's smallest matched congruence */
  /* kept replicates (keep_replicates; else LODE_E_INVALID_ARGUMENT): one row per used replicate */
  LODE_BOOTSTRAP_REPLICATE_LOADINGS = 913,  /* used x (items * factors): aligned pattern, row-major */
  LODE_BOOTSTRAP_REPLICATE_UNIQUENESSES = 914,        /* used x items */
  LODE_BOOTSTRAP_REPLICATE_FACTOR_CORRELATIONS = 915, /* used x (factors * factors), aligned, row-major */
  /* numbers: lode_bootstrap_value */
  LODE_BOOTSTRAP_REPLICATES = 920,          /* requested */
  LODE_BOOTSTRAP_USED = 921,                /* converged and aligned: the intervals come from these */
  LODE_BOOTSTRAP_FAILED = 922,              /* excluded */
  LODE_BOOTSTRAP_POORLY_MATCHED = 923,      /* used replicates with a matched congruence below 0.85 */
  LODE_BOOTSTRAP_LEVEL = 924,
  LODE_BOOTSTRAP_ITEMS = 925,
  LODE_BOOTSTRAP_FACTORS = 926,
  LODE_BOOTSTRAP_OBLIQUE = 927,             /* 1 when the rotation is oblique, else 0 */
  /* text: lode_bootstrap_text */
  LODE_BOOTSTRAP_ALIGNMENT = 950,           /* how replicates were aligned, in words */
  LODE_BOOTSTRAP_FAILURES = 951,            /* one line per reason, most frequent first: "7 replicates: ..." */
  LODE_BOOTSTRAP_NOTES = 952
};

LODE_API int lode_bootstrap_matrix(const lode_bootstrap* bootstrap, int key, double* out, size_t capacity,
                                   int64_t* rows, int64_t* cols);
LODE_API int lode_bootstrap_value(const lode_bootstrap* bootstrap, int key, double* value);
LODE_API int lode_bootstrap_text(const lode_bootstrap* bootstrap, int key, char* out, size_t capacity,
                                 size_t* length);

/* ------------------------------------------------------------------------------------------- */
/* Summaries: the answers reduced to counts, moments and tables, mergeable                      */
/* ------------------------------------------------------------------------------------------- */

/* A summary of blocks of rows holds, per item and per pair of items, the rows answering both with
 * each item's mean and sum of squares about that mean over those rows and the pair's co-moment, and
 * for items with at most max_categories distinct values the count of each value and every pair's
 * contingency table. It gives Pearson, Spearman and polychoric correlations exactly as the rows
 * would (lode_summary_to_data, then lode_correlation_compute), merges exactly up to rounding in any order, and
 * has a documented portable byte form (README, "Summaries"). A summary is changed by
 * lode_summary_add and lode_summary_merge: do not use one handle from several threads while either
 * runs. */
typedef struct lode_summary lode_summary;

typedef struct lode_summary_options {
  size_t struct_size;  /* set by lode_summary_options_init */
  int max_categories;  /* items with at most this many distinct values keep category counts and
                          tables; 2..100, default 11 */
  int listwise;        /* nonzero: only rows with every item answered contribute; default 0 */
} lode_summary_options;

LODE_API int lode_summary_options_init(lode_summary_options* opts, size_t struct_size);

/* An empty summary of `items` items; `names` (NULL, or `items` UTF-8 strings, NULL entries unnamed)
 * name them in messages and must match for a merge. */
LODE_API int lode_summary_create(int64_t items, const char* const* names, const lode_summary_options* opts,
                                 lode_summary** out);

/* Adds a block of rows (respondents x items, strides as for input matrices, NaN = skipped). */
LODE_API int lode_summary_add(lode_summary* summary, const double* values, int64_t rows, int64_t cols,
                              int64_t row_stride, int64_t col_stride);

/* Adds `other` into `into` (which may be `other` itself). Summaries of different items, category
 * limits or missing-value policies are refused, naming the difference; `into` is then unchanged. */
LODE_API int lode_summary_merge(lode_summary* into, const lode_summary* other);

/* The portable byte form, under the size-query rule: with out == NULL and capacity 0 only *length
 * is set; a smaller buffer gives LODE_E_BUFFER_TOO_SMALL. */
LODE_API int lode_summary_to_bytes(const lode_summary* summary, uint8_t* out, size_t capacity, size_t* length);

/* Reads the byte form; a truncated, corrupted or other-version form is LODE_E_INVALID_ARGUMENT
 * with a message saying what is wrong. */
LODE_API int lode_summary_from_bytes(const uint8_t* bytes, size_t length, lode_summary** out);

/* A data handle for lode_correlation_compute (and everything built on a correlation: factorability, factor
 * count, fit, omega). Its correlation's missing option must match the summary's policy. Scores,
 * alpha and the bootstrap need rows and refuse it. The data handle keeps its own copy. */
LODE_API int lode_summary_to_data(const lode_summary* summary, lode_data** out);

LODE_API void lode_summary_free(lode_summary* summary);

enum lode_summary_key {
  /* matrices: lode_summary_matrix */
  LODE_SUMMARY_PAIR_COUNTS = 1100,     /* items x items: rows answering both */
  LODE_SUMMARY_MEANS = 1101,           /* items x items: (i, j) mean of item i over the rows answering i and j */
  LODE_SUMMARY_SUMS_OF_SQUARES = 1102, /* items x items: (i, j) sum of squares of item i about that mean */
  LODE_SUMMARY_COMOMENTS = 1103,       /* items x items: sums of products of deviations about the pair's means */
  LODE_SUMMARY_CATEGORIES = 1104,      /* items x max_categories: each item's values ascending, NaN-padded
                                          (a row of NaN: over the limit) */
  LODE_SUMMARY_CATEGORY_COUNTS = 1105, /* items x max_categories: their counts, NaN-padded */
  /* numbers: lode_summary_value */
  LODE_SUMMARY_N_ROWS = 1120,          /* rows added */
  LODE_SUMMARY_ROWS_COMPLETE = 1121,   /* rows with every item answered */
  LODE_SUMMARY_ROWS_ANSWERED = 1122,   /* rows with at least one item answered */
  LODE_SUMMARY_MISSING_CELLS = 1123,
  LODE_SUMMARY_ITEMS = 1124,
  LODE_SUMMARY_MAX_CATEGORIES = 1125,
  LODE_SUMMARY_LISTWISE = 1126,        /* 1 for a listwise summary, else 0 */
  LODE_SUMMARY_FORMAT_VERSION = 1127   /* the byte form's version this library writes */
};

LODE_API int lode_summary_matrix(const lode_summary* summary, int key, double* out, size_t capacity, int64_t* rows,
                                 int64_t* cols);
LODE_API int lode_summary_value(const lode_summary* summary, int key, double* value);

/* The contingency table of items a and b (0-based, a != b): rows the categories of a, columns those
 * of b (as LODE_SUMMARY_CATEGORIES lists them). LODE_E_INVALID_ARGUMENT when either item is over
 * the category limit. */
LODE_API int lode_summary_table(const lode_summary* summary, int64_t a, int64_t b, double* out, size_t capacity,
                                int64_t* rows, int64_t* cols);

/* The name of item `index` (0-based; "" when unnamed), under the text size-query rule. */
LODE_API int lode_summary_item_name(const lode_summary* summary, int64_t index, char* out, size_t capacity,
                                    size_t* length);

/* ------------------------------------------------------------------------------------------- */
/* The restricted (confirmatory) factor model by maximum likelihood                            */
/* ------------------------------------------------------------------------------------------- */

typedef struct lode_restricted_fit_options {
  size_t struct_size;     /* set by lode_restricted_fit_options_init */
  int max_iterations;     /* Newton / Fisher scoring iterations; default 500 */
  double tolerance;       /* largest component of the projected gradient of F; default 1e-10 */
  double min_uniqueness;  /* lower bound of the uniquenesses (an item held there is a Heywood case);
                             default 0.005 */
  double interval_level;  /* of the RMSEA interval, in (0, 1); default 0.90 */
} lode_restricted_fit_options;

LODE_API int lode_restricted_fit_options_init(lode_restricted_fit_options* opts, size_t struct_size);

typedef struct lode_restricted_fit lode_restricted_fit;

/* Fits the restricted factor model whose free loadings are the 1s of `pattern` (items x factors of 0
 * and 1, strides as for input matrices; every other loading is fixed at 0) to `corr`'s matrix by
 * maximum likelihood (Joreskog 1969): factor variances fixed at 1, factor correlations and
 * uniquenesses free. Needs corr's number of observations, more than the items (else
 * LODE_E_INSUFFICIENT_DATA: the sample covariance of n <= p respondents is singular). A pattern with an item on no factor or a
 * factor with fewer than two items is LODE_E_INVALID_ARGUMENT naming it; one leaving negative degrees
 * of freedom LODE_E_TOO_MANY_FACTORS. Non-convergence and Heywood cases are reported (keys below),
 * not errors. Chi-square = (N - 1) F (no Bartlett correction); CFI (Bentler 1990), TLI, RMSEA with
 * its interval (Browne & Cudeck 1993), SRMR (correlation scale, lower triangle with the diagonal),
 * BIC = chi2 - df ln N. Standard errors from the inverse observed information. */
LODE_API int lode_restricted_fit_compute(const lode_correlation* corr, const double* pattern, int64_t items,
                                         int64_t factors, int64_t row_stride, int64_t col_stride,
                                         const lode_restricted_fit_options* opts, lode_restricted_fit** out);

LODE_API void lode_restricted_fit_free(lode_restricted_fit* fit);

enum lode_restricted_fit_key {
  /* matrices: lode_restricted_fit_matrix */
  LODE_RESTRICTED_FIT_LOADINGS = 1600,               /* items x factors; 0 where the pattern fixes them */
  LODE_RESTRICTED_FIT_LOADINGS_SE = 1601,            /* items x factors; NaN where fixed */
  LODE_RESTRICTED_FIT_FACTOR_CORRELATIONS = 1602,    /* factors x factors */
  LODE_RESTRICTED_FIT_FACTOR_CORRELATIONS_SE = 1603, /* factors x factors; NaN on the diagonal */
  LODE_RESTRICTED_FIT_UNIQUENESSES = 1604,           /* items x 1 */
  LODE_RESTRICTED_FIT_UNIQUENESSES_SE = 1605,        /* items x 1; NaN for one held at its bound */
  LODE_RESTRICTED_FIT_HEYWOOD = 1606,                /* items x 1: 1 where the uniqueness is at its bound */
  LODE_RESTRICTED_FIT_PATTERN = 1607,                /* items x factors: the pattern fitted */
  /* numbers: lode_restricted_fit_value */
  LODE_RESTRICTED_FIT_ITEMS = 1620,
  LODE_RESTRICTED_FIT_FACTORS = 1621,
  LODE_RESTRICTED_FIT_N_OBS = 1622,
  LODE_RESTRICTED_FIT_CONVERGED = 1623,              /* 1 or 0 */
  LODE_RESTRICTED_FIT_ITERATIONS = 1624,
  LODE_RESTRICTED_FIT_FINAL_CHANGE = 1625,           /* the criterion at the last iteration */
  LODE_RESTRICTED_FIT_TOLERANCE = 1626,
  LODE_RESTRICTED_FIT_HEYWOOD_COUNT = 1627,
  LODE_RESTRICTED_FIT_FREE_PARAMETERS = 1628,
  LODE_RESTRICTED_FIT_DISCREPANCY = 1629,            /* F at the estimate */
  LODE_RESTRICTED_FIT_CHI_SQUARE = 1630,             /* (N - 1) F */
  LODE_RESTRICTED_FIT_DF = 1631,
  LODE_RESTRICTED_FIT_P_VALUE = 1632,                /* NaN when df = 0 (also TLI and RMSEA) */
  LODE_RESTRICTED_FIT_CFI = 1633,
  LODE_RESTRICTED_FIT_TLI = 1634,
  LODE_RESTRICTED_FIT_RMSEA = 1635,
  LODE_RESTRICTED_FIT_RMSEA_LOWER = 1636,
  LODE_RESTRICTED_FIT_RMSEA_UPPER = 1637,
  LODE_RESTRICTED_FIT_SRMR = 1638,
  LODE_RESTRICTED_FIT_BIC = 1639,
  LODE_RESTRICTED_FIT_NULL_CHI_SQUARE = 1640,        /* of the independence model */
  LODE_RESTRICTED_FIT_NULL_DF = 1641,
  LODE_RESTRICTED_FIT_PROPER_CORRELATIONS = 1642,    /* 1 when the factor correlations are positive definite */
  /* text: lode_restricted_fit_text */
  LODE_RESTRICTED_FIT_NOTES = 1650
};

LODE_API int lode_restricted_fit_matrix(const lode_restricted_fit* fit, int key, double* out, size_t capacity,
                                        int64_t* rows, int64_t* cols);
LODE_API int lode_restricted_fit_value(const lode_restricted_fit* fit, int key, double* value);
LODE_API int lode_restricted_fit_text(const lode_restricted_fit* fit, int key, char* out, size_t capacity,
                                      size_t* length);

/* ------------------------------------------------------------------------------------------- */
/* Split-sample replication                                                                    */
/* ------------------------------------------------------------------------------------------- */

typedef struct lode_replication_options {
  size_t struct_size;        /* set by lode_replication_options_init */
  int64_t splits;            /* random splits into halves (at least 2); default 100 */
  uint64_t seed;             /* split i shuffles the respondents with stream i of this seed; default 1 */
  int threads;               /* 0 (default) = all cores; results do not depend on it */
  lode_progress_fn progress; /* splits done / splits; optional; cancelling gives LODE_E_CANCELLED */
  void* progress_user;
} lode_replication_options;

LODE_API int lode_replication_options_init(lode_replication_options* opts, size_t struct_size);

typedef struct lode_replication lode_replication;

/* Splits the respondents behind `corr` (raw data) at random into halves, `splits` times; each half is
 * correlated with corr's options and extracted and rotated as `fit` says (factors at least 1; its
 * progress is not used), aligned to the full-sample solution (Tucker congruence, Hungarian matching,
 * reflection), and the halves' factors compared. Splits whose halves fail are counted and left out. */
LODE_API int lode_replication_compute(const lode_correlation* corr, const lode_model_options* fit,
                                      const lode_replication_options* opts, lode_replication** out);

LODE_API void lode_replication_free(lode_replication* replication);

enum lode_replication_key {
  /* matrices: lode_replication_matrix */
  LODE_REPLICATION_CONGRUENCE_MEDIAN = 1700, /* factors x 1: median congruence between the halves */
  LODE_REPLICATION_CONGRUENCE_P5 = 1701,     /* factors x 1: its 5th percentile */
  LODE_REPLICATION_SHARE_FAIR = 1702,        /* factors x 1: share of splits with congruence >= 0.85 */
  LODE_REPLICATION_SHARE_EQUAL = 1703,       /* factors x 1: ... >= 0.95 (Lorenzo-Seva & ten Berge 2006) */
  LODE_REPLICATION_ITEM_STABILITY = 1704,    /* items x 1: share of splits with the item on the same factor */
  LODE_REPLICATION_CONGRUENCE = 1705,        /* used splits x factors */
  LODE_REPLICATION_LOADINGS = 1706,          /* items x factors: the full-sample pattern */
  /* numbers: lode_replication_value */
  LODE_REPLICATION_SPLITS = 1720,
  LODE_REPLICATION_USED = 1721,
  LODE_REPLICATION_FAILED = 1722,
  LODE_REPLICATION_FACTORS = 1723,
  LODE_REPLICATION_ITEMS = 1724,
  LODE_REPLICATION_SUGGESTED_FULL = 1725,    /* count by the empirical Kaiser criterion, full sample */
  LODE_REPLICATION_SHARE_SAME_COUNT = 1726,  /* share of splits whose halves suggest the same count */
  LODE_REPLICATION_SHARE_FULL_COUNT = 1727,  /* ... both the full sample's count */
  /* text: lode_replication_text */
  LODE_REPLICATION_FAILURES = 1750,
  LODE_REPLICATION_NOTES = 1751
};

LODE_API int lode_replication_matrix(const lode_replication* replication, int key, double* out, size_t capacity,
                                     int64_t* rows, int64_t* cols);
LODE_API int lode_replication_value(const lode_replication* replication, int key, double* value);
LODE_API int lode_replication_text(const lode_replication* replication, int key, char* out, size_t capacity,
                                   size_t* length);

/* ------------------------------------------------------------------------------------------- */
/* The confirmatory check on held-out respondents                                              */
/* ------------------------------------------------------------------------------------------- */

typedef struct lode_holdout_options {
  size_t struct_size;  /* set by lode_holdout_options_init */
  double share;        /* of the respondents held out, in (0, 1); default 0.5 */
  uint64_t seed;       /* the hold-out draw uses stream 0 of this seed; default 1 */
  double salient;      /* the strong-loading cut of the simple structure; default 0.40 */
  const lode_restricted_fit_options* restricted; /* NULL = defaults */
} lode_holdout_options;

LODE_API int lode_holdout_options_init(lode_holdout_options* opts, size_t struct_size);

typedef struct lode_holdout lode_holdout;

/* Holds out a share of the respondents behind `corr` (raw data), runs the analysis `fit` says (factors
 * at least 1) on the rest, takes its simple structure (each item on the factor of its largest |loading|
 * at or above `salient`; items salient nowhere left out and listed) and fits that restricted model to
 * the held-out respondents' correlations. A share leaving either part with no more respondents than
 * items is LODE_E_INSUFFICIENT_DATA naming the workable shares. */
LODE_API int lode_holdout_compute(const lode_correlation* corr, const lode_model_options* fit,
                                  const lode_holdout_options* opts, lode_holdout** out);

/* The confirmatory fit of a hold-out check as a restricted fit handle of its own (items: those
 * fitted, LODE_HOLDOUT_ITEMS_FITTED), freed with lode_restricted_fit_free. */
LODE_API int lode_restricted_fit_from_holdout(const lode_holdout* holdout, lode_restricted_fit** out);

LODE_API void lode_holdout_free(lode_holdout* holdout);

enum lode_holdout_key {
  /* matrices: lode_holdout_matrix */
  LODE_HOLDOUT_EXPLORATORY_LOADINGS = 1800,  /* items x factors: pattern on the remaining respondents */
  LODE_HOLDOUT_EXPLORATORY_FACTOR_CORRELATIONS = 1801,
  LODE_HOLDOUT_PATTERN = 1802,               /* items x factors: the simple structure (0/1) */
  LODE_HOLDOUT_ITEMS_FITTED = 1803,          /* fitted x 1: 0-based item indices in the confirmatory fit */
  LODE_HOLDOUT_ITEMS_LEFT_OUT = 1804,        /* left out x 1 (0 x 1 when none): salient nowhere */
  LODE_HOLDOUT_ROWS = 1805,                  /* held out x 1: 0-based row indices of the held-out respondents */
  /* numbers: lode_holdout_value */
  LODE_HOLDOUT_N_EXPLORE = 1820,
  LODE_HOLDOUT_N_HOLDOUT = 1821,
  LODE_HOLDOUT_SHARE = 1822,
  LODE_HOLDOUT_SALIENT = 1823,
  /* text: lode_holdout_text */
  LODE_HOLDOUT_NOTES = 1850
};

LODE_API int lode_holdout_matrix(const lode_holdout* holdout, int key, double* out, size_t capacity, int64_t* rows,
                                 int64_t* cols);
LODE_API int lode_holdout_value(const lode_holdout* holdout, int key, double* value);
LODE_API int lode_holdout_text(const lode_holdout* holdout, int key, char* out, size_t capacity, size_t* length);

#ifdef __cplusplus
} /* extern "C" */
#endif

#endif /* LODE_H */
