// The report's content: reads the items, runs what the C ABI offers, lays out the sheets.
// Only lode.h is used (office-addin -> capi -> core).
#include "report_model.hpp"

#include <lode.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <cstring>
#include <limits>
#include <memory>
#include <stdexcept>

namespace lode::addin::report {
namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

bool one_of(const std::string& v, std::initializer_list<const char*> allowed) {
  for (const char* a : allowed)
    if (v == a) return true;
  return false;
}

void require(const std::string& what, const std::string& v, std::initializer_list<const char*> allowed) {
  if (one_of(v, allowed)) return;
  std::string list;
  for (const char* a : allowed) list += (list.empty() ? "" : ", ") + std::string(a);
  throw std::invalid_argument("option " + what + " is \"" + v + "\"; it must be one of " + list);
}

std::string fmt_num(double v, int digits = 3) {
  char buf[64];
  std::snprintf(buf, sizeof buf, "%.*f", digits, v);
  return buf;
}

struct DataFree {
  void operator()(lode_data* p) const noexcept { lode_data_free(p); }
};
struct CorrFree {
  void operator()(lode_correlation* p) const noexcept { lode_correlation_free(p); }
};

// A C ABI failure as the exception the service reports.
[[noreturn]] void fail(int status, const std::string& what) {
  if (status == LODE_E_CANCELLED) throw Cancelled{};
  std::string msg = what + ": " + lode_error_message();
  if (status == LODE_E_INVALID_ARGUMENT || status == LODE_E_INSUFFICIENT_DATA || status == LODE_E_TOO_MANY_FACTORS ||
      status == LODE_E_NOT_POSITIVE_DEFINITE)
    throw std::invalid_argument(msg);
  throw std::runtime_error(msg + " (" + lode_status_name(status) + ")");
}
void check(int status, const std::string& what) {
  if (status != LODE_OK) fail(status, what);
}

std::vector<double> read_corr_matrix(const lode_correlation* c, int key, std::int64_t* rows, std::int64_t* cols) {
  check(lode_correlation_matrix(c, key, nullptr, 0, rows, cols), "reading a result");
  std::vector<double> out(static_cast<std::size_t>(*rows * *cols));
  check(lode_correlation_matrix(c, key, out.data(), out.size(), rows, cols), "reading a result");
  return out;
}
double read_corr_value(const lode_correlation* c, int key) {
  double v = kNaN;
  check(lode_correlation_value(c, key, &v), "reading a result");
  return v;
}
std::string read_corr_notes(const lode_correlation* c) {
  size_t len = 0;
  if (lode_correlation_text(c, LODE_CORRELATION_NOTES, nullptr, 0, &len) != LODE_OK) return {};
  std::string s(len + 1, '\0');
  if (lode_correlation_text(c, LODE_CORRELATION_NOTES, s.data(), s.size(), &len) != LODE_OK) return {};
  s.resize(len);
  return s;
}

struct FactFree {
  void operator()(lode_factorability* p) const noexcept { lode_factorability_free(p); }
};

// A factorability result that may be unavailable: the value, or the C ABI's reason.
struct Maybe {
  double value = kNaN;
  std::string reason;  // empty when the value is there
};
Maybe fact_value(const lode_factorability* f, int key) {
  Maybe m;
  if (lode_factorability_value(f, key, &m.value) != LODE_OK) m.reason = lode_error_message();
  return m;
}
std::string fact_text(const lode_factorability* f, int key) {
  size_t len = 0;
  if (lode_factorability_text(f, key, nullptr, 0, &len) != LODE_OK) return {};
  std::string s(len + 1, '\0');
  if (lode_factorability_text(f, key, s.data(), s.size(), &len) != LODE_OK) return {};
  s.resize(len);
  return s;
}
std::vector<double> fact_vector(const lode_factorability* f, int key, std::string& reason) {
  std::int64_t r = 0, c = 0;
  if (lode_factorability_matrix(f, key, nullptr, 0, &r, &c) != LODE_OK) {
    reason = lode_error_message();
    return {};
  }
  std::vector<double> out(static_cast<std::size_t>(r * c));
  if (lode_factorability_matrix(f, key, out.data(), out.size(), &r, &c) != LODE_OK) {
    reason = lode_error_message();
    return {};
  }
  return out;
}
std::vector<std::string> lines_of(const std::string& text) {
  std::vector<std::string> out;
  std::size_t start = 0;
  while (start < text.size()) {
    std::size_t end = text.find('\n', start);
    if (end == std::string::npos) end = text.size();
    if (end > start) out.push_back(text.substr(start, end - start));
    start = end + 1;
  }
  return out;
}

// Progress from the C ABI into the run's callback (which may cancel).
struct ProgressBridge {
  const Progress* progress;
  std::string phase;
  double from, to;
  static int call(void* user, std::int64_t done, std::int64_t total) {
    auto* self = static_cast<ProgressBridge*>(user);
    double share = total > 0 ? static_cast<double>(done) / static_cast<double>(total) : 0.0;
    bool go_on = !*self->progress || (*self->progress)(self->phase, self->from + (self->to - self->from) * share);
    return go_on ? 0 : 1;
  }
};

const char* correlation_words(const std::string& kind) {
  if (kind == "spearman") return "Spearman (rank order)";
  if (kind == "polychoric") return "polychoric (ordered answer categories)";
  return "Pearson (answers taken as numbers)";
}
const char* missing_words(const std::string& m) {
  return m == "listwise" ? "only respondents who answered every item (listwise)"
                         : "each pair of items uses everyone who answered both (pairwise)";
}

// How many factors, through the C ABI's factor count; when it fails, `reason` says why.
struct CountResult {
  bool available = false;
  std::string reason;
  std::vector<double> random_pc;  // 95th percentile of random-data component eigenvalues
  double percentile = 95.0;
  int replicates = 0;
  int suggested = 0;
  std::string why;
  struct Rule {
    std::string rule, factors, basis;
    bool primary = false;
  };
  std::vector<Rule> rules;
  std::vector<std::string> notes;
};

struct CountFree {
  void operator()(lode_factor_count* p) const noexcept { lode_factor_count_free(p); }
};
std::string count_text(const lode_factor_count* f, int key) {
  size_t len = 0;
  if (lode_factor_count_text(f, key, nullptr, 0, &len) != LODE_OK) return {};
  std::string s(len + 1, '\0');
  if (lode_factor_count_text(f, key, s.data(), s.size(), &len) != LODE_OK) return {};
  s.resize(len);
  return s;
}

CountResult count_factors(const lode_correlation* corr, const Options& o, const Progress& progress, double from,
                          double to) {
  CountResult r;
  lode_factor_count_options opts;
  lode_factor_count_options_init(&opts, sizeof opts);
  opts.seed = o.seed;
  opts.threads = 1;  // the office's other work keeps a core
  ProgressBridge bridge{&progress, "parallel analysis", from, to};
  opts.progress = &ProgressBridge::call;
  opts.progress_user = &bridge;
  lode_factor_count* raw = nullptr;
  const int st = lode_factor_count_compute(corr, &opts, &raw);
  if (st == LODE_E_CANCELLED) throw Cancelled{};
  if (st != LODE_OK) {
    r.reason = lode_error_message();
    return r;
  }
  std::unique_ptr<lode_factor_count, CountFree> count(raw);
  std::int64_t rows = 0, cols = 0;
  check(lode_factor_count_matrix(count.get(), LODE_FACTOR_COUNT_RANDOM_PC_PERCENTILE, nullptr, 0, &rows, &cols), "parallel analysis");
  r.random_pc.resize(static_cast<std::size_t>(rows * cols));
  check(lode_factor_count_matrix(count.get(), LODE_FACTOR_COUNT_RANDOM_PC_PERCENTILE, r.random_pc.data(), r.random_pc.size(),
                                 &rows, &cols),
        "parallel analysis");
  double v = 0;
  check(lode_factor_count_value(count.get(), LODE_FACTOR_COUNT_SUGGESTED, &v), "the factor count");
  r.suggested = static_cast<int>(v);
  check(lode_factor_count_value(count.get(), LODE_FACTOR_COUNT_PERCENTILE, &r.percentile), "the factor count");
  check(lode_factor_count_value(count.get(), LODE_FACTOR_COUNT_REPLICATES, &v), "the factor count");
  r.replicates = static_cast<int>(v);
  r.why = count_text(count.get(), LODE_FACTOR_COUNT_REASON);
  for (const std::string& line : lines_of(count_text(count.get(), LODE_FACTOR_COUNT_TABLE))) {
    CountResult::Rule rule;
    std::size_t a = line.find('\t'), b = line.find('\t', a + 1), c = line.find('\t', b + 1);
    if (a == std::string::npos || b == std::string::npos || c == std::string::npos) continue;
    rule.rule = line.substr(0, a);
    rule.factors = line.substr(a + 1, b - a - 1);
    rule.primary = line.substr(b + 1, c - b - 1) == "1";
    rule.basis = line.substr(c + 1);
    r.rules.push_back(rule);
  }
  r.notes = lines_of(count_text(count.get(), LODE_FACTOR_COUNT_NOTES));
  r.available = true;
  return r;
}

// The fitted model (extraction, rotation, fit, residuals) through the C ABI's lode_model_compute; when it fails,
// `reason` holds the C ABI's error message.
struct ModelResult {
  bool available = false;
  std::string reason;
  int factors = 0;
  bool oblique = false;
  std::string rotation_used;
  std::vector<double> loadings, structure, phi, communalities, uniquenesses, residuals, heywood, ss;
  double rmsr = kNaN, max_residual = kNaN;
  bool have_stats = false;
  std::string stats_reason;
  double chi2 = kNaN, df = kNaN, p = kNaN, rmsea = kNaN, rmsea_lo = kNaN, rmsea_hi = kNaN, tli = kNaN, bic = kNaN;
  std::vector<std::string> notes;
  std::shared_ptr<lode_model> handle;  // for scores and reliability (null when the fit failed)
};

struct ModelFree {
  void operator()(lode_model* p) const noexcept { lode_model_free(p); }
};
std::vector<double> model_matrix(const lode_model* m, int key) {
  std::int64_t r = 0, c = 0;
  check(lode_model_matrix(m, key, nullptr, 0, &r, &c), "reading the model");
  std::vector<double> out(static_cast<std::size_t>(r * c));
  check(lode_model_matrix(m, key, out.data(), out.size(), &r, &c), "reading the model");
  return out;
}
double model_value(const lode_model* m, int key) {
  double v = kNaN;
  check(lode_model_value(m, key, &v), "reading the model");
  return v;
}

// The run's extraction and rotation options for lode_model_compute (and the bootstrap, which refits the same
// way). Not copyable: fo.rotation points into the same object.
struct FitSetup {
  lode_model_options fo;
  lode_rotation_options ro;
  std::string rotation_used;  // which rotation is applied, in the option's word
  FitSetup(const Options& o, int factors) {
    lode_model_options_init(&fo, sizeof fo);
    fo.factors = factors;
    fo.method = o.extraction == "ml" ? LODE_EXTRACTION_ML : o.extraction == "paf" ? LODE_EXTRACTION_PAF : LODE_EXTRACTION_MINRES;
    lode_rotation_options_init(&ro, sizeof ro);
    ro.seed = o.seed;
    ro.threads = 1;
    rotation_used = o.rotation;
    if (o.rotation == "oblimin") {
      ro.method = LODE_CRITERION_OBLIMIN;
      ro.gamma = o.rotation_parameter;
    } else if (o.rotation == "promax") {
      ro.method = LODE_CRITERION_PROMAX;
      if (o.rotation_parameter > 0) ro.power = o.rotation_parameter;
    } else {
      ro.method = LODE_CRITERION_VARIMAX;
    }
    if (o.rotation != "none" && factors >= 2) fo.rotation = &ro;
    else if (o.rotation != "none") rotation_used = "none (one factor cannot be rotated)";
  }
  FitSetup(const FitSetup&) = delete;
  FitSetup& operator=(const FitSetup&) = delete;
};

// lode_model_compute with the run's options; the caller owns the model (NULL with the status on failure).
lode_model* fit_raw(const lode_correlation* corr, const Options& o, int factors, std::string& rotation_used, int& status) {
  FitSetup setup(o, factors);
  rotation_used = setup.rotation_used;
  lode_model* raw = nullptr;
  status = lode_model_compute(corr, &setup.fo, &raw);
  return status == LODE_OK ? raw : nullptr;
}

// Bootstrap intervals of the fitted solution through the C ABI's lode_bootstrap_compute; when it fails,
// `reason` says why.
struct BootResult {
  bool available = false;
  std::string reason;
  double replicates = 0, used = 0, failed = 0, poorly_matched = 0, level = 0.95;
  std::vector<double> estimate, lower, upper;        // items x factors (pattern loadings)
  std::vector<double> phi_lower, phi_upper;          // factors x factors
  std::string alignment;
  std::vector<std::string> failures, notes;
};

struct BootFree {
  void operator()(lode_bootstrap_result* p) const noexcept { lode_bootstrap_free(p); }
};

BootResult bootstrap_intervals(const lode_correlation* corr, const Options& o, int factors, const Progress& progress,
                               double from, double to) {
  BootResult r;
  FitSetup setup(o, factors);
  lode_bootstrap_options bo;
  lode_bootstrap_options_init(&bo, sizeof bo);
  bo.replicates = o.bootstrap;
  bo.seed = o.seed;
  bo.threads = 1;  // the office's other work keeps a core
  ProgressBridge bridge{&progress, "bootstrap resamples", from, to};
  bo.progress = &ProgressBridge::call;
  bo.progress_user = &bridge;
  lode_bootstrap_result* raw = nullptr;
  const int st = lode_bootstrap_compute(corr, &setup.fo, &bo, &raw);
  if (st == LODE_E_CANCELLED) throw Cancelled{};
  if (st != LODE_OK) {
    r.reason = lode_error_message();
    return r;
  }
  std::unique_ptr<lode_bootstrap_result, BootFree> b(raw);
  auto mat = [&](int key) {
    std::int64_t a = 0, c = 0;
    check(lode_bootstrap_matrix(b.get(), key, nullptr, 0, &a, &c), "reading the bootstrap");
    std::vector<double> v(static_cast<std::size_t>(a * c));
    check(lode_bootstrap_matrix(b.get(), key, v.data(), v.size(), &a, &c), "reading the bootstrap");
    return v;
  };
  auto num = [&](int key) {
    double v = kNaN;
    check(lode_bootstrap_value(b.get(), key, &v), "reading the bootstrap");
    return v;
  };
  auto text = [&](int key) {
    size_t len = 0;
    check(lode_bootstrap_text(b.get(), key, nullptr, 0, &len), "reading the bootstrap");
    std::string t(len + 1, '\0');
    check(lode_bootstrap_text(b.get(), key, t.data(), t.size(), &len), "reading the bootstrap");
    t.resize(len);
    return t;
  };
  r.estimate = mat(LODE_BOOTSTRAP_LOADINGS);
  r.lower = mat(LODE_BOOTSTRAP_LOADINGS_LOWER);
  r.upper = mat(LODE_BOOTSTRAP_LOADINGS_UPPER);
  r.phi_lower = mat(LODE_BOOTSTRAP_FACTOR_CORRELATIONS_LOWER);
  r.phi_upper = mat(LODE_BOOTSTRAP_FACTOR_CORRELATIONS_UPPER);
  r.replicates = num(LODE_BOOTSTRAP_REPLICATES);
  r.used = num(LODE_BOOTSTRAP_USED);
  r.failed = num(LODE_BOOTSTRAP_FAILED);
  r.poorly_matched = num(LODE_BOOTSTRAP_POORLY_MATCHED);
  r.level = num(LODE_BOOTSTRAP_LEVEL);
  r.alignment = text(LODE_BOOTSTRAP_ALIGNMENT);
  r.failures = lines_of(text(LODE_BOOTSTRAP_FAILURES));
  r.notes = lines_of(text(LODE_BOOTSTRAP_NOTES));
  r.available = true;
  return r;
}

ModelResult fit_model(const lode_correlation* corr, const Options& o, int factors) {
  ModelResult r;
  r.factors = factors;
  int st = LODE_OK;
  lode_model* raw = fit_raw(corr, o, factors, r.rotation_used, st);
  if (st == LODE_E_CANCELLED) throw Cancelled{};
  if (st != LODE_OK) {
    r.reason = lode_error_message();
    // A number of factors the person fixed that the items cannot carry is a bad option, refused
    // before anything is written; a fit the data do not allow is reported inside the report.
    if (o.factors > 0 && (st == LODE_E_TOO_MANY_FACTORS || st == LODE_E_INVALID_ARGUMENT))
      throw std::invalid_argument("option Factors is " + std::to_string(o.factors) + ": " + r.reason);
    return r;
  }
  std::shared_ptr<lode_model> m(raw, ModelFree{});
  r.handle = m;
  r.loadings = model_matrix(m.get(), LODE_MODEL_LOADINGS);
  r.structure = model_matrix(m.get(), LODE_MODEL_STRUCTURE);
  r.phi = model_matrix(m.get(), LODE_MODEL_FACTOR_CORRELATIONS);
  r.communalities = model_matrix(m.get(), LODE_MODEL_COMMUNALITIES);
  r.uniquenesses = model_matrix(m.get(), LODE_MODEL_UNIQUENESSES);
  r.residuals = model_matrix(m.get(), LODE_MODEL_RESIDUALS);
  r.heywood = model_matrix(m.get(), LODE_MODEL_HEYWOOD);
  r.ss = model_matrix(m.get(), LODE_MODEL_SS_LOADINGS);
  r.oblique = model_value(m.get(), LODE_MODEL_OBLIQUE) > 0.5;
  r.rmsr = model_value(m.get(), LODE_MODEL_RMSR);
  r.max_residual = model_value(m.get(), LODE_MODEL_MAX_ABS_RESIDUAL);
  double v = kNaN;
  if (lode_model_value(m.get(), LODE_MODEL_CHI_SQUARE, &v) == LODE_OK) {
    r.have_stats = true;
    r.chi2 = v;
    r.df = model_value(m.get(), LODE_MODEL_DF);
    r.p = model_value(m.get(), LODE_MODEL_P_VALUE);
    r.rmsea = model_value(m.get(), LODE_MODEL_RMSEA);
    r.rmsea_lo = model_value(m.get(), LODE_MODEL_RMSEA_LOWER);
    r.rmsea_hi = model_value(m.get(), LODE_MODEL_RMSEA_UPPER);
    r.tli = model_value(m.get(), LODE_MODEL_TLI);
    r.bic = model_value(m.get(), LODE_MODEL_BIC);
  } else {
    r.stats_reason = lode_error_message();
  }
  size_t len = 0;
  if (lode_model_text(m.get(), LODE_MODEL_NOTES, nullptr, 0, &len) == LODE_OK) {
    std::string t(len + 1, '\0');
    if (lode_model_text(m.get(), LODE_MODEL_NOTES, t.data(), t.size(), &len) == LODE_OK) {
      t.resize(len);
      r.notes = lines_of(t);
    }
  }
  r.available = true;
  return r;
}

// Items in reading order: grouped by the factor of their largest absolute loading (factor 1 first),
// within a group by that loading's size, largest first.
std::vector<std::size_t> loading_order(const std::vector<double>& L, std::size_t p, std::size_t k) {
  std::vector<std::size_t> idx(p), home(p);
  for (std::size_t j = 0; j < p; ++j) {
    idx[j] = j;
    std::size_t best = 0;
    for (std::size_t f = 1; f < k; ++f)
      if (std::fabs(L[j * k + f]) > std::fabs(L[j * k + best])) best = f;
    home[j] = best;
  }
  std::stable_sort(idx.begin(), idx.end(), [&](std::size_t a, std::size_t b) {
    if (home[a] != home[b]) return home[a] < home[b];
    return std::fabs(L[a * k + home[a]]) > std::fabs(L[b * k + home[b]]);
  });
  return idx;
}

// ---- reliability of each factor's scale (C ABI: lode_reliability_compute_omega, lode_reliability_compute_alpha) ----------

struct RelFree {
  void operator()(lode_reliability* p) const noexcept { lode_reliability_free(p); }
};
struct ModelFreeFn {
  void operator()(lode_model* p) const noexcept { lode_model_free(p); }
};
struct CompFree {
  void operator()(lode_comparison* p) const noexcept { lode_comparison_free(p); }
};

std::vector<double> rel_matrix(const lode_reliability* r, int key) {
  std::int64_t a = 0, b = 0;
  check(lode_reliability_matrix(r, key, nullptr, 0, &a, &b), "reading the reliability");
  std::vector<double> out(static_cast<std::size_t>(a * b));
  check(lode_reliability_matrix(r, key, out.data(), out.size(), &a, &b), "reading the reliability");
  return out;
}
double rel_value(const lode_reliability* r, int key) {
  double v = kNaN;
  check(lode_reliability_value(r, key, &v), "reading the reliability");
  return v;
}
std::vector<std::string> rel_notes(const lode_reliability* r) {
  size_t len = 0;
  if (lode_reliability_text(r, LODE_RELIABILITY_NOTES, nullptr, 0, &len) != LODE_OK) return {};
  std::string t(len + 1, '\0');
  if (lode_reliability_text(r, LODE_RELIABILITY_NOTES, t.data(), t.size(), &len) != LODE_OK) return {};
  t.resize(len);
  return lines_of(t);
}

struct ScaleReliability {
  std::size_t factor = 0;
  std::vector<std::size_t> items;  // indices into the analysed items, in loading order
  std::vector<bool> reversed;      // per scale item: reverse-scored for these figures
  double omega = kNaN;         // omega total of the scale (McDonald 1999)
  double omega_share = kNaN;   // the factor's share of the scale's variance
  bool have_alpha = false;
  std::string alpha_reason;        // why alpha is missing
  double alpha = kNaN, alpha_std = kNaN, mean_r = kNaN, rows_used = kNaN, rows_total = kNaN;
  std::vector<double> item_total, alpha_if_deleted, alpha_std_if_deleted, means, sds;  // per scale item
  std::vector<std::string> notes;  // the C library's notes on alpha
};

struct ReliabilityResult {
  bool available = false;
  std::string reason;
  std::vector<ScaleReliability> scales;  // one per factor
  std::vector<std::string> omega_notes;
  std::vector<std::string> reversed_names;
  std::string omega_reason;  // set when omega could not be computed with the reverse-scored items
};

// Each item belongs to the scale of the factor of its largest absolute loading (lode_reliability_compute_omega's
// own rule, whose assignment is used for alpha too). An item loading negatively on its factor is
// reverse-scored, as a scale score adds it: for alpha its answers become (lowest + highest observed
// answer) - answer; for omega the model is refitted to the correlations with those items' signs
// reversed (D R D, D = diag(+-1)), which reverses exactly their rows of loadings, and its factors are
// matched to this solution by Tucker's congruence (lode_comparison_compute).
ReliabilityResult reliability(const ModelResult& model, const lode_correlation* corr, const Options& o,
                              const std::vector<double>& R, double n_obs, const std::vector<double>& values,
                              std::size_t n_rows, const std::vector<std::string>& names) {
  ReliabilityResult out;
  const std::size_t p = names.size(), k = static_cast<std::size_t>(model.factors);
  (void)corr;
  lode_reliability* raw = nullptr;
  if (lode_reliability_compute_omega(model.handle.get(), nullptr, 0, &raw) != LODE_OK) {
    out.reason = lode_error_message();
    return out;
  }
  std::unique_ptr<lode_reliability, RelFree> om(raw);
  const std::vector<double> assignment = rel_matrix(om.get(), LODE_OMEGA_ASSIGNMENT);
  std::vector<double> omega = rel_matrix(om.get(), LODE_OMEGA);
  std::vector<double> share = rel_matrix(om.get(), LODE_RELIABILITY_OMEGA_FACTOR_SHARE);
  out.omega_notes = rel_notes(om.get());

  std::vector<bool> reversed(p, false);
  for (std::size_t j = 0; j < p; ++j) {
    const double a = assignment[j];
    if (a >= 0 && model.loadings[j * k + static_cast<std::size_t>(a)] < 0) {
      reversed[j] = true;
      out.reversed_names.push_back(names[j]);
    }
  }
  if (!out.reversed_names.empty()) {
    // Omega with the reverse-scored items: refit D R D and match its factors to this solution. Scales
    // without a reversed item keep this model's omega.
    std::vector<bool> touched(k, false);
    for (std::size_t j = 0; j < p; ++j)
      if (reversed[j]) touched[static_cast<std::size_t>(assignment[j])] = true;
    const std::vector<double> own_omega = omega, own_share = share;
    for (std::size_t f = 0; f < k; ++f)
      if (touched[f]) omega[f] = share[f] = kNaN;
    std::vector<double> drd(R);
    for (std::size_t i = 0; i < p; ++i)
      for (std::size_t j = 0; j < p; ++j)
        if (reversed[i] != reversed[j]) drd[i * p + j] = -drd[i * p + j];
    std::string why;
    lode_data* rd = nullptr;
    lode_correlation* rc = nullptr;
    std::unique_ptr<lode_data, DataFree> d2;
    std::unique_ptr<lode_correlation, CorrFree> c2;
    std::unique_ptr<lode_model, ModelFreeFn> m2;
    const std::int64_t n = std::isfinite(n_obs) && n_obs > 0 ? static_cast<std::int64_t>(n_obs) : 0;
    if (lode_data_from_correlation(drd.data(), static_cast<std::int64_t>(p), static_cast<std::int64_t>(p), 1, n, &rd) != LODE_OK)
      why = lode_error_message();
    d2.reset(rd);
    if (why.empty()) {
      std::vector<const char*> cn;
      for (const std::string& s : names) cn.push_back(s.c_str());
      lode_data_set_item_names(d2.get(), cn.data(), static_cast<std::int64_t>(p));
      if (lode_correlation_compute(d2.get(), nullptr, &rc) != LODE_OK) why = lode_error_message();
      c2.reset(rc);
    }
    if (why.empty()) {
      std::string rot;
      int st = LODE_OK;
      m2.reset(fit_raw(c2.get(), o, model.factors, rot, st));
      if (st == LODE_E_CANCELLED) throw Cancelled{};
      if (st != LODE_OK) why = lode_error_message();
    }
    if (why.empty()) {
      std::vector<double> target(model.loadings);  // this solution with the reversed rows
      for (std::size_t j = 0; j < p; ++j)
        if (reversed[j])
          for (std::size_t f = 0; f < k; ++f) target[j * k + f] = -target[j * k + f];
      const std::vector<double> refit = model_matrix(m2.get(), LODE_MODEL_LOADINGS);
      lode_comparison* rcmp = nullptr;
      const auto kk = static_cast<std::int64_t>(k);
      if (lode_comparison_compute(target.data(), refit.data(), static_cast<std::int64_t>(p), kk, kk, 1, kk, 1, &rcmp) != LODE_OK) {
        why = lode_error_message();
      } else {
        std::unique_ptr<lode_comparison, CompFree> cmp(rcmp);
        std::int64_t a = 0, b = 0;
        std::vector<double> order(k), matched(k);
        check(lode_comparison_matrix(cmp.get(), LODE_COMPARISON_ORDER, order.data(), k, &a, &b), "matching factors");
        check(lode_comparison_matrix(cmp.get(), LODE_COMPARISON_MATCHED_CONGRUENCE, matched.data(), k, &a, &b),
              "matching factors");
        double worst = 1.0;
        for (double c : matched) worst = std::min(worst, c);
        if (worst < 0.999) {
          why = "the refit with reverse-scored items did not reproduce this solution (congruence " + fmt_num(worst, 3) + ")";
        } else {
          std::vector<std::int64_t> assign2(p);
          for (std::size_t j = 0; j < p; ++j)
            assign2[j] = assignment[j] < 0 ? -1 : static_cast<std::int64_t>(order[static_cast<std::size_t>(assignment[j])]);
          lode_reliability* r2 = nullptr;
          if (lode_reliability_compute_omega(m2.get(), assign2.data(), static_cast<std::int64_t>(p), &r2) != LODE_OK) {
            why = lode_error_message();
          } else {
            std::unique_ptr<lode_reliability, RelFree> om2(r2);
            const std::vector<double> w2 = rel_matrix(om2.get(), LODE_OMEGA);
            const std::vector<double> s2 = rel_matrix(om2.get(), LODE_RELIABILITY_OMEGA_FACTOR_SHARE);
            for (std::size_t f = 0; f < k; ++f) {
              const auto g = static_cast<std::size_t>(order[f]);
              omega[f] = touched[f] ? w2[g] : own_omega[f];
              share[f] = touched[f] ? s2[g] : own_share[f];
            }
            out.omega_notes = rel_notes(om2.get());  // about the items as reverse-scored
          }
        }
      }
    }
    if (!why.empty()) out.omega_reason = why;
  }

  const std::vector<std::size_t> order = loading_order(model.loadings, p, k);
  for (std::size_t f = 0; f < k; ++f) {
    ScaleReliability sr;
    sr.factor = f;
    sr.omega = omega[f];
    sr.omega_share = share[f];
    for (std::size_t j : order)
      if (assignment[j] == static_cast<double>(f)) {
        sr.items.push_back(j);
        sr.reversed.push_back(reversed[j]);
      }
    const std::size_t m = sr.items.size();
    if (m < 2) {
      sr.alpha_reason = m == 0 ? "no item loads most on this factor" : "alpha needs at least 2 items; this scale has 1";
      out.scales.push_back(std::move(sr));
      continue;
    }
    std::vector<double> x(n_rows * m, kNaN);
    std::vector<const char*> cn;
    for (std::size_t c = 0; c < m; ++c) {
      const std::size_t j = sr.items[c];
      cn.push_back(names[j].c_str());
      double lo = kNaN, hi = kNaN;
      for (std::size_t r = 0; r < n_rows; ++r) {
        const double v = values[r * p + j];
        if (std::isnan(v)) continue;
        lo = std::isnan(lo) ? v : std::min(lo, v);
        hi = std::isnan(hi) ? v : std::max(hi, v);
      }
      for (std::size_t r = 0; r < n_rows; ++r) {
        const double v = values[r * p + j];
        x[r * m + c] = sr.reversed[c] && !std::isnan(v) ? (lo + hi) - v : v;
      }
    }
    lode_data* rd = nullptr;
    check(lode_data_from_raw(x.data(), static_cast<std::int64_t>(n_rows), static_cast<std::int64_t>(m),
                             static_cast<std::int64_t>(m), 1, &rd),
          "reading a scale's items");
    std::unique_ptr<lode_data, DataFree> d(rd);
    check(lode_data_set_item_names(d.get(), cn.data(), static_cast<std::int64_t>(m)), "naming a scale's items");
    lode_reliability* ra = nullptr;
    if (lode_reliability_compute_alpha(d.get(), &ra) != LODE_OK) {
      sr.alpha_reason = lode_error_message();
      out.scales.push_back(std::move(sr));
      continue;
    }
    std::unique_ptr<lode_reliability, RelFree> al(ra);
    sr.have_alpha = true;
    sr.alpha = rel_value(al.get(), LODE_ALPHA);
    sr.alpha_std = rel_value(al.get(), LODE_ALPHA_STANDARDIZED);
    sr.mean_r = rel_value(al.get(), LODE_ALPHA_MEAN_INTER_ITEM);
    sr.rows_used = rel_value(al.get(), LODE_ALPHA_ROWS_USED);
    sr.rows_total = rel_value(al.get(), LODE_ALPHA_ROWS_TOTAL);
    sr.item_total = rel_matrix(al.get(), LODE_ALPHA_ITEM_TOTAL);
    sr.alpha_if_deleted = rel_matrix(al.get(), LODE_ALPHA_IF_DELETED);
    sr.alpha_std_if_deleted = rel_matrix(al.get(), LODE_ALPHA_STANDARDIZED_IF_DELETED);
    sr.means = rel_matrix(al.get(), LODE_ALPHA_ITEM_MEANS);
    sr.sds = rel_matrix(al.get(), LODE_ALPHA_ITEM_SDS);
    sr.notes = rel_notes(al.get());
    out.scales.push_back(std::move(sr));
  }
  out.available = true;
  return out;
}

// The chi-square family of a minimum residual or principal axis solution (stated wherever those figures appear).
constexpr const char* kNotLikelihoodRatio =
    "The extraction is not maximum likelihood: chi-square, p-value, RMSEA, TLI and BIC are the maximum likelihood "
    "discrepancy evaluated at this solution, not a likelihood-ratio test; the p-value is approximate (it runs a "
    "little small) and the figures describe fit rather than test it. RMSR needs no such caveat.";

// Common-practice reading of alpha or omega (often traced to Nunnally 1978; README, "Reading the results").
std::string reliability_words(double v) {
  if (std::isnan(v)) return "";
  if (v >= 0.90) return "high enough to consider individual use (0.90 or more; common practice)";
  if (v >= 0.80) return "good for research and group comparisons (0.80 or more; common practice)";
  if (v >= 0.70) return "adequate for research (0.70 or more; common practice)";
  return "low: under 0.70 (common practice)";
}

// ---- factor scores (C ABI: lode_scores_compute) --------------------------------------------------------------

struct ScoresFree {
  void operator()(lode_scores* p) const noexcept { lode_scores_free(p); }
};

struct ScoreResult {
  bool available = false;
  std::string reason;
  std::vector<double> values;  // rows x factors, NaN = left blank
  std::vector<double> determinacy, validity, low;
  double rows_total = 0, rows_complete = 0, rows_partial = 0, rows_missing = 0;
  std::vector<std::string> notes;
  std::string cautions;
  std::string rule;  // which rows are left blank, in words
};

const char* score_method_words(const std::string& m) {
  if (m == "bartlett") return "Bartlett (1937)";
  if (m == "tenberge") return "correlation-preserving (ten Berge, Krijnen, Wansbeek and Shapiro 1999)";
  return "regression (Thurstone 1935)";
}
const char* score_method_short(const std::string& m) {
  if (m == "bartlett") return "Bartlett";
  if (m == "tenberge") return "correlation-preserving";
  return "regression";
}

// Respondents' scores on the model's factors. The missing-answer rule follows the run's missing
// handling: listwise leaves a respondent with any skipped item unscored (as the correlations left
// them out); pairwise scores from the answered items when at least half were answered.
ScoreResult factor_scores(const ModelResult& model, const lode_data* data, const Options& o) {
  ScoreResult r;
  lode_scores_options so;
  lode_scores_options_init(&so, sizeof so);
  so.method = o.scores == "bartlett" ? LODE_ESTIMATOR_BARTLETT : o.scores == "tenberge" ? LODE_ESTIMATOR_CORRELATION_PRESERVING : LODE_ESTIMATOR_REGRESSION;
  if (o.missing == "listwise") {
    so.missing = LODE_GAPS_LEAVE_MISSING;
    r.rule = "a respondent who skipped any item gets no scores (blank cells), as the listwise correlations left "
             "them out";
  } else {
    so.missing = LODE_GAPS_FROM_ANSWERED;
    r.rule = "a respondent who skipped items is scored from the items answered, when at least " +
             fmt_num(100.0 * so.min_answered_share, 0) + "% of them were answered; otherwise no scores (blank cells)";
  }
  lode_scores* raw = nullptr;
  if (lode_scores_compute(model.handle.get(), data, &so, &raw) != LODE_OK) {
    r.reason = lode_error_message();
    return r;
  }
  std::unique_ptr<lode_scores, ScoresFree> sc(raw);
  auto mat = [&](int key) {
    std::int64_t a = 0, b = 0;
    check(lode_scores_matrix(sc.get(), key, nullptr, 0, &a, &b), "reading the scores");
    std::vector<double> v(static_cast<std::size_t>(a * b));
    check(lode_scores_matrix(sc.get(), key, v.data(), v.size(), &a, &b), "reading the scores");
    return v;
  };
  auto num = [&](int key) {
    double v = kNaN;
    check(lode_scores_value(sc.get(), key, &v), "reading the scores");
    return v;
  };
  auto text = [&](int key) {
    size_t len = 0;
    check(lode_scores_text(sc.get(), key, nullptr, 0, &len), "reading the scores");
    std::string t(len + 1, '\0');
    check(lode_scores_text(sc.get(), key, t.data(), t.size(), &len), "reading the scores");
    t.resize(len);
    return t;
  };
  r.values = mat(LODE_SCORES_VALUES);
  r.determinacy = mat(LODE_SCORES_DETERMINACY);
  r.validity = mat(LODE_SCORES_VALIDITY);
  r.low = mat(LODE_SCORES_LOW_DETERMINACY);
  r.rows_total = num(LODE_SCORES_ROWS_TOTAL);
  r.rows_complete = num(LODE_SCORES_ROWS_COMPLETE);
  r.rows_partial = num(LODE_SCORES_ROWS_PARTIAL);
  r.rows_missing = num(LODE_SCORES_ROWS_MISSING);
  r.cautions = text(LODE_SCORES_CAUTIONS);
  for (const std::string& n : lines_of(text(LODE_SCORES_NOTES)))
    if (n != r.cautions) r.notes.push_back(n);
  r.available = true;
  return r;
}
}  // namespace

