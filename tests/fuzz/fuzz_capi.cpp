// libFuzzer target over every entry point of liblode: whatever bytes arrive, every call must return a
// status (no crash, hang, leak or undefined behaviour; ASan and UBSan watch). The bytes choose the
// entry point, the shape, the layout, the options, the values (either raw doubles or small
// Likert-like codes with missing and infinite cells, so that deeper stages are reached too) and a
// structured missing-value pattern (a whole item missing, disjoint answer sets, one shared row).
#include "lode.h"

#include <cmath>
#include <cstddef>
#include <cstdint>
#include <cstring>
#include <limits>
#include <algorithm>
#include <vector>

namespace {

struct Bytes {
  const uint8_t* p;
  size_t n;
  uint32_t filler = 12345;  // once the input runs out, a fixed pseudo-random sequence fills in
  uint8_t byte() {
    if (n == 0) {
      filler = filler * 1103515245u + 12345u;
      return static_cast<uint8_t>(filler >> 16);
    }
    --n;
    return *p++;
  }
  double real() {
    if (n < 8) return byte();
    double v;
    std::memcpy(&v, p, 8);
    p += 8;
    n -= 8;
    return v;
  }
};

double coded(uint8_t b) {
  if (b == 255) return std::numeric_limits<double>::quiet_NaN();
  if (b == 254) return std::numeric_limits<double>::infinity();
  if (b >= 240) return std::numeric_limits<double>::quiet_NaN();
  return static_cast<double>(b % 5 + 1);
}

// A structured missing-value pattern over raw data (rows x cols at the given strides), chosen by the
// input: a whole item missing, two item sets answered in disjoint rows, the same with one shared row,
// or an item answered in its first few rows only. Random NaN cells rarely make these.
void missing_pattern(std::vector<double>& values, int64_t rows, int64_t cols, int64_t rs, int64_t cs, Bytes& in) {
  const uint8_t plan = in.byte();
  if (rows == 0 || cols == 0 || plan % 5 == 0) return;
  const auto at = [&](int64_t i, int64_t j) -> double& { return values[static_cast<size_t>(i * rs + j * cs)]; };
  const double nan = std::numeric_limits<double>::quiet_NaN();
  const int64_t item = (plan >> 3) % cols;
  switch (plan % 5) {
    case 1:  // a whole item missing
      for (int64_t i = 0; i < rows; ++i) at(i, item) = nan;
      break;
    case 2:    // items up to `item` answered in the first half of the rows only, the rest in the second
    case 3: {  // ... and row 0 answered by every item (one shared row)
      const int64_t half = rows / 2;
      for (int64_t i = 0; i < rows; ++i)
        for (int64_t j = 0; j < cols; ++j)
          if ((j <= item) != (i < half) && !(plan % 5 == 3 && i == 0)) at(i, j) = nan;
      break;
    }
    case 4: {  // one item answered in its first k rows only
      const int64_t k = in.byte() % 4;
      for (int64_t i = k; i < rows; ++i) at(i, item) = nan;
      break;
    }
  }
}

// The entry points that take no handle: version, status names, the last error, and the rotation
// name lookup with words from the input (stray spaces, case, unknown words).
void plain_calls(Bytes& in) {
  lode_version();
  for (int status = -2; status < 13; ++status) lode_status_name(status);
  lode_error_message();
  char word[24];
  const size_t length = in.byte() % sizeof word;
  for (size_t k = 0; k < length; ++k) word[k] = static_cast<char>(in.byte());
  word[length] = '\0';
  int method = -1;
  if (lode_criterion_from_name(word, &method) == LODE_OK && lode_criterion_name(method) == nullptr)
    __builtin_trap();  // a name that was found has a name to give back
  lode_criterion_from_name(nullptr, &method);
  lode_criterion_from_name(word, nullptr);
  for (int m = -1; m < 16; ++m) lode_criterion_name(m);
}

// Reads every result of a correlation with several buffer sizes.
void read_correlation(const lode_correlation* c, Bytes& in) {
  static const int matrix_keys[] = {LODE_CORRELATION_MATRIX, LODE_CORRELATION_PAIR_COUNTS, LODE_CORRELATION_EIGENVALUES,
                                    LODE_CORRELATION_REDUCED_EIGENVALUES, LODE_CORRELATION_SMC, 0, 999};
  for (int key : matrix_keys) {
    int64_t rows = 0, cols = 0;
    if (lode_correlation_matrix(c, key, nullptr, 0, &rows, &cols) != LODE_OK) continue;
    const size_t need = static_cast<size_t>(rows * cols);
    std::vector<double> buf(need + 1);
    lode_correlation_matrix(c, key, buf.data(), need - (in.byte() & 1), &rows, &cols);
  }
  for (int key = 118; key < 138; ++key) {
    double v;
    lode_correlation_value(c, key, &v);
  }
  size_t len = 0;
  if (lode_correlation_text(c, LODE_CORRELATION_NOTES, nullptr, 0, &len) == LODE_OK) {
    std::vector<char> text(len + 1);
    lode_correlation_text(c, LODE_CORRELATION_NOTES, text.data(), len + 1 - (in.byte() & 1), &len);
  }
}


// A progress callback that cancels after a number of reports chosen by the input (negative: never).
int fuzz_progress(void* user, int64_t done, int64_t total) {
  auto* left = static_cast<int*>(user);
  if (done < 0 || done > total) __builtin_trap();  // the interface promises 0 <= done <= total
  if (*left < 0) return 0;
  return (*left)-- == 0 ? 1 : 0;
}

// Item flags of a fitted model with thresholds chosen by the input (some outside [0, 1]), read back.
void flag(const lode_model* m, Bytes& in) {
  lode_item_flags_options o;
  lode_item_flags_options_init(&o, sizeof o);
  const uint8_t plan = in.byte();
  if (plan & 1) o.salient = (in.byte() % 12) / 10.0;
  if (plan & 2) o.cross_loading_gap = (in.byte() % 12) / 10.0 - 0.05;
  if (plan & 4) o.low_communality = (in.byte() % 12) / 10.0;
  if (plan & 8) o.heywood_uniqueness = (in.byte() % 12) / 10.0;
  if (plan & 16) o.struct_size = offsetof(lode_item_flags_options, low_communality);
  lode_item_flags* f = nullptr;
  if (lode_item_flags_compute(m, &o, &f) != LODE_OK) return;
  double buf[512], v;
  for (int key = 1000; key < 1003; ++key) lode_item_flags_matrix(f, key, buf, 512, nullptr, nullptr);
  for (int key = 1020; key < 1027; ++key) lode_item_flags_value(f, key, &v);
  char text[4096];
  lode_item_flags_text(f, LODE_ITEM_FLAGS_NOTES, text, sizeof text, nullptr);
  for (int64_t item = -1; item < 15; ++item) lode_item_flags_item_notes(f, item, text, sizeof text, nullptr);
  lode_item_flags_free(f);
}

// The bootstrap of the fit's solution with a tiny number of replicates, read back in full.
void bootstrap(const lode_correlation* c, const lode_model_options& fit, Bytes& in) {
  lode_bootstrap_options o;
  lode_bootstrap_options_init(&o, sizeof o);
  const uint8_t plan = in.byte();
  o.replicates = plan % 5;  // 0 and 1 are refused
  o.level = (plan & 8) ? 0.5 : 0.95;
  o.seed = in.byte();
  o.threads = 1 + (plan >> 7);
  o.keep_replicates = (plan >> 4) & 1;
  o.replicate_random_starts = ((plan >> 5) & 1) ? -1 : 0;
  int cancel_after = (plan & 64) ? static_cast<int>(in.byte() % 3) : -1;
  o.progress = fuzz_progress;
  o.progress_user = &cancel_after;
  lode_bootstrap* b = nullptr;
  if (lode_bootstrap_compute(c, &fit, &o, &b) != LODE_OK) return;
  double buf[1024], v;
  for (int key = 900; key < 916; ++key) {
    int64_t rows = 0, cols = 0;
    if (lode_bootstrap_matrix(b, key, nullptr, 0, &rows, &cols) == LODE_OK && rows * cols <= 1024)
      lode_bootstrap_matrix(b, key, buf, static_cast<size_t>(rows * cols), nullptr, nullptr);
  }
  for (int key = 918; key < 930; ++key) lode_bootstrap_value(b, key, &v);
  char text[4096];
  for (int key = 949; key < 954; ++key) lode_bootstrap_text(b, key, text, sizeof text, nullptr);
  lode_bootstrap_free(b);
}

// A restricted fit with a pattern chosen by the input (which may leave an item on no factor or a factor
// with one item), read back in full.
void read_restricted(const lode_restricted_fit* r) {
  double buf[1024], v;
  for (int key = 1600; key < 1609; ++key) {
    int64_t rows = 0, cols = 0;
    if (lode_restricted_fit_matrix(r, key, nullptr, 0, &rows, &cols) == LODE_OK && rows * cols <= 1024)
      lode_restricted_fit_matrix(r, key, buf, static_cast<size_t>(rows * cols), nullptr, nullptr);
  }
  for (int key = 1619; key < 1644; ++key) lode_restricted_fit_value(r, key, &v);
  char text[4096];
  lode_restricted_fit_text(r, LODE_RESTRICTED_FIT_NOTES, text, sizeof text, nullptr);
}

void restricted_fit(const lode_correlation* c, Bytes& in) {
  int64_t items = 0;
  double v = 0.0;
  if (lode_correlation_value(c, LODE_CORRELATION_ITEMS, &v) != LODE_OK) return;
  items = static_cast<int64_t>(v);
  const int64_t factors = 1 + in.byte() % 3;
  std::vector<double> pattern(static_cast<size_t>(items * factors), 0.0);
  const uint8_t plan = in.byte();
  for (int64_t i = 0; i < items; ++i) {
    if ((plan & 3) != 3) pattern[static_cast<size_t>(i * factors + i % factors)] = 1.0;  // a simple structure
    else pattern[static_cast<size_t>(i * factors + in.byte() % factors)] = in.byte() % 7 == 0 ? 0.0 : 1.0;
  }
  if ((plan & 12) == 12 && !pattern.empty()) pattern[0] = in.byte() % 3;  // sometimes a 2
  lode_restricted_fit_options o;
  lode_restricted_fit_options_init(&o, sizeof o);
  o.max_iterations = 1 + in.byte() % 100;
  if ((plan & 48) == 48) o.min_uniqueness = in.byte() / 255.0;
  lode_restricted_fit* r = nullptr;
  if (lode_restricted_fit_compute(c, pattern.data(), items, factors, factors, 1, &o, &r) != LODE_OK) return;
  read_restricted(r);
  lode_restricted_fit_free(r);
}

// Split-sample replication and the hold-out check of the fit's solution, tiny, read back in full.
void replication(const lode_correlation* c, const lode_model_options& fit, Bytes& in) {
  lode_replication_options o;
  lode_replication_options_init(&o, sizeof o);
  const uint8_t plan = in.byte();
  o.splits = plan % 4;  // 0 and 1 are refused
  o.seed = in.byte();
  o.threads = 1 + (plan >> 7);
  int cancel_after = (plan & 64) ? static_cast<int>(in.byte() % 3) : -1;
  o.progress = fuzz_progress;
  o.progress_user = &cancel_after;
  lode_replication* r = nullptr;
  if (lode_replication_compute(c, &fit, &o, &r) == LODE_OK) {
    double buf[1024], v;
    for (int key = 1700; key < 1708; ++key) {
      int64_t rows = 0, cols = 0;
      if (lode_replication_matrix(r, key, nullptr, 0, &rows, &cols) == LODE_OK && rows * cols <= 1024)
        lode_replication_matrix(r, key, buf, static_cast<size_t>(rows * cols), nullptr, nullptr);
    }
    for (int key = 1719; key < 1729; ++key) lode_replication_value(r, key, &v);
    char text[4096];
    for (int key = 1749; key < 1753; ++key) lode_replication_text(r, key, text, sizeof text, nullptr);
    lode_replication_free(r);
  }
  lode_holdout_options ho;
  lode_holdout_options_init(&ho, sizeof ho);
  ho.share = (in.byte() % 11) / 10.0;  // 0 and 1 are refused
  ho.seed = in.byte();
  const uint8_t cut = in.byte();
  ho.salient = cut % 7 == 0 ? 0.0 : 0.2 + (cut % 5) / 10.0;  // 0 is refused
  lode_restricted_fit_options ro;
  lode_restricted_fit_options_init(&ro, sizeof ro);
  ro.max_iterations = 50;
  ho.restricted = &ro;
  lode_holdout* h = nullptr;
  if (lode_holdout_compute(c, &fit, &ho, &h) != LODE_OK) return;
  double buf[1024], v;
  for (int key = 1800; key < 1807; ++key) {
    int64_t rows = 0, cols = 0;
    if (lode_holdout_matrix(h, key, nullptr, 0, &rows, &cols) == LODE_OK && rows * cols <= 1024)
      lode_holdout_matrix(h, key, buf, static_cast<size_t>(rows * cols), nullptr, nullptr);
  }
  for (int key = 1819; key < 1825; ++key) lode_holdout_value(h, key, &v);
  char text[4096];
  lode_holdout_text(h, LODE_HOLDOUT_NOTES, text, sizeof text, nullptr);
  lode_restricted_fit* f = nullptr;
  if (lode_restricted_fit_from_holdout(h, &f) == LODE_OK) {
    read_restricted(f);
    lode_restricted_fit_free(f);
  }
  lode_holdout_free(h);
}

// Omega per factor, omega with fuzzed reverse keying, and the Schmid-Leiman transformation of the
// model, each read back in full.
void reliability_of(lode_model* m, Bytes& in) {
  double buf[256], v;
  char text[2048];
  lode_reliability* rel = nullptr;
  if (lode_reliability_compute_omega(m, nullptr, 0, &rel) == LODE_OK) {
    for (int key = 740; key < 746; ++key) lode_reliability_matrix(rel, key, buf, 256, nullptr, nullptr);
    lode_reliability_value(rel, LODE_RELIABILITY_OMEGA_CONVERGED, &v);
    lode_reliability_text(rel, LODE_RELIABILITY_NOTES, text, sizeof text, nullptr);
    lode_reliability_free(rel);
  }
  {
    // Omega with reverse-keyed items: fuzzed keying (valid and not) and per-item reverse flags.
    lode_reliability_options ro;
    lode_reliability_options_init(&ro, sizeof ro);
    ro.keying = in.byte() % 3;
    int64_t rows = 0, cols = 0;
    lode_model_matrix(m, LODE_MODEL_LOADINGS, nullptr, 0, &rows, &cols);
    std::vector<int32_t> reverse(static_cast<std::size_t>(std::max<int64_t>(rows, 0)));
    for (auto& r : reverse) r = in.byte() & 1;
    if (!reverse.empty() && (in.byte() & 1)) {
      ro.reverse = reverse.data();
      ro.reverse_count = static_cast<int64_t>(reverse.size()) - (in.byte() & 1);
    }
    if (lode_reliability_compute_keyed_omega(m, &ro, &rel) == LODE_OK) {
      lode_reliability_matrix(rel, LODE_RELIABILITY_REVERSED, buf, 256, nullptr, nullptr);
      lode_reliability_free(rel);
    }
  }
  lode_schmid_leiman_options slo;
  lode_schmid_leiman_options_init(&slo, sizeof slo);
  slo.second_order = in.byte() % 4;
  lode_schmid_leiman* sl = nullptr;
  if (lode_schmid_leiman_compute(m, &slo, nullptr, 0, &sl) == LODE_OK) {
    for (int key = 1400; key < 1408; ++key) lode_schmid_leiman_matrix(sl, key, buf, 256, nullptr, nullptr);
    for (int key = 1420; key < 1426; ++key) lode_schmid_leiman_value(sl, key, &v);
    lode_schmid_leiman_text(sl, LODE_SCHMID_LEIMAN_NOTES, text, sizeof text, nullptr);
    lode_schmid_leiman_free(sl);
  }
}

// Factorability of the correlations, read back in full.
void factorability(const lode_correlation* c) {
  lode_factorability* f = nullptr;
  if (lode_factorability_compute(c, &f) == LODE_OK) {
    double v;
    for (int key = 218; key < 228; ++key) lode_factorability_value(f, key, &v);
    for (int key : {LODE_FACTORABILITY_MSA, LODE_FACTORABILITY_SMC}) {
      double buf[16];
      lode_factorability_matrix(f, key, buf, 16, nullptr, nullptr);
    }
    char text[256];
    lode_factorability_text(f, LODE_FACTORABILITY_KMO_LABEL, text, sizeof text, nullptr);
    lode_factorability_text(f, LODE_FACTORABILITY_NOTES, text, sizeof text, nullptr);
    lode_factorability_free(f);
  }
}

// Factorability, a small factor count, a fit with the chosen method and rotation, and a rotation of
// the fitted loadings, each read back in full.
void analyse(const lode_correlation* c, const lode_data* d, Bytes& in) {
  factorability(c);
  const uint8_t plan = in.byte();
  lode_factor_count_options co;
  lode_factor_count_options_init(&co, sizeof co);
  co.replicates = 5 + in.byte() % 20;
  co.threads = 1;
  co.seed = in.byte();
  co.source = (plan & 0x80) ? LODE_RANDOM_SOURCE_PERMUTATION : LODE_RANDOM_SOURCE_NORMAL;
  if (plan & 1) {
    lode_factor_count* n = nullptr;
    if (lode_factor_count_compute(c, &co, &n) == LODE_OK) {
      double v, buf[16];
      for (int key = 320; key < 330; ++key) lode_factor_count_value(n, key, &v);
      for (int key = 300; key < 309; ++key) lode_factor_count_matrix(n, key, buf, 16, nullptr, nullptr);
      char text[1024];
      for (int key = 350; key < 353; ++key) lode_factor_count_text(n, key, text, sizeof text, nullptr);
      lode_factor_count_free(n);
    }
  }
  lode_rotation_options ro;
  lode_rotation_options_init(&ro, sizeof ro);
  ro.method = in.byte() % 15;  // includes one unknown method
  ro.normalize = plan & 2;
  ro.random_starts = in.byte() % 3;
  ro.max_iterations = 200;
  ro.threads = 1;
  ro.gamma = (in.byte() % 5) / 4.0;
  ro.kappa = (in.byte() % 5) / 4.0;
  lode_model_options fo;
  lode_model_options_init(&fo, sizeof fo);
  fo.factors = in.byte() % 5;  // 0 = suggested
  fo.method = in.byte() % 5;   // includes one unknown method
  fo.max_iterations = 200;
  fo.rotation = (plan & 4) ? &ro : nullptr;
  fo.factor_count = &co;
  int cancel_after = (plan & 8) ? static_cast<int>(in.byte() % 4) : -1;
  fo.progress = fuzz_progress;
  fo.progress_user = &cancel_after;
  lode_model* m = nullptr;
  if (lode_model_compute(c, &fo, &m) != LODE_OK) return;
  flag(m, in);
  // The bootstrap of the same solution (needs a number of factors, so the one found when it was 0).
  {
    double k = 0.0;
    lode_model_value(m, LODE_MODEL_FACTORS, &k);
    lode_model_options bf = fo;
    bf.factors = static_cast<int>(k);
    bf.progress = nullptr;
    ro.struct_size = sizeof ro;
    bootstrap(c, bf, in);
    replication(c, bf, in);
  }
  restricted_fit(c, in);
  double buf[256], v;
  for (int key = 400; key < 411; ++key) lode_model_matrix(m, key, buf, 256, nullptr, nullptr);
  for (int key = 420; key < 450; ++key) lode_model_value(m, key, &v);
  char text[2048];
  lode_model_text(m, LODE_MODEL_NOTES, text, sizeof text, nullptr);
  int64_t rows = 0, cols = 0;
  if (lode_model_matrix(m, LODE_MODEL_UNROTATED_LOADINGS, buf, 256, &rows, &cols) == LODE_OK) {
    lode_rotation* r = nullptr;
    // Full-size options here: a truncated struct falls back to the defaults (20000 iterations, 10
    // random starts), bounded but far slower than a fuzz unit's time limit under the sanitizers.
    // Older struct sizes are exercised by the strict C99 test.
    ro.struct_size = sizeof ro;
    if (lode_rotation_compute(buf, rows, cols, cols, 1, &ro, &r) == LODE_OK) {
      for (int key = 500; key < 507; ++key) lode_rotation_matrix(r, key, buf, 256, nullptr, nullptr);
      for (int key = 520; key < 529; ++key) lode_rotation_value(r, key, &v);
      lode_rotation_text(r, LODE_ROTATION_METHOD_NAME, text, sizeof text, nullptr);
      lode_rotation_free(r);
    }
  }
  // Scores of the data the model was fitted to (refused for matrix input), omega per factor, and the
  // congruence of the unrotated with the rotated loadings, each read back in full.
  lode_scores_options so;
  lode_scores_options_init(&so, sizeof so);
  so.method = in.byte() % 4;   // includes one unknown method
  so.missing = in.byte() % 3;  // includes one unknown rule
  so.min_answered_share = (in.byte() % 5) / 4.0;
  // The fit's own respondents (data NULL), then the data handle again as new respondents (refused
  // for matrix input), then only its first rows.
  for (int pass = 0; pass < 3; ++pass) {
    lode_scores* s = nullptr;
    lode_data* first = nullptr;
    const lode_data* scored = pass == 0 ? nullptr : d;
    if (pass == 2) {
      int64_t n = 0, p = 0;
      std::vector<double> some(256);
      if (lode_data_shape(d, &n, &p) != LODE_OK || p == 0 || p > 64) break;
      const int64_t keep = 1 + in.byte() % 4;
      for (int64_t k = 0; k < keep * p && k < 256; ++k) some[static_cast<size_t>(k)] = coded(in.byte());
      if (lode_data_from_raw(some.data(), keep, p, p, 1, &first) != LODE_OK) break;
      scored = first;
    }
    if (lode_scores_compute(m, scored, &so, &s) == LODE_OK) {
      for (int key = 600; key < 606; ++key) lode_scores_matrix(s, key, buf, 256, nullptr, nullptr);
      for (int key = 620; key < 624; ++key) lode_scores_value(s, key, &v);
      for (int key = 650; key < 652; ++key) lode_scores_text(s, key, text, sizeof text, nullptr);
      lode_scores_free(s);
    }
    lode_data_free(first);
  }
  reliability_of(m, in);
  double rotated[256];
  if (lode_model_matrix(m, LODE_MODEL_UNROTATED_LOADINGS, buf, 256, &rows, &cols) == LODE_OK &&
      lode_model_matrix(m, LODE_MODEL_LOADINGS, rotated, 256, nullptr, nullptr) == LODE_OK) {
    lode_comparison* cmp = nullptr;
    if (lode_comparison_compute(buf, rotated, rows, cols, cols, 1, cols, 1, &cmp) == LODE_OK) {
      double out[256];
      for (int key = 800; key < 805; ++key) lode_comparison_matrix(cmp, key, out, 256, nullptr, nullptr);
      lode_comparison_text(cmp, LODE_COMPARISON_NOTES, text, sizeof text, nullptr);
      lode_comparison_free(cmp);
    }
  }
  lode_model_free(m);
}

// Groups: codes from the bytes (a few groups), small minimum sizes so analyses are reached.
void groups(const lode_data* d, Bytes& in) {
  int64_t rows = 0, items = 0;
  if (lode_data_shape(d, &rows, &items) != LODE_OK || rows <= 0 || rows > 4096) return;
  std::vector<int64_t> codes(static_cast<size_t>(rows));
  for (auto& code : codes) code = in.byte() % 3;
  lode_group_comparison_options o;
  lode_group_comparison_options_init(&o, sizeof o);
  o.factors = 1 + in.byte() % 3;
  o.min_group = 2 + in.byte() % 8;
  o.rotation = in.byte() % 14;
  o.threads = 1;
  lode_group_comparison* g = nullptr;
  if (lode_group_comparison_compute(d, codes.data(), rows, &o, &g) == LODE_OK) {
    double buf[512], v;
    char text[1024];
    for (int key = 1500; key < 1511; ++key) lode_group_comparison_matrix(g, key, buf, 512, nullptr, nullptr);
    for (int key = 1520; key < 1524; ++key) lode_group_comparison_value(g, key, &v);
    for (int key = 1550; key < 1553; ++key) lode_group_comparison_text(g, key, text, sizeof text, nullptr);
    lode_group_comparison_free(g);
  }
}

// Reliability straight from the data: alpha of raw data, omega of a single scale from its correlations.
void reliability(const lode_data* d, const lode_correlation* c) {
  double buf[64], v;
  char text[1024];
  lode_reliability* rel = nullptr;
  if (lode_reliability_compute_alpha(d, &rel) == LODE_OK) {
    for (int key = 700; key < 705; ++key) lode_reliability_matrix(rel, key, buf, 64, nullptr, nullptr);
    for (int key = 720; key < 726; ++key) lode_reliability_value(rel, key, &v);
    lode_reliability_text(rel, LODE_RELIABILITY_NOTES, text, sizeof text, nullptr);
    lode_reliability_free(rel);
  }
  lode_model_options fo;
  lode_model_options_init(&fo, sizeof fo);
  fo.max_iterations = 200;
  if (lode_reliability_compute_scale_omega(c, &fo, &rel) == LODE_OK) {
    for (int key = 740; key < 746; ++key) lode_reliability_matrix(rel, key, buf, 64, nullptr, nullptr);
    lode_reliability_value(rel, LODE_RELIABILITY_OMEGA_CONVERGED, &v);
    lode_reliability_text(rel, LODE_RELIABILITY_NOTES, text, sizeof text, nullptr);
    lode_reliability_free(rel);
  }
}

// Summaries: built from the rows, merged, written, damaged and read back; and the rest of the input
// read as a summary's byte form directly. Whatever gets read is correlated.
void correlate_summary(const lode_summary* s, Bytes& in) {
  lode_data* d = nullptr;
  if (lode_summary_to_data(s, &d) != LODE_OK) return;
  lode_correlation_options o;
  lode_correlation_options_init(&o, sizeof o);
  const uint8_t flags = in.byte();
  o.kind = flags % 3;
  o.missing = (flags & 4) ? LODE_MISSING_LISTWISE : LODE_MISSING_PAIRWISE;
  o.threads = 1;
  lode_correlation* c = nullptr;
  if (lode_correlation_compute(d, &o, &c) == LODE_OK) {
    read_correlation(c, in);
    lode_correlation_free(c);
  }
  lode_data_free(d);
  for (int key = 1098; key < 1130; ++key) {
    double v;
    lode_summary_value(s, key, &v);
    int64_t rows = 0, cols = 0;
    if (lode_summary_matrix(s, key, nullptr, 0, &rows, &cols) == LODE_OK) {
      std::vector<double> buf(static_cast<size_t>(rows * cols) + 1);
      lode_summary_matrix(s, key, buf.data(), buf.size(), &rows, &cols);
    }
  }
  int64_t rows = 0, cols = 0;
  lode_summary_table(s, in.byte() % 4, in.byte() % 4, nullptr, 0, &rows, &cols);
  char name[8];
  size_t length = 0;
  lode_summary_item_name(s, static_cast<int64_t>(in.byte() % 4) - 1, name, in.byte() % sizeof name, &length);
}

void fuzz_summary(const std::vector<double>& values, int64_t rows, int64_t cols, int64_t row_stride,
                  int64_t col_stride, Bytes& in) {
  lode_summary_options o;
  lode_summary_options_init(&o, sizeof o);
  const uint8_t flags = in.byte();
  o.max_categories = flags % 12;
  o.listwise = (flags & 16) != 0;
  lode_summary* s = nullptr;
  if (lode_summary_create(cols, nullptr, &o, &s) == LODE_OK) {
    const int64_t half = rows / 2;
    lode_summary_add(s, values.data(), half, cols, row_stride, col_stride);
    lode_summary_add(s, values.data() + half * row_stride, rows - half, cols, row_stride, col_stride);
    lode_summary_merge(s, s);
    size_t length = 0;
    if (lode_summary_to_bytes(s, nullptr, 0, &length) == LODE_OK) {
      std::vector<uint8_t> bytes(length + 1);
      lode_summary_to_bytes(s, bytes.data(), bytes.size(), &length);
      const size_t cut = length == 0 ? 0 : in.byte() % (length + 1);
      if (length > 0 && (flags & 32)) bytes[in.byte() % length] ^= static_cast<uint8_t>(1u << (in.byte() % 8));
      lode_summary* back = nullptr;
      if (lode_summary_from_bytes(bytes.data(), (flags & 64) ? cut : length, &back) == LODE_OK) {
        correlate_summary(back, in);
        lode_summary_free(back);
      }
    }
    correlate_summary(s, in);
    lode_summary_free(s);
  }
  lode_summary* raw = nullptr;
  if (lode_summary_from_bytes(in.p, in.n, &raw) == LODE_OK) {
    correlate_summary(raw, in);
    lode_summary_free(raw);
  }
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size) {
  Bytes in{data, size};
  const uint8_t mode = in.byte();
  const int64_t rows = in.byte() % 48;
  const int64_t cols = in.byte() % 14;
  const uint8_t layout = in.byte();
  const bool likert = (mode & 0x10) == 0;

  // Values laid out with the chosen strides (row-major, column-major, or padded).
  const int64_t pad = layout & 3;
  const bool col_major = (layout & 4) != 0;
  const int64_t row_stride = col_major ? 1 : cols + pad;
  const int64_t col_stride = col_major ? rows + pad : 1;
  const size_t extent = static_cast<size_t>((rows + pad) * (cols + pad) + 1);
  std::vector<double> values(extent, std::numeric_limits<double>::quiet_NaN());
  for (int64_t i = 0; i < rows; ++i)
    for (int64_t j = 0; j < cols; ++j)
      values[static_cast<size_t>(i * row_stride + j * col_stride)] = likert ? coded(in.byte()) : in.real();

  if ((mode & 0xE0) == 0xE0) {
    fuzz_summary(values, rows, cols, row_stride, col_stride, in);
    return 0;
  }

  plain_calls(in);
  lode_data* d = nullptr;
  int status;
  if (mode % 3 == 0) {
    missing_pattern(values, rows, cols, row_stride, col_stride, in);
    status = lode_data_from_raw(values.data(), rows, cols, row_stride, col_stride, &d);
  } else {
    // A square matrix (correlation or covariance) of `cols` items in the same layout, symmetric with
    // a unit (correlation) or coded (covariance) diagonal, so it often passes the checks.
    const int64_t p = cols;
    const int64_t rs = col_major ? 1 : p + pad, cs = col_major ? p + pad : 1;
    std::vector<double> r(static_cast<size_t>((p + pad) * (p + pad) + 1), std::numeric_limits<double>::quiet_NaN());
    for (int64_t i = 0; i < p; ++i)
      for (int64_t j = 0; j <= i; ++j) {
        double v;
        if (i == j) v = mode % 3 == 1 ? 1.0 : (likert ? coded(in.byte()) : in.real());
        else v = likert ? (coded(in.byte()) - 3.0) / 2.5 : in.real();
        r[static_cast<size_t>(i * rs + j * cs)] = r[static_cast<size_t>(j * rs + i * cs)] = v;
      }
    status = mode % 3 == 1 ? lode_data_from_correlation(r.data(), p, rs, cs, rows, &d)
                           : lode_data_from_covariance(r.data(), p, rs, cs, rows, &d);
  }
  if (status != LODE_OK) return 0;
  {
    int64_t n = -1, p = -1;
    if (lode_data_shape(d, &n, &p) == LODE_OK && (n < 0 || p != cols)) __builtin_trap();
  }

  if (in.byte() & 1) {
    const char* names[16] = {"a", nullptr, "", "d\xc3\xa9", "e", "f", "g", "h", "i", "j", "k", "l", "m", "n", "o", "p"};
    lode_data_set_item_names(d, names, cols);
  }
  lode_correlation_options o;
  lode_correlation_options_init(&o, sizeof o);
  const uint8_t flags = in.byte();
  o.kind = flags & 1 ? LODE_COEFFICIENT_SPEARMAN : LODE_COEFFICIENT_PEARSON;
  o.missing = flags & 2 ? LODE_MISSING_LISTWISE : LODE_MISSING_PAIRWISE;
  if ((flags & 0xC0) == 0xC0) {  // the em rule, with a small cap so a case stays quick
    o.missing = LODE_MISSING_EM;
    o.em_max_iterations = 1 + in.byte() % 50;
  }
  o.smooth = (flags & 4) != 0;
  o.min_eigenvalue = (flags & 8) ? 0.0 : 1e-6;
  if (flags & 16) o.struct_size = offsetof(lode_correlation_options, smooth);
  if (flags & 32) o.kind = LODE_COEFFICIENT_POLYCHORIC;
  o.threads = 1;
  lode_correlation* c = nullptr;
  if (lode_correlation_compute(d, &o, &c) == LODE_OK) {
    read_correlation(c, in);
    analyse(c, d, in);
    reliability(d, c);
    lode_correlation_free(c);
  }
  groups(d, in);
  lode_data_free(d);
  return 0;
}
