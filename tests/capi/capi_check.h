/* The check macros of every C test of the C ABI (capi_test.c and its per-handle files, and the
 * stand-alone programs such as summary_test.c and replication_test.c), and the counters they update;
 * defined once in capi_check.c. */
#ifndef LODE_CAPI_CHECK_H
#define LODE_CAPI_CHECK_H

#include "lode.h"

#include <stdio.h>

extern int failures;
extern int checks;

#define CHECK(cond)                                                            \
  do {                                                                         \
    ++checks;                                                                  \
    if (!(cond)) {                                                             \
      ++failures;                                                              \
      fprintf(stderr, "%s:%d: check failed: %s\n", __FILE__, __LINE__, #cond); \
    }                                                                          \
  } while (0)

/* A call must return `expected`; on a failure status the last error must contain `fragment`, on
 * success the last error must be empty. */
void expect_status(int got, int expected, const char* fragment, const char* call, const char* file, int line);
#define EXPECT(call, status, fragment) expect_status((call), (status), (fragment), #call, __FILE__, __LINE__)
#define OK(call) expect_status((call), LODE_OK, NULL, #call, __FILE__, __LINE__)

double nan_value(void);
double inf_value(void);

/* Prints "<name>: N checks, M failures" and returns the process's exit status (0: none failed). */
int check_report(const char* name);

#endif