void validate(const Options& o) {
  if (o.header < -1 || o.header > 1) throw std::invalid_argument("option HeaderRow must be -1 (detect), 0 or 1");
  require("Correlation", o.correlation, {"pearson", "spearman", "polychoric"});
  require("Missing", o.missing, {"pairwise", "listwise"});
  require("Extraction", o.extraction, {"minres", "ml", "paf"});
  require("Rotation", o.rotation, {"oblimin", "promax", "varimax", "none"});
  require("Scores", o.scores, {"none", "regression", "bartlett", "tenberge"});
  require("ScoresPlace", o.scores_place, {"beside", "sheet"});
  if (o.factors < 0 || o.factors > kMaxReportFactors) throw std::invalid_argument("option Factors must be 0 (suggest) to 100");
  // One resample gives no interval (the C ABI's lode_bootstrap_compute needs at least 2).
  if (o.bootstrap < 0 || o.bootstrap == 1 || o.bootstrap > kMaxReportBootstrap)
    throw std::invalid_argument("option Bootstrap is " + std::to_string(o.bootstrap) +
                                "; it must be 0 (off) or 2 to 100000 resamples");
  if (!(o.salient > 0.0 && o.salient < 1.0)) throw std::invalid_argument("option Salient must lie between 0 and 1");
  if (!std::isfinite(o.rotation_parameter)) throw std::invalid_argument("option RotationParameter must be a number");
}

