/* The counters and helpers behind capi_check.h. */
#include "capi_check.h"

#include <stdlib.h>
#include <string.h>

int failures = 0;
int checks = 0;

void expect_status(int got, int expected, const char* fragment, const char* call, const char* file, int line) {
  ++checks;
  if (got != expected) {
    ++failures;
    fprintf(stderr, "%s:%d: %s returned %d (%s), expected %d (%s); last error: %s\n", file, line, call, got,
            lode_status_name(got), expected, lode_status_name(expected), lode_error_message());
    return;
  }
  if (expected == LODE_OK) {
    if (lode_error_message()[0] != '\0') {
      ++failures;
      fprintf(stderr, "%s:%d: %s succeeded but left the message '%s'\n", file, line, call, lode_error_message());
    }
  } else if (fragment != NULL && strstr(lode_error_message(), fragment) == NULL) {
    ++failures;
    fprintf(stderr, "%s:%d: %s: message '%s' lacks '%s'\n", file, line, call, lode_error_message(), fragment);
  }
}

double nan_value(void) { return strtod("nan", NULL); }
double inf_value(void) { return strtod("inf", NULL); }

int check_report(const char* name) {
  printf("%s: %d checks, %d failures\n", name, checks, failures);
  return failures == 0 ? 0 : 1;
}
