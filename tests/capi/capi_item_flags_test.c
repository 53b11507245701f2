/* The C ABI from C: lode_item_flags. */
#include "capi_test.h"

#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <string.h>

void test_item_flags(void) {
  lode_correlation* c = population_correlation(250);
  lode_model* m = NULL;
  lode_item_flags* f = NULL;
  lode_item_flags_options o;
  lode_model_options fo;
  lode_rotation_options ro;
  double codes[6], table[9 * 5], v;
  char text[2048];
  size_t len = 99;
  int64_t rows = -1, cols = -1;
  int i;

  OK(lode_model_options_init(&fo, sizeof fo));
  OK(lode_rotation_options_init(&ro, sizeof ro));
  fo.factors = 2;
  fo.rotation = &ro;
  OK(lode_model_compute(c, &fo, &m));

  EXPECT(lode_item_flags_options_init(NULL, sizeof o), LODE_E_INVALID_ARGUMENT, "'opts' is NULL");
  EXPECT(lode_item_flags_options_init(&o, 1), LODE_E_INVALID_ARGUMENT, "too small");
  OK(lode_item_flags_options_init(&o, sizeof o));
  /* the defaults (common practice) */
  CHECK(o.salient == 0.40 && o.cross_loading_gap == 0.20 && o.low_communality == 0.20 && o.heywood_uniqueness == 0.005);

  /* The population solution (loadings .8 .7 .6 / .7 .6 .5, no cross-loadings, communalities >= .25)
   * raises no flag under the common-practice defaults. */
  EXPECT(lode_item_flags_compute(NULL, &o, &f), LODE_E_INVALID_ARGUMENT, "'model' is NULL");
  EXPECT(lode_item_flags_compute(m, &o, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  OK(lode_item_flags_compute(m, NULL, &f));
  OK(lode_item_flags_matrix(f, LODE_ITEM_FLAGS_TABLE, NULL, 0, &rows, &cols));
  CHECK(rows == 0 && cols == 5);
  OK(lode_item_flags_matrix(f, LODE_ITEM_FLAGS_CODES, codes, 6, &rows, &cols));
  CHECK(rows == 6 && cols == 1);
  for (i = 0; i < 6; ++i) CHECK(codes[i] == 0.0);
  OK(lode_item_flags_value(f, LODE_ITEM_FLAGS_COUNT, &v));
  CHECK(v == 0.0);
  OK(lode_item_flags_text(f, LODE_ITEM_FLAGS_NOTES, text, sizeof text, &len));
  CHECK(len == 0 && text[0] == '\0');
  OK(lode_item_flags_item_notes(f, 5, text, sizeof text, &len));
  CHECK(len == 0);
  lode_item_flags_free(f);
  f = NULL;

  /* Stricter thresholds, the expected flags worked out by hand from the population loadings and
   * the rules of item_flags.hpp: salient .65 leaves items 3, 5, 6 (largest .6, .6, .5) without a
   * salient loading; communality below .40 flags items 3, 5, 6 (.36, .36, .25); uniqueness at or
   * below .55 flags items 1, 2, 4 (.36, .51, .51) as Heywood cases. */
  o.salient = 0.65;
  o.low_communality = 0.40;
  o.heywood_uniqueness = 0.55;
  OK(lode_item_flags_compute(m, &o, &f));
  OK(lode_item_flags_matrix(f, LODE_ITEM_FLAGS_CODES, codes, 6, NULL, NULL));
  CHECK(codes[0] == LODE_FLAG_HEYWOOD_CASE && codes[1] == LODE_FLAG_HEYWOOD_CASE &&
        codes[3] == LODE_FLAG_HEYWOOD_CASE);
  CHECK(codes[2] == (LODE_FLAG_NO_SALIENT_LOADING | LODE_FLAG_LOW_COMMUNALITY));
  CHECK(codes[4] == codes[2] && codes[5] == codes[2]);
  OK(lode_item_flags_value(f, LODE_ITEM_FLAGS_COUNT, &v));
  CHECK(v == 9.0);
  OK(lode_item_flags_value(f, LODE_ITEM_FLAGS_ITEMS_FLAGGED, &v));
  CHECK(v == 6.0);
  OK(lode_item_flags_value(f, LODE_ITEM_FLAGS_ITEMS, &v));
  CHECK(v == 6.0);
  OK(lode_item_flags_value(f, LODE_ITEM_FLAGS_SALIENT, &v));
  CHECK(v == 0.65);
  OK(lode_item_flags_value(f, LODE_ITEM_FLAGS_CROSS_LOADING_GAP, &v));
  CHECK(v == 0.20);
  OK(lode_item_flags_value(f, LODE_ITEM_FLAGS_LOW_COMMUNALITY, &v));
  CHECK(v == 0.40);
  OK(lode_item_flags_value(f, LODE_ITEM_FLAGS_HEYWOOD_UNIQUENESS, &v));
  CHECK(v == 0.55);
  OK(lode_item_flags_matrix(f, LODE_ITEM_FLAGS_TABLE, table, 9 * 5, &rows, &cols));
  CHECK(rows == 9 && cols == 5);
  /* rows in item order: item 3 (index 2) is rows 2 and 3: no salient loading (.6 on factor 1), then
   * low communality (.36) */
  CHECK(table[2 * 5 + 0] == 2.0 && table[2 * 5 + 1] == LODE_FLAG_NO_SALIENT_LOADING && table[2 * 5 + 2] == 0.0 &&
        table[2 * 5 + 3] == -1.0 && fabs(table[2 * 5 + 4] - 0.6) < 1e-4);
  CHECK(table[3 * 5 + 0] == 2.0 && table[3 * 5 + 1] == LODE_FLAG_LOW_COMMUNALITY && fabs(table[3 * 5 + 4] - 0.36) < 1e-4);
  CHECK(table[0] == 0.0 && table[1] == LODE_FLAG_HEYWOOD_CASE && fabs(table[4] - 0.36) < 1e-4);
  OK(lode_item_flags_matrix(f, LODE_ITEM_FLAGS_COMMUNALITIES, codes, 6, NULL, NULL));
  CHECK(fabs(codes[0] - 0.64) < 1e-4 && fabs(codes[5] - 0.25) < 1e-4);
  OK(lode_item_flags_text(f, LODE_ITEM_FLAGS_NOTES, NULL, 0, &len));
  CHECK(len > 0);
  OK(lode_item_flags_item_notes(f, 2, text, sizeof text, &len));
  CHECK(strstr(text, "no salient loading") != NULL && strstr(text, "low communality") != NULL);
  CHECK(strchr(text, '\n') != NULL && strlen(text) == len);
  OK(lode_item_flags_item_notes(f, 0, text, sizeof text, NULL));
  CHECK(strstr(text, "Heywood") != NULL && strchr(text, '\n') == NULL);
  EXPECT(lode_item_flags_item_notes(f, 6, text, sizeof text, NULL), LODE_E_INVALID_ARGUMENT, "item 6 does not exist");
  EXPECT(lode_item_flags_item_notes(f, -1, text, sizeof text, NULL), LODE_E_INVALID_ARGUMENT, "numbered 0 to 5");
  EXPECT(lode_item_flags_item_notes(f, 2, text, 4, NULL), LODE_E_BUFFER_TOO_SMALL, "buffer holds 4");
  EXPECT(lode_item_flags_item_notes(NULL, 2, text, sizeof text, NULL), LODE_E_INVALID_ARGUMENT, "'flags' is NULL");
  EXPECT(lode_item_flags_matrix(f, LODE_ITEM_FLAGS_CODES, codes, 5, NULL, NULL), LODE_E_BUFFER_TOO_SMALL, "holds 5");
  EXPECT(lode_item_flags_matrix(f, LODE_ITEM_FLAGS_TABLE, NULL, 3, NULL, NULL), LODE_E_INVALID_ARGUMENT, "'out' is NULL");
  EXPECT(lode_item_flags_matrix(f, LODE_ITEM_FLAGS_COUNT, codes, 6, NULL, NULL), LODE_E_INVALID_ARGUMENT, "key 1020");
  EXPECT(lode_item_flags_value(f, LODE_ITEM_FLAGS_CODES, &v), LODE_E_INVALID_ARGUMENT, "key 1000");
  EXPECT(lode_item_flags_value(f, LODE_ITEM_FLAGS_COUNT, NULL), LODE_E_INVALID_ARGUMENT, "'value' is NULL");
  EXPECT(lode_item_flags_text(f, LODE_ITEM_FLAGS_COUNT, text, sizeof text, NULL), LODE_E_INVALID_ARGUMENT, "key 1020");
  EXPECT(lode_item_flags_matrix(NULL, LODE_ITEM_FLAGS_CODES, codes, 6, NULL, NULL), LODE_E_INVALID_ARGUMENT, "NULL");
  EXPECT(lode_item_flags_value(NULL, LODE_ITEM_FLAGS_COUNT, &v), LODE_E_INVALID_ARGUMENT, "NULL");
  EXPECT(lode_item_flags_text(NULL, LODE_ITEM_FLAGS_NOTES, text, sizeof text, NULL), LODE_E_INVALID_ARGUMENT, "NULL");
  lode_item_flags_free(f);
  f = NULL;

  /* a gap of .75 makes every item whose largest loading is below .75 a cross-loading (its second
   * loading is 0): items 2-6 */
  OK(lode_item_flags_options_init(&o, sizeof o));
  o.cross_loading_gap = 0.75;
  OK(lode_item_flags_compute(m, &o, &f));
  OK(lode_item_flags_matrix(f, LODE_ITEM_FLAGS_CODES, codes, 6, NULL, NULL));
  CHECK(codes[0] == 0.0);
  for (i = 1; i < 6; ++i) CHECK(codes[i] == LODE_FLAG_CROSS_LOADING);
  OK(lode_item_flags_matrix(f, LODE_ITEM_FLAGS_TABLE, table, 9 * 5, &rows, NULL));
  CHECK(rows == 5 && table[3] >= 0.0 && table[3] != table[2] && fabs(table[4]) < 1e-4);
  lode_item_flags_free(f);
  f = NULL;

  /* bad thresholds, non-finite thresholds, an older and a broken struct */
  o.salient = 1.5;
  EXPECT(lode_item_flags_compute(m, &o, &f), LODE_E_INVALID_ARGUMENT, "thresholds must lie in [0, 1]");
  o.salient = nan_value();
  EXPECT(lode_item_flags_compute(m, &o, &f), LODE_E_INVALID_ARGUMENT, "salient nan");
  o.salient = 0.4;
  o.low_communality = -0.1;
  EXPECT(lode_item_flags_compute(m, &o, &f), LODE_E_INVALID_ARGUMENT, "low communality -0.1");
  CHECK(f == NULL);
  o.struct_size = offsetof(lode_item_flags_options, low_communality); /* older: salient and gap only */
  OK(lode_item_flags_compute(m, &o, &f));
  OK(lode_item_flags_value(f, LODE_ITEM_FLAGS_LOW_COMMUNALITY, &v));
  CHECK(v == 0.20);
  lode_item_flags_free(f);
  f = NULL;
  o.struct_size = 0;
  EXPECT(lode_item_flags_compute(m, &o, &f), LODE_E_INVALID_ARGUMENT, "lode_item_flags_options_init");
  CHECK(f == NULL);
  lode_item_flags_free(NULL);
  lode_model_free(m);
  lode_correlation_free(c);
}
