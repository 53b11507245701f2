// The report's analysis: reads the items and makes every C ABI call of a run (lode.h only, through the
// add-in's wrapper capi.hpp), leaving one plain Analysis value for the sheet layouts.
#include "report_analysis.hpp"

#include "capi.hpp"
#include "report_calls.hpp"
#include "report_text.hpp"

#include <algorithm>
#include <cmath>
#include <stdexcept>

namespace lode::addin::report {

// The report's reading of a C ABI status: cancelled runs stop, bad input is the person's to fix
// (std::invalid_argument, shown with its reason), anything else is a failure of the run.
void report_check(int status, const char* what) {
  if (status == LODE_OK) return;
  if (status == LODE_E_CANCELLED) throw Cancelled{};
  const std::string msg = std::string(what) + ": " + lode_error_message();
  if (status == LODE_E_INVALID_ARGUMENT || status == LODE_E_INSUFFICIENT_DATA || status == LODE_E_TOO_MANY_FACTORS ||
      status == LODE_E_NOT_POSITIVE_DEFINITE)
    throw std::invalid_argument(msg);
  throw std::runtime_error(msg + " (" + lode_status_name(status) + ")");
}

// The items as a C ABI data handle with their names.
DataHandle make_data(const std::vector<double>& values, std::size_t rows, const std::vector<std::string>& names) {
  const auto p = static_cast<std::int64_t>(names.size());
  lode_data* raw = nullptr;
  report_check(lode_data_from_raw(values.data(), static_cast<std::int64_t>(rows), p, p, 1, &raw), "reading the items");
  DataHandle data(raw);
  std::vector<const char*> cn;
  for (const std::string& n : names) cn.push_back(n.c_str());
  report_check(lode_data_set_item_names(data.get(), cn.data(), p), "naming the items");
  return data;
}

lode_correlation_options correlation_options(const Options& o) {
  lode_correlation_options copts;
  lode_correlation_options_init(&copts, sizeof copts);
  copts.kind = o.correlation == "spearman" ? LODE_COEFFICIENT_SPEARMAN : o.correlation == "polychoric" ? LODE_COEFFICIENT_POLYCHORIC : LODE_COEFFICIENT_PEARSON;
  copts.missing = o.missing == "listwise" ? LODE_MISSING_LISTWISE : o.missing == "em" ? LODE_MISSING_EM : LODE_MISSING_PAIRWISE;
  copts.threads = 1;  // the office's other work keeps a core
  return copts;
}

int ProgressBridge::call(void* user, std::int64_t done, std::int64_t total) {
  auto* self = static_cast<ProgressBridge*>(user);
  double share = total > 0 ? static_cast<double>(done) / static_cast<double>(total) : 0.0;
  bool go_on = !*self->progress || (*self->progress)(self->phase, self->from + (self->to - self->from) * share);
  return go_on ? 0 : 1;
}

FitSetup::FitSetup(const Options& o, int factors) {
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

namespace {

using ModelHandle = Handle<lode_model, lode_model_free>;
using FactorabilityHandle = Handle<lode_factorability, lode_factorability_free>;
using CountHandle = Handle<lode_factor_count, lode_factor_count_free>;
using BootstrapHandle = Handle<lode_bootstrap, lode_bootstrap_free>;
using ReliabilityHandle = Handle<lode_reliability, lode_reliability_free>;
using ScoresHandle = Handle<lode_scores, lode_scores_free>;


// A result the C ABI may decline (an optional part of the report): its value, or the reason.
struct Declined {
  std::string reason;
};
void declining_check(int status, const char*) {
  if (status == LODE_E_CANCELLED) throw Cancelled{};
  if (status != LODE_OK) throw Declined{lode_error_message()};
}
template <class Read>
auto attempt(Read read, std::string& reason) -> decltype(read()) {
  try {
    return read();
  } catch (const Declined& d) {
    reason = d.reason;
    return {};
  }
}



Items read_items(const SourceTable& src, const Options& o) {
  Items it;
  it.header = o.header == -1 ? detect_header(src) : o.header == 1;
  it.columns = describe_columns(src, it.header);
  if (!o.group_column.empty() &&
      std::none_of(it.columns.begin(), it.columns.end(), [&](const Column& c) { return c.name == o.group_column; }))
    throw std::invalid_argument("the grouping column \"" + o.group_column + "\" is not a column of " + src.address);
  if (o.items.empty()) {
    for (std::size_t c = 0; c < it.columns.size(); ++c)  // a grouping column is never an item
      if (it.columns[c].numeric && it.columns[c].name != o.group_column) it.chosen.push_back(c);
  } else {
    for (const std::string& want : o.items) {
      auto found = std::find_if(it.columns.begin(), it.columns.end(), [&](const Column& c) { return c.name == want; });
      if (found == it.columns.end()) throw std::invalid_argument("item \"" + want + "\" is not a column of " + src.address);
      const auto c = static_cast<std::size_t>(found - it.columns.begin());
      if (!found->numeric) throw std::invalid_argument("item \"" + want + "\" holds no numbers");
      if (want == o.group_column)
        throw std::invalid_argument("\"" + want + "\" is the grouping column; it cannot also be an item");
      if (std::find(it.chosen.begin(), it.chosen.end(), c) == it.chosen.end()) it.chosen.push_back(c);
    }
  }
  if (it.chosen.size() < 3)
    throw std::invalid_argument("only " + std::to_string(it.chosen.size()) + " columns with numbers in " + src.address +
                                "; a factor analysis needs at least 3 items");
  const std::size_t first = it.header ? 1 : 0, p = it.chosen.size();
  it.rows = src.rows - first;
  it.values.assign(it.rows * p, kNaN);
  for (std::size_t j = 0; j < p; ++j) {
    it.names.push_back(it.columns[it.chosen[j]].name);
    it.text_as_missing += it.columns[it.chosen[j]].text_cells;
    for (std::size_t r = 0; r < it.rows; ++r) {
      const SourceCell& s = src.at(first + r, it.chosen[j]);
      if (s.kind == SourceCell::Kind::number) it.values[r * p + j] = s.number;
    }
  }
  return it;
}


CorrelationHandle correlate(const lode_data* data, const Options& o, const Progress& progress, double to) {
  lode_correlation_options copts = correlation_options(o);
  ProgressBridge bridge{&progress, "computing correlations", 0.05, to};
  copts.progress = &ProgressBridge::call;
  copts.progress_user = &bridge;
  lode_correlation* raw = nullptr;
  report_check(lode_correlation_compute(data, &copts, &raw), "computing the correlations");
  return CorrelationHandle(raw);
}

CorrelationFacts correlation_facts(const lode_correlation* c) {
  CorrelationFacts f;
  const auto g = lode_correlation_matrix;
  const auto value = [&](int key) { return read_value(c, key, lode_correlation_value, "reading a result", report_check); };
  f.matrix = vec(c, LODE_CORRELATION_MATRIX, g, "reading a result");
  f.eigenvalues = vec(c, LODE_CORRELATION_EIGENVALUES, g, "reading a result");
  f.smc = attempt([&] { return vec(c, LODE_CORRELATION_SMC, g, "", declining_check); }, f.smc_problem);
  f.rows_total = value(LODE_CORRELATION_ROWS_TOTAL);
  f.rows_used = value(LODE_CORRELATION_ROWS_USED);
  f.rows_complete = value(LODE_CORRELATION_ROWS_COMPLETE);
  f.n_obs = value(LODE_CORRELATION_N_OBS);
  f.missing_share = value(LODE_CORRELATION_MISSING_FRACTION);
  f.positive_definite = value(LODE_CORRELATION_POSITIVE_DEFINITE) > 0.5;
  std::string unused;
  f.notes = lines_of(attempt([&] { return read_text(c, LODE_CORRELATION_NOTES, lode_correlation_text, "", declining_check); },
                             unused));

  // Factorability (KMO, MSA, Bartlett); parts the C ABI cannot compute come with a reason.
  lode_factorability* raw = nullptr;
  report_check(lode_factorability_compute(c, &raw), "assessing factorability");
  FactorabilityHandle fact(raw);
  const auto maybe = [&](int key) {
    Maybe m;
    m.value = attempt([&] { return read_value(fact.get(), key, lode_factorability_value, "", declining_check); }, m.reason);
    if (!m.reason.empty()) m.value = kNaN;
    return m;
  };
  const auto text = [&](int key) {
    return attempt([&] { return read_text(fact.get(), key, lode_factorability_text, "", declining_check); }, unused);
  };
  f.kmo = maybe(LODE_FACTORABILITY_KMO);
  f.kmo_label = text(LODE_FACTORABILITY_KMO_LABEL);
  f.bartlett_chi2 = maybe(LODE_FACTORABILITY_BARTLETT_CHI_SQUARE);
  f.bartlett_df = maybe(LODE_FACTORABILITY_BARTLETT_DF);
  f.bartlett_p = maybe(LODE_FACTORABILITY_BARTLETT_P_VALUE);
  f.msa = attempt([&] { return vec(fact.get(), LODE_FACTORABILITY_MSA, lode_factorability_matrix, "", declining_check); },
                  f.msa_reason);
  f.factorability_notes = lines_of(text(LODE_FACTORABILITY_NOTES));
  return f;
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
  CountHandle count(raw);
  const auto value = [&](int key) { return read_value(count.get(), key, lode_factor_count_value, "the factor count", report_check); };
  const auto text = [&](int key) { return read_text(count.get(), key, lode_factor_count_text, "the factor count", report_check); };
  r.random_pc = vec(count.get(), LODE_FACTOR_COUNT_RANDOM_PC_PERCENTILE, lode_factor_count_matrix, "parallel analysis");
  r.observed_factor = vec(count.get(), LODE_FACTOR_COUNT_OBSERVED_FACTOR, lode_factor_count_matrix, "parallel analysis");
  r.random_factor = vec(count.get(), LODE_FACTOR_COUNT_RANDOM_FACTOR_PERCENTILE, lode_factor_count_matrix, "parallel analysis");
  r.suggested = static_cast<int>(value(LODE_FACTOR_COUNT_SUGGESTED));
  r.percentile = value(LODE_FACTOR_COUNT_PERCENTILE);
  r.replicates = static_cast<int>(value(LODE_FACTOR_COUNT_REPLICATES));
  r.why = text(LODE_FACTOR_COUNT_REASON);
  for (const std::string& line : lines_of(text(LODE_FACTOR_COUNT_TABLE))) {
    CountResult::Rule rule;
    std::size_t a = line.find('\t'), b = line.find('\t', a + 1), c = line.find('\t', b + 1);
    if (a == std::string::npos || b == std::string::npos || c == std::string::npos) continue;
    rule.rule = line.substr(0, a);
    rule.factors = line.substr(a + 1, b - a - 1);
    rule.primary = line.substr(b + 1, c - b - 1) == "1";
    rule.basis = line.substr(c + 1);
    r.rules.push_back(rule);
  }
  r.notes = lines_of(text(LODE_FACTOR_COUNT_NOTES));
  r.available = true;
  return r;
}


ModelResult read_model(const lode_model* m, int factors, std::string rotation_used) {
  ModelResult r;
  r.factors = factors;
  r.rotation_used = std::move(rotation_used);
  const auto mat = [&](int key) { return vec(m, key, lode_model_matrix, "reading the model"); };
  const auto value = [&](int key) { return read_value(m, key, lode_model_value, "reading the model", report_check); };
  r.loadings = mat(LODE_MODEL_LOADINGS);
  r.structure = mat(LODE_MODEL_STRUCTURE);
  r.phi = mat(LODE_MODEL_FACTOR_CORRELATIONS);
  r.communalities = mat(LODE_MODEL_COMMUNALITIES);
  r.uniquenesses = mat(LODE_MODEL_UNIQUENESSES);
  r.residuals = mat(LODE_MODEL_RESIDUALS);
  r.heywood = mat(LODE_MODEL_HEYWOOD);
  r.ss = mat(LODE_MODEL_SS_LOADINGS);
  r.oblique = value(LODE_MODEL_OBLIQUE) > 0.5;
  r.rmsr = value(LODE_MODEL_RMSR);
  r.max_residual = value(LODE_MODEL_MAX_ABS_RESIDUAL);
  r.chi2 = attempt([&] { return read_value(m, LODE_MODEL_CHI_SQUARE, lode_model_value, "", declining_check); },
                   r.stats_reason);
  r.have_stats = r.stats_reason.empty();
  if (r.have_stats) {
    r.df = value(LODE_MODEL_DF);
    r.p = value(LODE_MODEL_P_VALUE);
    r.rmsea = value(LODE_MODEL_RMSEA);
    r.rmsea_lo = value(LODE_MODEL_RMSEA_LOWER);
    r.rmsea_hi = value(LODE_MODEL_RMSEA_UPPER);
    r.tli = value(LODE_MODEL_TLI);
    r.bic = value(LODE_MODEL_BIC);
  } else {
    r.chi2 = kNaN;
  }
  std::string unused;
  r.notes = lines_of(attempt([&] { return read_text(m, LODE_MODEL_NOTES, lode_model_text, "", declining_check); }, unused));
  r.available = true;
  return r;
}

// The model with the run's options; `handle` keeps it for scores and reliability.
ModelResult fit_model(const lode_correlation* corr, const Options& o, int factors, ModelHandle& handle) {
  FitSetup setup(o, factors);
  lode_model* raw = nullptr;
  const int st = lode_model_compute(corr, &setup.fo, &raw);
  if (st == LODE_E_CANCELLED) throw Cancelled{};
  if (st != LODE_OK) {
    ModelResult r;
    r.factors = factors;
    r.reason = lode_error_message();
    // A number of factors the person fixed that the items cannot carry is a bad option, refused
    // before anything is written; a fit the data do not allow is reported inside the report.
    if (o.factors > 0 && (st == LODE_E_TOO_MANY_FACTORS || st == LODE_E_INVALID_ARGUMENT))
      throw std::invalid_argument("option Factors is " + std::to_string(o.factors) + ": " + r.reason);
    return r;
  }
  handle.reset(raw);
  return read_model(raw, factors, setup.rotation_used);
}

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
  lode_bootstrap* raw = nullptr;
  const int st = lode_bootstrap_compute(corr, &setup.fo, &bo, &raw);
  if (st == LODE_E_CANCELLED) throw Cancelled{};
  if (st != LODE_OK) {
    r.reason = lode_error_message();
    return r;
  }
  BootstrapHandle b(raw);
  const char* what = "reading the bootstrap";
  const auto mat = [&](int key) { return vec(b.get(), key, lode_bootstrap_matrix, what); };
  const auto num = [&](int key) { return read_value(b.get(), key, lode_bootstrap_value, what, report_check); };
  const auto text = [&](int key) { return read_text(b.get(), key, lode_bootstrap_text, what, report_check); };
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

// Alpha of one scale (lode_reliability_compute_alpha) on its items' answers, reverse-scored items as (lowest +
// highest observed answer) - answer, as a scale score adds them.
void scale_alpha(ScaleReliability& sr, const Items& items) {
  const std::size_t m = sr.items.size(), p = items.names.size(), n = items.rows;
  std::vector<double> x(n * m, kNaN);
  std::vector<std::string> names;
  for (std::size_t c = 0; c < m; ++c) {
    const std::size_t j = sr.items[c];
    names.push_back(items.names[j]);
    double lo = kNaN, hi = kNaN;
    for (std::size_t r = 0; r < n; ++r) {
      const double v = items.values[r * p + j];
      if (std::isnan(v)) continue;
      lo = std::isnan(lo) ? v : std::min(lo, v);
      hi = std::isnan(hi) ? v : std::max(hi, v);
    }
    for (std::size_t r = 0; r < n; ++r) {
      const double v = items.values[r * p + j];
      x[r * m + c] = sr.reversed[c] && !std::isnan(v) ? (lo + hi) - v : v;
    }
  }
  const DataHandle d = make_data(x, n, names);
  lode_reliability* raw = nullptr;
  if (lode_reliability_compute_alpha(d.get(), &raw) != LODE_OK) {
    sr.alpha_reason = lode_error_message();
    return;
  }
  ReliabilityHandle al(raw);
  const char* what = "reading the reliability";
  const auto num = [&](int key) { return read_value(al.get(), key, lode_reliability_value, what, report_check); };
  const auto mat = [&](int key) { return vec(al.get(), key, lode_reliability_matrix, what); };
  sr.have_alpha = true;
  sr.alpha = num(LODE_RELIABILITY_ALPHA);
  sr.alpha_std = num(LODE_RELIABILITY_ALPHA_STANDARDIZED);
  sr.mean_r = num(LODE_RELIABILITY_ALPHA_MEAN_INTER_ITEM);
  sr.rows_used = num(LODE_RELIABILITY_ALPHA_ROWS_USED);
  sr.rows_total = num(LODE_RELIABILITY_ALPHA_ROWS_TOTAL);
  sr.item_total = mat(LODE_RELIABILITY_ALPHA_ITEM_TOTAL);
  sr.alpha_if_deleted = mat(LODE_RELIABILITY_ALPHA_IF_DELETED);
  sr.alpha_std_if_deleted = mat(LODE_RELIABILITY_ALPHA_STANDARDIZED_IF_DELETED);
  sr.means = mat(LODE_RELIABILITY_ALPHA_ITEM_MEANS);
  sr.sds = mat(LODE_RELIABILITY_ALPHA_ITEM_SDS);
  sr.notes = lines_of(read_text(al.get(), LODE_RELIABILITY_NOTES, lode_reliability_text, what, report_check));
}

// Each item belongs to the scale of the factor of its largest absolute loading (the C ABI's rule). An
// item loading negatively on its factor is reverse-scored, as a scale score adds it: omega through the
// C ABI's keyed omega (LODE_KEYING_REVERSE_NEGATIVE), alpha on the reverse-scored answers.
ReliabilityResult reliability(const ModelResult& model, const lode_model* handle, const Items& items) {
  ReliabilityResult out;
  const std::size_t p = items.names.size(), k = static_cast<std::size_t>(model.factors);
  lode_reliability_options ro;
  lode_reliability_options_init(&ro, sizeof ro);
  ro.keying = LODE_KEYING_REVERSE_NEGATIVE;
  lode_reliability* raw = nullptr;
  if (lode_reliability_compute_keyed_omega(handle, &ro, &raw) != LODE_OK) {
    out.reason = lode_error_message();
    return out;
  }
  ReliabilityHandle om(raw);
  const char* what = "reading the reliability";
  const auto mat = [&](int key) { return vec(om.get(), key, lode_reliability_matrix, what); };
  const std::vector<double> assignment = mat(LODE_RELIABILITY_OMEGA_ASSIGNMENT), reversed = mat(LODE_RELIABILITY_REVERSED);
  const std::vector<double> omega = mat(LODE_RELIABILITY_OMEGA), share = mat(LODE_RELIABILITY_OMEGA_FACTOR_SHARE);
  out.omega_notes = lines_of(read_text(om.get(), LODE_RELIABILITY_NOTES, lode_reliability_text, what, report_check));
  for (std::size_t j = 0; j < p; ++j)
    if (reversed[j] > 0.5) out.reversed_names.push_back(items.names[j]);

  const std::vector<std::size_t> order = loading_order(model.loadings, p, k);
  for (std::size_t f = 0; f < k; ++f) {
    ScaleReliability sr;
    sr.factor = f;
    sr.omega = omega[f];
    sr.omega_share = share[f];
    for (std::size_t j : order)
      if (assignment[j] == static_cast<double>(f)) {
        sr.items.push_back(j);
        sr.reversed.push_back(reversed[j] > 0.5);
      }
    if (sr.items.size() < 2)
      sr.alpha_reason = sr.items.empty() ? "no item loads most on this factor" : "alpha needs at least 2 items; this scale has 1";
    else
      scale_alpha(sr, items);
    out.scales.push_back(std::move(sr));
  }
  out.available = true;
  return out;
}

// Respondents' scores on the model's factors. The missing-answer rule follows the run's missing
// handling: listwise leaves a respondent with any skipped item unscored (as the correlations left
// them out); pairwise and em score from the answered items when at least half were answered.
ScoreResult factor_scores(const lode_model* model, const lode_data* data, const Options& o) {
  ScoreResult r;
  lode_scores_options so;
  lode_scores_options_init(&so, sizeof so);
  so.method = o.scores == "bartlett" ? LODE_ESTIMATOR_BARTLETT : o.scores == "correlation_preserving" ? LODE_ESTIMATOR_CORRELATION_PRESERVING : LODE_ESTIMATOR_REGRESSION;
  if (o.missing == "listwise") {
    so.missing = LODE_GAPS_LEAVE_MISSING;
    r.rule = "a respondent who skipped any item gets no scores (blank cells), as the listwise correlations left "
             "them out";
  } else {
    so.missing = LODE_GAPS_FROM_ANSWERED;
    r.rule = "a respondent who skipped items is scored from the items answered, when at least " +
             fmt_num(100.0 * so.min_answered_share, 0) +
             "% of them were answered (a rule of common practice); otherwise no scores (blank cells)";
  }
  lode_scores* raw = nullptr;
  if (lode_scores_compute(model, data, &so, &raw) != LODE_OK) {
    r.reason = lode_error_message();
    return r;
  }
  ScoresHandle sc(raw);
  const char* what = "reading the scores";
  const auto mat = [&](int key) { return vec(sc.get(), key, lode_scores_matrix, what); };
  const auto num = [&](int key) { return read_value(sc.get(), key, lode_scores_value, what, report_check); };
  const auto text = [&](int key) { return read_text(sc.get(), key, lode_scores_text, what, report_check); };
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

// Where the scores go: beside the data only with a header row and every column there free.
void place_scores(ScoreResult& s, const SourceTable& src, const Options& o, bool header, std::size_t k) {
  if (o.scores_place == "beside") {
    if (!header)
      s.moved = "the range has no row of item names, so score columns beside it would have no headings";
    else if (src.free_columns_right < k)
      s.moved = "the " + std::to_string(k) + " columns right of the data are not all empty, and Lode never "
                "overwrites cells";
    else
      s.beside = true;
  }
  s.sheet = !s.beside;
  if (s.beside)
    s.where = "columns " + column_name(src.first_column + src.cols) + " to " + column_name(src.first_column + src.cols + k - 1) +
              " of " + src.sheet_name + ", beside the data";
  else
    s.where = names::scores;  // exactly the sheet's name, so the writer puts in the name it ends up with
}

// Up to 3 columns of the range that were not analysed (such as a respondent code), for the scores sheet.
void identifying_columns(Analysis& a, const SourceTable& src) {
  std::vector<std::size_t> cols;
  for (std::size_t c = 0; c < a.items.columns.size() && cols.size() < 3; ++c)
    if (std::find(a.items.chosen.begin(), a.items.chosen.end(), c) == a.items.chosen.end()) cols.push_back(c);
  for (std::size_t c : cols) a.id_names.push_back(a.items.columns[c].name);
  const std::size_t first = a.items.header ? 1 : 0;
  for (std::size_t r = 0; r < a.items.rows; ++r) {
    std::vector<SourceCell> row;
    for (std::size_t c : cols) row.push_back(src.at(first + r, c));
    a.id_cells.push_back(std::move(row));
  }
}

}  // namespace

Analysis analyse(const SourceTable& src, const Options& o, const std::string& timestamp, const Progress& progress) {
  validate(o);
  auto step = [&](const std::string& phase, double share) {
    if (progress && !progress(phase, share)) throw Cancelled{};
  };
  step("reading the data", 0.0);
  // Shares of the progress bar: the bootstrap and the replication, when asked for, are most of the work.
  const bool boot = o.bootstrap > 0, halves = o.halves > 0, heavy = boot || halves;
  const double corr_to = heavy ? 0.25 : 0.5, count_to = heavy ? 0.45 : 0.9;
  const double boot_to = halves ? 0.7 : 0.93, halves_from = boot ? 0.7 : 0.5;

  Analysis a;
  a.options = o;
  a.timestamp = timestamp;
  a.address = src.address;
  a.sheet_name = src.sheet_name;
  a.first_row = src.first_row;
  a.first_column = src.first_column;
  a.source_cols = src.cols;
  a.items = read_items(src, o);
  a.values_hash = hash_values(a.items.values, a.items.names);
  const lode_version_info* v = lode_version();
  a.library_version = std::string(v->string) + " (C ABI " + std::to_string(v->abi_major) + "." + std::to_string(v->abi_minor) + ")";

  step("computing correlations", 0.05);
  const DataHandle data = make_data(a.items.values, a.items.rows, a.items.names);
  const CorrelationHandle corr = correlate(data.get(), o, progress, corr_to);
  step("assessing the correlations", corr_to);
  a.corr = correlation_facts(corr.get());
  if (o.missing == "em") {
    const auto em = [&](int key) { return read_value(corr.get(), key, lode_correlation_value, "the em estimate", report_check); };
    a.corr.em_iterations = em(LODE_CORRELATION_EM_ITERATIONS);
    a.corr.em_converged = em(LODE_CORRELATION_EM_CONVERGED);
    a.corr.em_final_change = em(LODE_CORRELATION_EM_FINAL_CHANGE);
    a.corr.em_tolerance = em(LODE_CORRELATION_EM_TOLERANCE);
  }
  a.count = count_factors(corr.get(), o, progress, corr_to, count_to);

  step("fitting the factor model", count_to + 0.02);
  const int k_decided = o.factors > 0 ? o.factors : a.count.available ? a.count.suggested : 0;
  ModelHandle model;
  if (k_decided > 0) a.model = fit_model(corr.get(), o, k_decided, model);
  else a.model.reason = a.count.available ? "no factor stands out from random data" : a.count.reason;

  if (boot) {
    step("bootstrap resamples", 0.5);
    if (a.model.available) a.boot = bootstrap_intervals(corr.get(), o, a.model.factors, progress, 0.5, boot_to);
    else a.boot.reason = a.model.reason;
  }
  if (halves) {
    step("replication in random halves", halves_from);
    if (a.model.available) a.halves = replicate_halves(corr.get(), o, a.model.factors, progress, halves_from, 0.93);
    else a.halves.reason = a.model.reason;
  }
  if (o.holdout > 0.0) {
    step("confirmatory check on held-out respondents", 0.93);
    if (a.model.available) a.holdout = holdout_check(corr.get(), o, a.model.factors);
    else a.holdout.reason = a.model.reason;
  }
  if (a.model.available) a.general = general_factor(model.get(), a.model);
  else a.general.reason = a.model.reason;
  if (!o.group_column.empty()) {
    step("comparing the groups", 0.93);
    a.groups = compare_groups(src, a.items, o, a.model, progress, 0.93, 0.94);
  }
  step("reliability of the scales", 0.94);
  if (a.model.available) a.reliability = reliability(a.model, model.get(), a.items);
  else a.reliability.reason = a.model.reason;
  if (o.scores != "none") {
    step("factor scores", 0.96);
    if (a.model.available) a.scores = factor_scores(model.get(), data.get(), o);
    else a.scores.reason = a.model.reason;
    if (a.scores.available) place_scores(a.scores, src, o, a.items.header, a.k());
    if (a.scores.sheet) identifying_columns(a, src);
  }
  return a;
}

}  // namespace lode::addin::report
