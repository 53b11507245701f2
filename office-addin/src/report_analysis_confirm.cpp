// The report's confirmatory parts: split-half replication and the check on held-out respondents. Every
// C ABI call of them happens here (lode.h through capi.hpp), leaving plain results in the Analysis.
#include "report_analysis.hpp"

#include "report_calls.hpp"
#include "report_text.hpp"

#include <stdexcept>

namespace lode::addin::report {
namespace {

using ReplicationHandle = Handle<lode_replication, lode_replication_free>;
using HoldoutHandle = Handle<lode_holdout, lode_holdout_free>;
using RestrictedHandle = Handle<lode_restricted_fit, lode_restricted_fit_free>;

std::vector<std::size_t> indices(const std::vector<double>& v) {
  std::vector<std::size_t> out;
  for (double d : v) out.push_back(static_cast<std::size_t>(d));
  return out;
}

void read_restricted(HoldoutResult& r, const lode_restricted_fit* f) {
  const char* what = "reading the confirmatory fit";
  const auto mat = [&](int key) { return vec(f, key, lode_restricted_fit_matrix, what); };
  const auto num = [&](int key) { return read_value(f, key, lode_restricted_fit_value, what, report_check); };
  r.loadings = mat(LODE_RESTRICTED_FIT_LOADINGS);
  r.se = mat(LODE_RESTRICTED_FIT_LOADINGS_SE);
  r.phi = mat(LODE_RESTRICTED_FIT_FACTOR_CORRELATIONS);
  r.uniquenesses = mat(LODE_RESTRICTED_FIT_UNIQUENESSES);
  r.converged = num(LODE_RESTRICTED_FIT_CONVERGED) == 1.0;
  r.iterations = num(LODE_RESTRICTED_FIT_ITERATIONS);
  r.heywood = num(LODE_RESTRICTED_FIT_HEYWOOD_COUNT);
  r.chi2 = num(LODE_RESTRICTED_FIT_CHI_SQUARE);
  r.df = num(LODE_RESTRICTED_FIT_DF);
  r.p = num(LODE_RESTRICTED_FIT_P_VALUE);
  r.cfi = num(LODE_RESTRICTED_FIT_CFI);
  r.tli = num(LODE_RESTRICTED_FIT_TLI);
  r.rmsea = num(LODE_RESTRICTED_FIT_RMSEA);
  r.rmsea_lo = num(LODE_RESTRICTED_FIT_RMSEA_LOWER);
  r.rmsea_hi = num(LODE_RESTRICTED_FIT_RMSEA_UPPER);
  r.srmr = num(LODE_RESTRICTED_FIT_SRMR);
  r.bic = num(LODE_RESTRICTED_FIT_BIC);
  for (std::string& line : lines_of(read_text(f, LODE_RESTRICTED_FIT_NOTES, lode_restricted_fit_text, what, report_check)))
    r.notes.push_back(std::move(line));
}

}  // namespace

ReplicationResult replicate_halves(const lode_correlation* corr, const Options& o, int factors,
                                   const Progress& progress, double from, double to) {
  ReplicationResult r;
  FitSetup setup(o, factors);
  lode_replication_options ro;
  lode_replication_options_init(&ro, sizeof ro);
  ro.splits = o.halves;
  ro.seed = o.seed;
  ro.threads = 1;  // the office's other work keeps a core
  ProgressBridge bridge{&progress, "replication in random halves", from, to};
  ro.progress = &ProgressBridge::call;
  ro.progress_user = &bridge;
  lode_replication* raw = nullptr;
  const int st = lode_replication_compute(corr, &setup.fo, &ro, &raw);
  if (st == LODE_E_CANCELLED) throw Cancelled{};
  if (st != LODE_OK) {
    r.reason = lode_error_message();
    return r;
  }
  ReplicationHandle h(raw);
  const char* what = "reading the replication";
  const auto mat = [&](int key) { return vec(h.get(), key, lode_replication_matrix, what); };
  const auto num = [&](int key) { return read_value(h.get(), key, lode_replication_value, what, report_check); };
  const auto text = [&](int key) { return read_text(h.get(), key, lode_replication_text, what, report_check); };
  r.median = mat(LODE_REPLICATION_CONGRUENCE_MEDIAN);
  r.p5 = mat(LODE_REPLICATION_CONGRUENCE_P5);
  r.fair = mat(LODE_REPLICATION_SHARE_FAIR);
  r.equal = mat(LODE_REPLICATION_SHARE_EQUAL);
  r.stability = mat(LODE_REPLICATION_ITEM_STABILITY);
  r.splits = num(LODE_REPLICATION_SPLITS);
  r.used = num(LODE_REPLICATION_USED);
  r.failed = num(LODE_REPLICATION_FAILED);
  r.share_same_count = num(LODE_REPLICATION_SHARE_SAME_COUNT);
  r.suggested_full = num(LODE_REPLICATION_SUGGESTED_FULL);
  r.failures = lines_of(text(LODE_REPLICATION_FAILURES));
  r.notes = lines_of(text(LODE_REPLICATION_NOTES));
  r.available = true;
  return r;
}

HoldoutResult holdout_check(const lode_correlation* corr, const Options& o, int factors) {
  HoldoutResult r;
  FitSetup setup(o, factors);
  lode_holdout_options ho;
  lode_holdout_options_init(&ho, sizeof ho);
  ho.share = o.holdout;
  ho.seed = o.seed;
  ho.salient = o.salient;
  lode_holdout* raw = nullptr;
  const int st = lode_holdout_compute(corr, &setup.fo, &ho, &raw);
  if (st == LODE_E_CANCELLED) throw Cancelled{};
  if (st == LODE_E_INSUFFICIENT_DATA)  // the share the person chose cannot be split: refused before anything is written
    throw std::invalid_argument("option Holdout is " + fmt_num(o.holdout, 2) + ": " + lode_error_message());
  if (st != LODE_OK) {
    r.reason = lode_error_message();
    return r;
  }
  HoldoutHandle h(raw);
  const char* what = "reading the hold-out check";
  const auto mat = [&](int key) { return vec(h.get(), key, lode_holdout_matrix, what); };
  const auto num = [&](int key) { return read_value(h.get(), key, lode_holdout_value, what, report_check); };
  r.pattern = mat(LODE_HOLDOUT_PATTERN);
  r.fitted = indices(mat(LODE_HOLDOUT_ITEMS_FITTED));
  r.left_out = indices(mat(LODE_HOLDOUT_ITEMS_LEFT_OUT));
  r.n_explore = num(LODE_HOLDOUT_N_EXPLORE);
  r.n_holdout = num(LODE_HOLDOUT_N_HOLDOUT);
  r.share = num(LODE_HOLDOUT_SHARE);
  r.salient = num(LODE_HOLDOUT_SALIENT);
  r.notes = lines_of(read_text(h.get(), LODE_HOLDOUT_NOTES, lode_holdout_text, what, report_check));
  lode_restricted_fit* fit = nullptr;
  const int fst = lode_restricted_fit_from_holdout(h.get(), &fit);
  if (fst != LODE_OK) {  // e.g. the simple structure leaves a factor with fewer than two items
    r.reason = lode_error_message();
    return r;
  }
  RestrictedHandle f(fit);
  read_restricted(r, f.get());
  r.available = true;
  return r;
}

}  // namespace lode::addin::report