bool detect_header(const SourceTable& t) {
  if (t.rows < 2) return false;
  bool any_text = false;
  for (std::size_t c = 0; c < t.cols; ++c) {
    const SourceCell& s = t.at(0, c);
    if (s.kind == SourceCell::Kind::number) return false;
    if (s.kind == SourceCell::Kind::text) any_text = true;
  }
  if (!any_text) return false;
  for (std::size_t r = 1; r < t.rows; ++r)
    for (std::size_t c = 0; c < t.cols; ++c)
      if (t.at(r, c).kind == SourceCell::Kind::number) return true;
  return false;
}

std::vector<Column> describe_columns(const SourceTable& t, bool header) {
  std::vector<Column> out(t.cols);
  for (std::size_t c = 0; c < t.cols; ++c) {
    Column& col = out[c];
    const std::string letter = c < t.column_letters.size() ? t.column_letters[c] : std::to_string(c + 1);
    col.name = header && t.at(0, c).kind == SourceCell::Kind::text && !t.at(0, c).text.empty() ? t.at(0, c).text
                                                                                              : "column " + letter;
    for (std::size_t r = header ? 1 : 0; r < t.rows; ++r) {
      const SourceCell& s = t.at(r, c);
      if (s.kind == SourceCell::Kind::number) col.numeric = true;
      else if (s.kind == SourceCell::Kind::text) ++col.text_cells;
    }
  }
  return out;
}

std::string column_name(std::size_t col) {
  std::string s;
  for (std::size_t c = col + 1; c > 0; c = (c - 1) / 26) s.insert(s.begin(), static_cast<char>('A' + (c - 1) % 26));
  return s;
}

std::uint64_t hash_values(const std::vector<double>& values, const std::vector<std::string>& names) {
  std::uint64_t h = 0xcbf29ce484222325ULL;
  auto byte = [&h](unsigned char b) {
    h ^= b;
    h *= 0x100000001b3ULL;
  };
  for (double v : values) {
    std::uint64_t bits;
    if (std::isnan(v)) bits = 0x7ff8000000000000ULL;
    else std::memcpy(&bits, &v, sizeof bits);
    for (int i = 0; i < 8; ++i) byte(static_cast<unsigned char>(bits >> (8 * i)));
  }
  for (const std::string& n : names) {
    for (unsigned char ch : n) byte(ch);
    byte(0);
  }
  return h;
}

Report build_report(const SourceTable& src, const Options& o, const std::string& timestamp, const Progress& progress) {
  validate(o);
  auto step = [&](const std::string& phase, double share) {
    if (progress && !progress(phase, share)) throw Cancelled{};
  };
  step("reading the data", 0.0);
  // Shares of the progress bar: the bootstrap, when asked for, is most of the work.
  const bool boot = o.bootstrap > 0;
  const double corr_to = boot ? 0.25 : 0.5, count_to = boot ? 0.45 : 0.9;

  // ---- the items ----------------------------------------------------------------------------
  const bool header = o.header == -1 ? detect_header(src) : o.header == 1;
  const std::vector<Column> columns = describe_columns(src, header);
  std::vector<std::size_t> chosen;
  if (o.items.empty()) {
    for (std::size_t c = 0; c < columns.size(); ++c)
      if (columns[c].numeric) chosen.push_back(c);
  } else {
    for (const std::string& want : o.items) {
      auto it = std::find_if(columns.begin(), columns.end(), [&](const Column& c) { return c.name == want; });
      if (it == columns.end()) throw std::invalid_argument("item \"" + want + "\" is not a column of " + src.address);
      std::size_t c = static_cast<std::size_t>(it - columns.begin());
      if (!it->numeric) throw std::invalid_argument("item \"" + want + "\" holds no numbers");
      if (std::find(chosen.begin(), chosen.end(), c) == chosen.end()) chosen.push_back(c);
    }
  }
  if (chosen.size() < 3)
    throw std::invalid_argument("only " + std::to_string(chosen.size()) + " columns with numbers in " + src.address +
                                "; a factor analysis needs at least 3 items");
  const std::size_t first = header ? 1 : 0;
  const std::size_t n_rows = src.rows - first;
  const std::size_t p = chosen.size();
  std::vector<double> values(n_rows * p, kNaN);
  std::vector<std::string> item_names;
  std::size_t text_as_missing = 0;
  for (std::size_t j = 0; j < p; ++j) {
    item_names.push_back(columns[chosen[j]].name);
    text_as_missing += columns[chosen[j]].text_cells;
    for (std::size_t r = 0; r < n_rows; ++r) {
      const SourceCell& s = src.at(first + r, chosen[j]);
      if (s.kind == SourceCell::Kind::number) values[r * p + j] = s.number;
    }
  }

  Report rep;
  rep.values_hash = hash_values(values, item_names);

  // ---- correlations through the C ABI -------------------------------------------------------
  step("computing correlations", 0.05);
  lode_data* raw_data = nullptr;
  check(lode_data_from_raw(values.data(), static_cast<std::int64_t>(n_rows), static_cast<std::int64_t>(p),
                           static_cast<std::int64_t>(p), 1, &raw_data),
        "reading the items");
  std::unique_ptr<lode_data, DataFree> data(raw_data);
  std::vector<const char*> cnames;
  for (const std::string& n : item_names) cnames.push_back(n.c_str());
  check(lode_data_set_item_names(data.get(), cnames.data(), static_cast<std::int64_t>(p)), "naming the items");

  lode_correlation_options copts;
  lode_correlation_options_init(&copts, sizeof copts);
  copts.kind = o.correlation == "spearman" ? LODE_COEFFICIENT_SPEARMAN : o.correlation == "polychoric" ? LODE_COEFFICIENT_POLYCHORIC : LODE_COEFFICIENT_PEARSON;
  copts.missing = o.missing == "listwise" ? LODE_MISSING_LISTWISE : LODE_MISSING_PAIRWISE;
  copts.threads = 1;  // the office's other work keeps a core
  ProgressBridge bridge{&progress, "computing correlations", 0.05, corr_to};
  copts.progress = &ProgressBridge::call;
  copts.progress_user = &bridge;
  lode_correlation* raw_corr = nullptr;
  check(lode_correlation_compute(data.get(), &copts, &raw_corr), "computing the correlations");
  std::unique_ptr<lode_correlation, CorrFree> corr(raw_corr);
  step("assessing the correlations", corr_to);

  std::int64_t r_rows = 0, r_cols = 0;
  const std::vector<double> R = read_corr_matrix(corr.get(), LODE_CORRELATION_MATRIX, &r_rows, &r_cols);
  const std::vector<double> eig = read_corr_matrix(corr.get(), LODE_CORRELATION_EIGENVALUES, &r_rows, &r_cols);
  std::vector<double> smc;
  std::string smc_problem;
  {
    std::int64_t a = 0, b = 0;
    int st = lode_correlation_matrix(corr.get(), LODE_CORRELATION_SMC, nullptr, 0, &a, &b);
    if (st == LODE_OK) smc = read_corr_matrix(corr.get(), LODE_CORRELATION_SMC, &a, &b);
    else smc_problem = lode_error_message();
  }
  const double rows_total = read_corr_value(corr.get(), LODE_CORRELATION_ROWS_TOTAL);
  const double rows_used = read_corr_value(corr.get(), LODE_CORRELATION_ROWS_USED);
  const double rows_complete = read_corr_value(corr.get(), LODE_CORRELATION_ROWS_COMPLETE);
  const double n_obs = read_corr_value(corr.get(), LODE_CORRELATION_N_OBS);
  const double missing_share = read_corr_value(corr.get(), LODE_CORRELATION_MISSING_FRACTION);
  const double pos_def = read_corr_value(corr.get(), LODE_CORRELATION_POSITIVE_DEFINITE);
  const std::string notes = read_corr_notes(corr.get());

  // Factorability (KMO, MSA, Bartlett) through the C ABI; parts it cannot compute come with a reason.
  lode_factorability* raw_fact = nullptr;
  check(lode_factorability_compute(corr.get(), &raw_fact), "assessing factorability");
  std::unique_ptr<lode_factorability, FactFree> fact(raw_fact);
  const Maybe kmo = fact_value(fact.get(), LODE_FACTORABILITY_KMO);
  const std::string kmo_label = fact_text(fact.get(), LODE_FACTORABILITY_KMO_LABEL);
  const Maybe chi2 = fact_value(fact.get(), LODE_FACTORABILITY_BARTLETT_CHI_SQUARE);
  const Maybe chi2_df = fact_value(fact.get(), LODE_FACTORABILITY_BARTLETT_DF);
  const Maybe chi2_p = fact_value(fact.get(), LODE_FACTORABILITY_BARTLETT_P_VALUE);
  std::string msa_reason;
  const std::vector<double> msa = fact_vector(fact.get(), LODE_FACTORABILITY_MSA, msa_reason);
  const std::vector<std::string> fact_notes = lines_of(fact_text(fact.get(), LODE_FACTORABILITY_NOTES));

  // Eigenvalues above 1: common practice (Kaiser 1960), known to over-count; shown as one piece of evidence.
  std::size_t above_one = 0;
  double total = 0.0;
  for (double e : eig) {
    total += e;
    if (e > 1.0) ++above_one;
  }
  const CountResult count = count_factors(corr.get(), o, progress, corr_to, count_to);
  step("fitting the factor model", count_to + 0.02);
  const int k_decided = o.factors > 0 ? o.factors : count.available ? count.suggested : 0;
  ModelResult model;
  if (k_decided > 0) model = fit_model(corr.get(), o, k_decided);
  else model.reason = count.available ? "no factor stands out from random data" : count.reason;
  const std::size_t k = model.available ? static_cast<std::size_t>(model.factors) : 0;

  // Bootstrap intervals of the loadings (and factor correlations), when asked for.
  BootResult bootr;
  if (boot) {
    step("bootstrap resamples", 0.5);
    if (model.available) bootr = bootstrap_intervals(corr.get(), o, model.factors, progress, 0.5, 0.93);
    else bootr.reason = model.reason;
  }

  // Reliability of each factor's scale, and factor scores when asked for.
  step("reliability of the scales", 0.94);
  ReliabilityResult rel;
  if (model.available) rel = reliability(model, corr.get(), o, R, n_obs, values, n_rows, item_names);
  else rel.reason = model.reason;
  ScoreResult scores;
  bool scores_beside = false, scores_sheet = false;
  std::string scores_where, scores_moved;
  if (o.scores != "none") {
    step("factor scores", 0.96);
    if (model.available) scores = factor_scores(model, data.get(), o);
    else scores.reason = model.reason;
    if (scores.available) {
      if (o.scores_place == "beside") {
        if (!header)
          scores_moved = "the range has no row of item names, so score columns beside it would have no headings";
        else if (src.free_columns_right < k)
          scores_moved = "the " + std::to_string(k) + " columns right of the data are not all empty, and Lode never "
                         "overwrites cells";
        else
          scores_beside = true;
      }
      scores_sheet = !scores_beside;
      if (scores_beside)
        scores_where = "columns " + column_name(src.first_column + src.cols) + " to " +
                       column_name(src.first_column + src.cols + k - 1) + " of " + src.sheet_name +
                       ", beside the data";
      else
        scores_where = names::scores;  // exactly the sheet's name, so the writer puts in the name it ends up with
    }
  }
  using namespace styles;

  // ---- 1. overview --------------------------------------------------------------------------
  Sheet ov;
  ov.base_name = names::overview;
  ov.column_widths = {7000, 4500, 4000, 4000, 4000};
  ov.line({Cell::txt("Lode factor analysis report", title)});
  ov.line({Cell::txt("Written " + timestamp + ". The sheets of this report:", note)});
  for (const char* s : {names::overview, names::loadings, names::factors, names::scree, names::record})
    ov.line({Cell::txt(s, label)});
  if (scores_sheet) ov.line({Cell::txt(names::scores, label)});
  if (scores_beside) ov.line({Cell::txt("Factor scores: " + scores_where, note)});
  ov.blank();
  ov.line({Cell::txt("Data used", heading), Cell::txt("", heading)});
  ov.line({Cell::txt("Source range", label), Cell::txt(src.address)});
  ov.line({Cell::txt("First row holds item names", label), Cell::txt(header ? "yes" : "no")});
  ov.line({Cell::txt("Items analysed", label), Cell::num(static_cast<double>(p))});
  ov.line({Cell::txt("Respondents in the range", label), Cell::num(rows_total)});
  ov.line({Cell::txt("Respondents used", label), Cell::num(rows_used)});
  ov.line({Cell::txt("Respondents who answered every item", label), Cell::num(rows_complete)});
  ov.line({Cell::txt("Sample size for tests", label), Cell::num(n_obs)});
  ov.line({Cell::txt("Share of answers missing", label), Cell::num(missing_share, number)});
  ov.line({Cell::txt("Missing answers", label), Cell::txt(missing_words(o.missing))});
  ov.line({Cell::txt("Correlations", label), Cell::txt(correlation_words(o.correlation))});
  if (text_as_missing > 0)
    ov.line({Cell::txt("Text cells among the answers", label), Cell::num(static_cast<double>(text_as_missing)),
             Cell::txt("read as missing answers", note)});
  ov.blank();
  ov.line({Cell::txt("Can these items be factored?", heading), Cell::txt("", heading)});
  ov.line({Cell::txt("Correlation matrix positive definite", label), Cell::txt(pos_def > 0.5 ? "yes" : "no")});
  if (kmo.reason.empty())
    ov.line({Cell::txt("KMO sampling adequacy", label), Cell::num(kmo.value, number),
             Cell::txt(kmo_label + " (Kaiser 1974); under 0.50 the items share too little to factor", note)});
  else
    ov.line({Cell::txt("KMO sampling adequacy", label), Cell::txt("not available: " + kmo.reason, note)});
  if (chi2.reason.empty()) {
    ov.line({Cell::txt("Bartlett's test: chi-square", label), Cell::num(chi2.value, number)});
    ov.line({Cell::txt("Bartlett's test: degrees of freedom", label), Cell::num(chi2_df.value)});
    ov.line({Cell::txt("Bartlett's test: p-value", label), Cell::num(chi2_p.value),
             Cell::txt(chi2_p.value < 0.001 ? "p < 0.001: the items are correlated, not unrelated (p < 0.05; common practice)"
                       : chi2_p.value < 0.05 ? "the items are correlated, not unrelated (p < 0.05; common practice)"
                                          : "the items may be unrelated: p is 0.05 or more (common practice)",
                       note)});
  } else {
    ov.line({Cell::txt("Bartlett's test of sphericity", label), Cell::txt("not available: " + chi2.reason, note)});
  }
  for (const std::string& n : fact_notes) ov.line({Cell::txt("Note on factorability", flag), Cell::txt(n, note)});
  ov.blank();
  ov.line({Cell::txt("How many factors", heading), Cell::txt("", heading), Cell::txt("", heading), Cell::txt("", heading)});
  const std::string random_words =
      count.available ? "Random data (" + fmt_num(count.percentile, 0) + "th percentile of " +
                            std::to_string(count.replicates) + ")"
                      : "Random data (parallel analysis)";
  ov.line({Cell::txt("Factor", label), Cell::txt("Eigenvalue", label), Cell::txt("Share of variance", label),
           Cell::txt(random_words, label)});
  for (std::size_t k = 0; k < eig.size(); ++k)
    ov.line({Cell::num(static_cast<double>(k + 1)), Cell::num(eig[k], number), Cell::num(eig[k] / total, number),
             count.available && k < count.random_pc.size() ? Cell::num(count.random_pc[k], number)
                                                            : Cell::txt(k == 0 ? count.reason : "", note)});
  if (count.available) {
    ov.line({Cell::txt("Rule", label), Cell::txt("Factors", label), Cell::txt("Basis", label)});
    for (const CountResult::Rule& r : count.rules)
      ov.line({Cell::txt(r.rule, r.primary ? salient : label), Cell::txt(r.factors), Cell::txt(r.basis, note)});
    for (const std::string& n : count.notes) ov.line({Cell::txt("Note on the count", flag), Cell::txt(n, note)});
  } else {
    ov.line({Cell::txt("Eigenvalues above 1", label), Cell::num(static_cast<double>(above_one)),
             Cell::txt("a rule of thumb that tends to suggest too many factors (common practice)", note)});
  }
  if (o.factors > 0)
    ov.line({Cell::txt("Decision", label), Cell::num(o.factors),
             Cell::txt(count.available ? "factors, as you fixed them; the evidence suggests " + std::to_string(count.suggested)
                                       : std::string("factors, as you fixed them"),
                       note)});
  else if (count.available)
    ov.line({Cell::txt("Decision", label), Cell::num(count.suggested), Cell::txt(count.why, note)});
  else
    ov.line({Cell::txt("Decision", label), Cell::txt("not made: " + count.reason, note)});
  ov.blank();
  ov.line({Cell::txt("How well the model fits", heading), Cell::txt("", heading)});
  if (!model.available) {
    ov.line({Cell::txt("Fit statistics (RMSEA, TLI, RMSR)", label), Cell::txt("not available: " + model.reason, note)});
  } else {
    ov.line({Cell::txt("Factors in the model", label), Cell::num(static_cast<double>(k)),
             Cell::txt(o.extraction + ", rotation " + model.rotation_used, note)});
    ov.line({Cell::txt("Root mean square residual (RMSR)", label), Cell::num(model.rmsr, number),
             Cell::txt(model.rmsr <= 0.05 ? "small: the model reproduces the correlations well (0.05 or less; common practice)"
                                          : model.rmsr <= 0.08 ? "acceptable (0.08 or less; common practice)"
                                                               : "large: correlations the factors do not explain (above 0.08; common practice)",
                       note)});
    if (model.have_stats) {
      ov.line({Cell::txt("Chi-square", label), Cell::num(model.chi2, number), Cell::txt("degrees of freedom", note),
               Cell::num(model.df)});
      ov.line({Cell::txt("p-value", label), Cell::num(model.p),
               Cell::txt("with a few hundred respondents even small misfit gives a small p; read RMSEA and TLI too "
                         "(common practice)",
                         note)});
      ov.line({Cell::txt("RMSEA", label), Cell::num(model.rmsea, number),
               Cell::txt(model.rmsea <= 0.05 ? "close fit (0.05 or less; Browne and Cudeck 1993)"
                         : model.rmsea <= 0.08 ? "reasonable fit (0.08 or less; Browne and Cudeck 1993)"
                         : model.rmsea <= 0.10 ? "mediocre fit (0.10 or less; MacCallum, Browne and Sugawara 1996)"
                                               : "poor fit (above 0.10; MacCallum, Browne and Sugawara 1996)",
                         note)});
      ov.line({Cell::txt("RMSEA interval (90%)", label), Cell::num(model.rmsea_lo, number), Cell::txt("to", note),
               Cell::num(model.rmsea_hi, number)});
      ov.line({Cell::txt("TLI", label), Cell::num(model.tli, number),
               Cell::txt(model.tli >= 0.95 ? "good (0.95 or more; Hu and Bentler 1999)"
                                           : model.tli >= 0.90 ? "acceptable (0.90 or more; common practice)"
                                                               : "weak (under 0.90; common practice)",
                         note)});
      ov.line({Cell::txt("BIC", label), Cell::num(model.bic, number), Cell::txt("lower is better when comparing models", note)});
      if (o.extraction != "ml")
        ov.line({Cell::txt("About these figures", label), Cell::txt(kNotLikelihoodRatio, flag)});
    } else {
      ov.line({Cell::txt("Chi-square, RMSEA, TLI", label), Cell::txt("not available: " + model.stats_reason, note)});
    }
    for (const std::string& n : model.notes) ov.line({Cell::txt("Note on the model", flag), Cell::txt(n, note)});
  }
  ov.blank();
  ov.line({Cell::txt("Items to look at", heading), Cell::txt("", heading), Cell::txt("", heading)});
  bool any_flag = false;
  if (model.available)
    for (std::size_t j = 0; j < p; ++j) {
      std::size_t strong = 0;
      for (std::size_t f = 0; f < k; ++f)
        if (std::fabs(model.loadings[j * k + f]) >= o.salient) ++strong;
      std::string why;
      if (model.heywood[j] > 0.5)
        why = "an improper solution for this item (communality at or above 1): the model cannot be trusted for it";
      else if (strong == 0)
        why = "no loading reaches " + fmt_num(o.salient, 2) + ": it does not clearly belong to any factor";
      else if (strong > 1)
        why = "loads on " + std::to_string(strong) + " factors at " + fmt_num(o.salient, 2) +
              " or more: it measures more than one thing";
      if (why.empty()) continue;
      any_flag = true;
      ov.line({Cell::txt(item_names[j], flag), Cell::num(model.communalities[j], number), Cell::txt(why, note)});
    }
  for (std::size_t j = 0; j < msa.size() && j < p; ++j)
    if (msa[j] < 0.50) {  // Kaiser (1974): a sampling adequacy under 0.50 is unacceptable
      any_flag = true;
      ov.line({Cell::txt(item_names[j], flag), Cell::num(msa[j], number),
               Cell::txt("its sampling adequacy (MSA) is under 0.50: the other items say little about it; "
                         "consider leaving it out",
                         note)});
    }
  if (!smc.empty()) {
    for (std::size_t j = 0; j < p; ++j)
      if (smc[j] < 0.20) {  // common practice: an item sharing under a fifth of its variance with the rest
        any_flag = true;
        ov.line({Cell::txt(item_names[j], flag), Cell::num(smc[j], number),
                 Cell::txt("shares little with the other items (squared multiple correlation under 0.20); "
                           "check its wording and whether it belongs to this questionnaire",
                           note)});
      }
  } else {
    ov.line({Cell::txt("Squared multiple correlations", label), Cell::txt(smc_problem, note)});
  }
  if (!notes.empty()) {
    std::size_t start = 0;
    while (start < notes.size()) {
      std::size_t end = notes.find('\n', start);
      if (end == std::string::npos) end = notes.size();
      if (end > start) {
        any_flag = true;
        ov.line({Cell::txt("Note on the correlations", flag), Cell::txt(notes.substr(start, end - start), note)});
      }
      start = end + 1;
    }
  }
  if (!any_flag) ov.line({Cell::txt("No item stands out.", note)});
  ov.blank();
  ov.line({Cell::txt("Before using factor scores about people", heading), Cell::txt("", heading)});
  for (const char* s :
       {"Factor scores are estimates with error, not measurements of a person.",
        "An instrument needs evidence of validity for the intended use before scores inform decisions about "
        "individuals (selection, rating, diagnosis).",
        "Professional testing standards and local law govern such use; follow them, and prefer group summaries "
        "where a decision about one person is not needed."})
    ov.line({Cell::txt(s, caution)});
  if (o.scores != "none") {
    ov.blank();
    ov.line({Cell::txt("Factor scores", heading), Cell::txt("", heading), Cell::txt("", heading)});
    if (!scores.available) {
      ov.line({Cell::txt("Scores", label), Cell::txt("not written: " + scores.reason, note)});
    } else {
      ov.line({Cell::txt("Method", label), Cell::txt(score_method_words(o.scores))});
      ov.line({Cell::txt("Written to", label), Cell::txt(scores_where)});
      if (!scores_moved.empty())
        ov.line({Cell::txt("Not beside the data", flag), Cell::txt("because " + scores_moved, note)});
      ov.line({Cell::txt("Respondents scored from every item", label), Cell::num(scores.rows_complete)});
      ov.line({Cell::txt("Respondents scored from the items they answered", label), Cell::num(scores.rows_partial)});
      ov.line({Cell::txt("Respondents without scores (blank)", label), Cell::num(scores.rows_missing)});
      ov.line({Cell::txt("Rule for skipped items", label), Cell::txt(scores.rule, note)});
      ov.line({Cell::txt("Factor", label), Cell::txt("Determinacy", label), Cell::txt("Scores' correlation with the factor", label)});
      for (std::size_t f = 0; f < k && f < scores.determinacy.size(); ++f)
        ov.line({Cell::txt("Factor " + std::to_string(f + 1), label), Cell::num(scores.determinacy[f], number),
                 Cell::num(scores.validity[f], number),
                 scores.low[f] > 0.5 ? Cell::txt("low determinacy: scores on this factor are poorly determined by the "
                                                 "answers (under 0.80; common practice)",
                                                 flag)
                                     : Cell::txt("")});
      for (const std::string& n : scores.notes) ov.line({Cell::txt("Note on the scores", flag), Cell::txt(n, note)});
      ov.line({Cell::txt(scores.cautions, caution)});
    }
  }
  if (boot) {
    ov.blank();
    ov.line({Cell::txt("Bootstrap intervals", heading), Cell::txt("", heading), Cell::txt("", heading)});
    if (!bootr.available) {
      ov.line({Cell::txt("Intervals", label), Cell::txt("not computed: " + bootr.reason, note)});
    } else {
      ov.line({Cell::txt("Resamples asked for", label), Cell::num(bootr.replicates),
               Cell::txt("respondents drawn with replacement, each resample refitted the same way (Efron and "
                         "Tibshirani 1993)",
                         note)});
      ov.line({Cell::txt("Resamples used", label), Cell::num(bootr.used)});
      ov.line({Cell::txt("Resamples failed", label), Cell::num(bootr.failed),
               Cell::txt(bootr.failed > 0 ? "left out of the intervals; the reasons follow" : "none failed", note)});
      for (const std::string& f : bootr.failures) ov.line({Cell::txt("Why resamples failed", flag), Cell::txt(f, note)});
      ov.line({Cell::txt("Interval", label), Cell::num(bootr.level, number),
               Cell::txt("two-sided percentile intervals, beside the loadings on " + std::string(names::loadings), note)});
      ov.line({Cell::txt("How resamples were aligned", label), Cell::txt(bootr.alignment, note)});
      ov.line({Cell::txt("Resamples poorly matched", label), Cell::num(bootr.poorly_matched),
               Cell::txt(bootr.poorly_matched > 0
                             ? "some factor matched with congruence under 0.85 (Lorenzo-Seva and ten Berge 2006): its "
                               "intervals mix different factors"
                             : "every factor of every resample matched with congruence 0.85 or more (Lorenzo-Seva "
                               "and ten Berge 2006)",
                         bootr.poorly_matched > 0 ? flag : note)});
      for (const std::string& n : bootr.notes) ov.line({Cell::txt("Note on the bootstrap", flag), Cell::txt(n, note)});
    }
  }
  rep.sheets.push_back(std::move(ov));

  // ---- 2. loadings --------------------------------------------------------------------------
  Sheet ld;
  ld.base_name = names::loadings;
  ld.column_widths = {5000, 3000, 3000, 3000, 3000, 3000, 3000, 3000};
  if (boot && bootr.available) {  // the intervals beside the loadings, communality and uniqueness
    ld.column_widths.assign(1 + k + 2, 3000);
    ld.column_widths[0] = 5000;
    ld.column_widths.resize(1 + k + 2 + 2 * k, 3700);
  }
  ld.line({Cell::txt("Loadings", title)});
  ld.line({Cell::txt("Strong loadings (at least " + fmt_num(o.salient, 2) + ") are shaded; small ones are grey.", note)});
  if (!model.available) {
    ld.line({Cell::txt("Factor loadings: " + model.reason + ". Shown until then: each item's starting "
                       "communality estimate.",
                       note)});
  } else {
    ld.line({Cell::txt("Items are grouped by the factor they load on most, largest loading first.", note)});
    if (boot && bootr.available)
      ld.line({Cell::txt("Beside the loadings: " + fmt_num(100.0 * bootr.level, 0) + "% bootstrap intervals from " +
                             fmt_num(bootr.used, 0) + " resamples (see " + names::overview + ", \"Bootstrap intervals\").",
                         note)});
    else if (boot)
      ld.line({Cell::txt("Bootstrap intervals: not computed: " + bootr.reason, note)});
    ld.blank();
    std::vector<Cell> hdr{Cell::txt("Item", heading)};
    for (std::size_t f = 0; f < k; ++f) hdr.push_back(Cell::txt("Factor " + std::to_string(f + 1), heading));
    hdr.push_back(Cell::txt("Communality", heading));
    hdr.push_back(Cell::txt("Uniqueness", heading));
    const bool intervals = boot && bootr.available;
    const std::string pct = intervals ? fmt_num(100.0 * bootr.level, 0) + "%" : "";
    if (intervals)
      for (std::size_t f = 0; f < k; ++f) {
        hdr.push_back(Cell::txt("Factor " + std::to_string(f + 1) + " " + pct + " from", heading));
        hdr.push_back(Cell::txt("Factor " + std::to_string(f + 1) + " " + pct + " to", heading));
      }
    ld.line(std::move(hdr));
    for (std::size_t j : loading_order(model.loadings, p, k)) {
      std::vector<Cell> row{Cell::txt(item_names[j], label)};
      for (std::size_t f = 0; f < k; ++f) {
        const double v = model.loadings[j * k + f];
        row.push_back(Cell::num(v, std::fabs(v) >= o.salient ? salient : faint));
      }
      row.push_back(Cell::num(model.communalities[j], number));
      row.push_back(Cell::num(model.uniquenesses[j], number));
      if (intervals)
        for (std::size_t f = 0; f < k; ++f) {
          // an interval that reaches across zero: the sign of the loading is not settled by the data
          const bool across = bootr.lower[j * k + f] <= 0.0 && bootr.upper[j * k + f] >= 0.0;
          row.push_back(Cell::num(bootr.lower[j * k + f], across ? faint : number));
          row.push_back(Cell::num(bootr.upper[j * k + f], across ? faint : number));
        }
      ld.line(std::move(row));
    }
    std::vector<Cell> ssrow{Cell::txt("Sum of squared loadings", label)};
    for (std::size_t f = 0; f < k; ++f) ssrow.push_back(Cell::num(model.ss[f], number));
    ld.line(std::move(ssrow));
    ld.blank();
  }
  ld.line({Cell::txt("Item", heading), Cell::txt("Starting communality (SMC)", heading),
           Cell::txt("Sampling adequacy (MSA)", heading)});
  for (std::size_t j = 0; j < p; ++j)
    ld.line({Cell::txt(item_names[j], label), smc.empty() ? Cell::txt(smc_problem, note) : Cell::num(smc[j], number),
             msa.empty() ? Cell::txt(msa_reason, note) : Cell::num(msa[j], number)});
  rep.sheets.push_back(std::move(ld));

  // ---- 3. factors, residuals, reliability ---------------------------------------------------
  Sheet fc;
  fc.base_name = names::factors;
  fc.column_widths = {5200, 3300, 3300, 3300, 3300, 3300, 3300, 3300, 3300};
  fc.line({Cell::txt("Factors, residuals and reliability", title)});
  if (!model.available) {
    fc.line({Cell::txt("Factor correlations and structure: " + model.reason, note)});
    fc.line({Cell::txt("Residual correlations: " + model.reason, note)});
  } else {
    if (model.oblique) {
      fc.blank();
      fc.line({Cell::txt("Factor correlations", heading)});
      std::vector<Cell> hdr{Cell::txt("", heading)};
      for (std::size_t f = 0; f < k; ++f) hdr.push_back(Cell::txt("Factor " + std::to_string(f + 1), heading));
      fc.line(hdr);
      for (std::size_t a = 0; a < k; ++a) {
        std::vector<Cell> row{Cell::txt("Factor " + std::to_string(a + 1), label)};
        for (std::size_t b = 0; b < k; ++b) row.push_back(Cell::num(model.phi[a * k + b], number));
        fc.line(std::move(row));
      }
      if (boot && bootr.available) {
        fc.blank();
        const std::string pct = fmt_num(100.0 * bootr.level, 0) + "%";
        fc.line({Cell::txt("Factor correlations with " + pct + " bootstrap intervals", heading), Cell::txt("", heading),
                 Cell::txt("", heading), Cell::txt("", heading)});
        fc.line({Cell::txt("Factors", label), Cell::txt("Correlation", label), Cell::txt(pct + " from", label),
                 Cell::txt(pct + " to", label)});
        for (std::size_t a = 0; a < k; ++a)
          for (std::size_t b = a + 1; b < k; ++b)
            fc.line({Cell::txt("Factor " + std::to_string(a + 1) + " and factor " + std::to_string(b + 1), label),
                     Cell::num(model.phi[a * k + b], number), Cell::num(bootr.phi_lower[a * k + b], number),
                     Cell::num(bootr.phi_upper[a * k + b], number)});
      }
      fc.blank();
      fc.line({Cell::txt("Structure: correlations of items with factors", heading)});
      hdr[0] = Cell::txt("Item", heading);
      fc.line(hdr);
      for (std::size_t j = 0; j < p; ++j) {
        std::vector<Cell> row{Cell::txt(item_names[j], label)};
        for (std::size_t f = 0; f < k; ++f) row.push_back(Cell::num(model.structure[j * k + f], number));
        fc.line(std::move(row));
      }
    } else {
      fc.line({Cell::txt("The factors are kept uncorrelated (orthogonal rotation): no factor correlations.", note)});
    }
    fc.blank();
    fc.line({Cell::txt("Residual correlations (observed minus model); above 0.10 in size is flagged (common practice)", heading)});
    std::vector<Cell> rh{Cell::txt("", heading)};
    for (const std::string& n : item_names) rh.push_back(Cell::txt(n, heading));
    fc.line(std::move(rh));
    for (std::size_t i = 0; i < p; ++i) {
      std::vector<Cell> row{Cell::txt(item_names[i], label)};
      for (std::size_t j = 0; j < p; ++j) {
        const double v = model.residuals[i * p + j];
        row.push_back(Cell::num(v, i != j && std::fabs(v) > 0.10 ? flag : number));
      }
      fc.line(std::move(row));
    }
  }
  fc.blank();
  fc.line({Cell::txt("Reliability of each factor's scale", heading), Cell::txt("", heading), Cell::txt("", heading),
           Cell::txt("", heading), Cell::txt("", heading), Cell::txt("", heading), Cell::txt("", heading),
           Cell::txt("", heading), Cell::txt("", heading)});
  if (!rel.available) {
    fc.line({Cell::txt("Reliability (alpha, omega): not computed: " + rel.reason, note)});
  } else {
    fc.line({Cell::txt("Each item counts in the scale of the factor it loads on most (its largest absolute loading), "
                       "as on the loadings sheet.",
                       note)});
    if (!rel.reversed_names.empty()) {
      std::string list;
      for (const std::string& n : rel.reversed_names) list += (list.empty() ? "" : ", ") + n;
      fc.line({Cell::txt("Reverse-scored for these figures, because they load negatively on their factor: " + list +
                             " (lowest plus highest answer given, minus the answer), as a scale score would add them.",
                         note)});
    }
    fc.line({Cell::txt("Alpha (Cronbach 1951) uses the respondents who answered every item of the scale; omega "
                       "(McDonald 1999) comes from the model's loadings, factor correlations and uniquenesses, as a "
                       "share of the variance of the scale's sum that the model implies.",
                       note)});
    fc.line({Cell::txt("Omega total: the share due to all the common factors (the items' loadings on other factors "
                       "and the factor correlations count). Factor's share: the part due to the scale's own factor "
                       "alone, (sum of the items' loadings on it) squared over the same variance. With one factor "
                       "the two agree.",
                       note)});
    if (!rel.omega_reason.empty()) fc.line({Cell::txt("Omega not available: " + rel.omega_reason, flag)});
    fc.line({Cell::txt("Scale", heading), Cell::txt("Items", heading), Cell::txt("Alpha", heading),
             Cell::txt("Standardised alpha", heading), Cell::txt("Omega total", heading),
             Cell::txt("Omega, factor's share", heading), Cell::txt("Mean inter-item correlation", heading),
             Cell::txt("Respondents used", heading), Cell::txt("Reading (omega total)", heading)});
    for (const ScaleReliability& sr : rel.scales) {
      std::vector<Cell> row{Cell::txt("Factor " + std::to_string(sr.factor + 1), label),
                            Cell::num(static_cast<double>(sr.items.size()))};
      if (sr.have_alpha) {
        row.push_back(Cell::num(sr.alpha, number));
        row.push_back(Cell::num(sr.alpha_std, number));
      } else {
        row.push_back(Cell::txt(sr.alpha_reason, note));
        row.push_back(Cell::txt(""));
      }
      row.push_back(std::isnan(sr.omega) ? Cell::txt(sr.items.empty() ? "no items" : "not available", note)
                                         : Cell::num(sr.omega, number));
      row.push_back(std::isnan(sr.omega_share) ? Cell::txt(sr.items.empty() ? "no items" : "not available", note)
                                               : Cell::num(sr.omega_share, number));
      if (sr.have_alpha) {
        row.push_back(Cell::num(sr.mean_r, number));
        row.push_back(Cell::num(sr.rows_used));
      } else {
        row.push_back(Cell::txt(""));
        row.push_back(Cell::txt(""));
      }
      row.push_back(Cell::txt(reliability_words(sr.omega), note));
      fc.line(std::move(row));
    }
    for (const ScaleReliability& sr : rel.scales) {
      if (sr.items.empty()) continue;
      fc.blank();
      fc.line({Cell::txt("Items of factor " + std::to_string(sr.factor + 1) + "'s scale", heading), Cell::txt("", heading),
               Cell::txt("", heading), Cell::txt("", heading), Cell::txt("", heading), Cell::txt("", heading),
               Cell::txt("", heading), Cell::txt("", heading)});
      fc.line({Cell::txt("Item", label), Cell::txt("Loading", label), Cell::txt("Reverse-scored", label),
               Cell::txt("Corrected item-total correlation", label), Cell::txt("Alpha if item deleted", label),
               Cell::txt("Standardised alpha if item deleted", label), Cell::txt("Mean", label), Cell::txt("SD", label)});
      for (std::size_t c = 0; c < sr.items.size(); ++c) {
        const std::size_t j = sr.items[c];
        std::vector<Cell> row{Cell::txt(item_names[j], label), Cell::num(model.loadings[j * k + sr.factor], number),
                              Cell::txt(sr.reversed[c] ? "yes" : "no")};
        if (sr.have_alpha) {
          // under 0.30: the item hardly goes with the rest of its scale (common practice)
          row.push_back(Cell::num(sr.item_total[c], sr.item_total[c] < 0.30 ? flag : number));
          // above the scale's alpha: the scale would be more consistent without the item
          row.push_back(std::isnan(sr.alpha_if_deleted[c]) ? Cell::txt("")
                                                          : Cell::num(sr.alpha_if_deleted[c], sr.alpha_if_deleted[c] > sr.alpha ? flag : number));
          row.push_back(std::isnan(sr.alpha_std_if_deleted[c]) ? Cell::txt("") : Cell::num(sr.alpha_std_if_deleted[c], number));
          row.push_back(Cell::num(sr.means[c], number));
          row.push_back(Cell::num(sr.sds[c], number));
        }
        fc.line(std::move(row));
      }
      for (const std::string& n : sr.notes) fc.line({Cell::txt("Note on the scale", flag), Cell::txt(n, note)});
    }
    if (std::any_of(rel.scales.begin(), rel.scales.end(), [](const ScaleReliability& x) { return x.have_alpha; }))
      fc.line({Cell::txt("Flagged: a corrected item-total correlation under 0.30, or an alpha that would rise without "
                         "the item (common practice).",
                         note)});
    for (const std::string& n : rel.omega_notes) fc.line({Cell::txt("Note on omega", flag), Cell::txt(n, note)});
  }
  fc.blank();
  fc.line({Cell::txt("Item correlations used", heading)});
  {
    std::vector<Cell> hdr{Cell::txt("", heading)};
    for (const std::string& n : item_names) hdr.push_back(Cell::txt(n, heading));
    fc.line(std::move(hdr));
    for (std::size_t i = 0; i < p; ++i) {
      std::vector<Cell> row{Cell::txt(item_names[i], label)};
      for (std::size_t j = 0; j < p; ++j) row.push_back(Cell::num(R[i * p + j], number));
      fc.line(std::move(row));
    }
  }
  rep.sheets.push_back(std::move(fc));

  // ---- 4. scree -----------------------------------------------------------------------------
  Sheet sc;
  sc.base_name = names::scree;
  sc.line({Cell::txt("Scree: eigenvalues of the item correlations", title)});
  sc.line({Cell::txt(count.available ? "Where the observed line falls below the random-data line, the factors are no "
                                        "stronger than chance (parallel analysis, Horn 1965)."
                                      : "The random-data line of parallel analysis: " + count.reason,
                    note)});
  sc.blank();
  const std::size_t table_top = sc.rows.size();
  if (count.available)
    sc.line({Cell::txt("Factor", heading), Cell::txt("Observed eigenvalue", heading), Cell::txt(random_words, heading)});
  else
    sc.line({Cell::txt("Factor", heading), Cell::txt("Observed eigenvalue", heading)});
  for (std::size_t k = 0; k < eig.size(); ++k) {
    std::vector<Cell> row{Cell::num(static_cast<double>(k + 1)), Cell::num(eig[k], number)};
    if (count.available && k < count.random_pc.size()) row.push_back(Cell::num(count.random_pc[k], number));
    sc.line(std::move(row));
  }
  Chart ch;
  ch.name = "LodeScree";
  ch.title = "Scree";
  ch.x_title = "Factor";
  ch.y_title = "Eigenvalue";
  ch.top = table_top;
  ch.left = 0;
  ch.rows = eig.size() + 1;
  ch.cols = count.available ? 3 : 2;
  ch.anchor_row = table_top;
  ch.anchor_col = 3;
  sc.charts.push_back(ch);
  sc.column_widths = {2500, 4000, 6500};
  rep.sheets.push_back(std::move(sc));

  // ---- 5. run record ------------------------------------------------------------------------
  Sheet rr;
  rr.base_name = names::record;
  rr.column_widths = {6000, 9000};
  const lode_version_info* v = lode_version();
  char hash[32];
  std::snprintf(hash, sizeof hash, "%016llx", static_cast<unsigned long long>(rep.values_hash));
  std::string items_text;
  for (const std::string& n : item_names) items_text += (items_text.empty() ? "" : ", ") + n;
  rr.line({Cell::txt("Run record", title)});
  rr.line({Cell::txt("Everything needed to repeat this analysis exactly.", note)});
  auto rec = [&rr](const char* k, Cell val) { rr.line({Cell::txt(k, label), std::move(val)}); };
  rec("Lode version", Cell::txt(std::string(v->string) + " (C ABI " + std::to_string(v->abi_major) + "." +
                                std::to_string(v->abi_minor) + ")"));
  rec("Written", Cell::txt(timestamp));
  rec("Source range", Cell::txt(src.address));
  rec("First row holds item names", Cell::txt(header ? "yes" : "no"));
  rec("Items", Cell::txt(items_text));
  rec("Values hash (FNV-1a 64)", Cell::txt(hash));
  rec("Correlations", Cell::txt(o.correlation));
  rec("Missing answers", Cell::txt(o.missing));
  rec("Number of factors", o.factors > 0 ? Cell::num(o.factors) : Cell::txt("suggest"));
  rec("Extraction", Cell::txt(o.extraction));
  rec("Rotation", Cell::txt(o.rotation));
  rec("Rotation parameter", Cell::num(o.rotation_parameter));
  rec("Factor scores", Cell::txt(o.scores));
  rec("Factor scores placed", Cell::txt(o.scores_place));
  if (o.scores != "none") {
    rec("Factor scores written to", Cell::txt(scores.available ? scores_where : "not written: " + scores.reason));
    rec("Rule for skipped items (scores)", Cell::txt(scores.available ? scores.rule : ""));
  }
  rec("Scale membership (reliability)", Cell::txt("largest absolute loading; negative loaders reverse-scored"));
  rec("Bootstrap resamples", Cell::num(o.bootstrap));
  if (boot) {
    rec("Bootstrap seed", Cell::txt(std::to_string(o.seed) + " (resample i draws from stream i of it)"));
    if (bootr.available) {
      rec("Bootstrap resamples used", Cell::num(bootr.used));
      rec("Bootstrap resamples failed", Cell::num(bootr.failed));
      rec("Bootstrap interval level", Cell::num(bootr.level));
    } else {
      rec("Bootstrap intervals", Cell::txt("not computed: " + bootr.reason));
    }
  }
  rec("Strong loading from", Cell::num(o.salient));
  rec("Random seed", Cell::txt(std::to_string(o.seed)));
  rep.sheets.push_back(std::move(rr));

  // ---- 6. factor scores: beside the data, or on a sheet of their own ------------------------------
  if (scores.available) {
    const std::string method = score_method_short(o.scores);
    auto score_header = [&](std::size_t f) { return "Factor " + std::to_string(f + 1) + " score (" + method + ")"; };
    auto score_cell = [&](std::size_t r, std::size_t f) {
      const double v = scores.values[r * k + f];
      return std::isnan(v) ? Cell{} : Cell::num(v);
    };
    if (scores_beside) {
      Beside b;
      b.columns = k;
      b.where = scores_where;
      std::vector<Cell> hdr;
      for (std::size_t f = 0; f < k; ++f) {
        hdr.push_back(Cell::txt(score_header(f)));
        b.header_comments.push_back("Written by Lode (" + std::string(score_method_words(o.scores)) + "), " + timestamp +
                                    ". " + scores.cautions + " Blank cells: " + scores.rule + ".");
      }
      b.rows.push_back(std::move(hdr));
      for (std::size_t r = 0; r < n_rows; ++r) {
        std::vector<Cell> row;
        for (std::size_t f = 0; f < k; ++f) row.push_back(score_cell(r, f));
        b.rows.push_back(std::move(row));
      }
      rep.beside = std::move(b);
    } else {
      Sheet ss;
      ss.base_name = names::scores;
      ss.line({Cell::txt("Factor scores", title)});
      ss.line({Cell::txt(scores.cautions, caution)});
      ss.line({Cell::txt("Method: " + std::string(score_method_words(o.scores)) + ". Blank cells: " + scores.rule + ".", note)});
      if (!scores_moved.empty()) ss.line({Cell::txt("On this sheet rather than beside the data because " + scores_moved + ".", note)});
      ss.blank();
      // Rows are those of the source range; columns of the range that were not analysed (such as a
      // respondent code) come along so each row can be matched to its respondent.
      std::vector<std::size_t> id_cols;
      for (std::size_t c = 0; c < columns.size() && id_cols.size() < 3; ++c)
        if (std::find(chosen.begin(), chosen.end(), c) == chosen.end()) id_cols.push_back(c);
      std::vector<Cell> hdr{Cell::txt("Row in " + src.sheet_name, heading)};
      for (std::size_t c : id_cols) hdr.push_back(Cell::txt(columns[c].name, heading));
      for (std::size_t f = 0; f < k; ++f) hdr.push_back(Cell::txt(score_header(f), heading));
      ss.line(std::move(hdr));
      for (std::size_t r = 0; r < n_rows; ++r) {
        std::vector<Cell> row{Cell::num(static_cast<double>(src.first_row + first + r + 1))};
        for (std::size_t c : id_cols) {
          const SourceCell& sc = src.at(first + r, c);
          row.push_back(sc.kind == SourceCell::Kind::number ? Cell::num(sc.number)
                        : sc.kind == SourceCell::Kind::text ? Cell::txt(sc.text)
                                                           : Cell{});
        }
        for (std::size_t f = 0; f < k; ++f) row.push_back(score_cell(r, f));
        ss.line(std::move(row));
      }
      ss.column_widths.assign(1 + id_cols.size() + k, 4200);
      rep.sheets.push_back(std::move(ss));
    }
  }

  rep.summary = "Lode analysed " + std::to_string(p) + " items of " + std::to_string(static_cast<long long>(rows_used)) +
                " respondents";
  if (scores_beside) rep.summary += "; factor scores are in " + scores_where;
  step("writing the report", 1.0);
  return rep;
}

}  // namespace lode::addin::report
