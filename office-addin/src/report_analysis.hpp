// The analysis behind the report, as one plain value: every C ABI call of a report run happens in
// analyse() (report_analysis.cpp); the sheet layouts (layout_*.cpp) read only this value. UNO-free.
#pragma once

#include "report_model.hpp"

#include <cstdint>
#include <limits>
#include <string>
#include <vector>

namespace lode::addin::report {

inline constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// A result the C ABI may decline to give: the value, or its reason.
struct Maybe {
  double value = kNaN;
  std::string reason;  // empty when the value is there
};

// The items as read from the source range.
struct Items {
  bool header = false;                // the first row holds item names
  std::vector<Column> columns;        // every column of the range
  std::vector<std::size_t> chosen;    // the analysed columns (indices into columns)
  std::vector<std::string> names;     // of the analysed items
  std::size_t rows = 0;               // respondents (rows below the header)
  std::vector<double> values;         // rows x items, row-major, NaN = no number
  std::size_t text_as_missing = 0;    // text cells among the answers
};

struct CorrelationFacts {
  std::vector<double> matrix, eigenvalues, smc;  // items x items; items; items (empty: smc_problem says why)
  std::string smc_problem;
  double rows_total = kNaN, rows_used = kNaN, rows_complete = kNaN, n_obs = kNaN, missing_share = kNaN;
  bool positive_definite = false;
  // The em rule only: its iterations, whether it met its criterion, the last change and the criterion
  double em_iterations = kNaN, em_converged = kNaN, em_final_change = kNaN, em_tolerance = kNaN;
  std::vector<std::string> notes;
  // Factorability (KMO, MSA, Bartlett)
  Maybe kmo, bartlett_chi2, bartlett_df, bartlett_p;
  std::string kmo_label, msa_reason;
  std::vector<double> msa;  // empty: msa_reason says why
  std::vector<std::string> factorability_notes;
};

// How many factors (lode_factor_count_compute); when it fails, `reason` says why.
struct CountResult {
  bool available = false;
  std::string reason;
  std::vector<double> random_pc;  // percentile of random-data component eigenvalues
  // The eigenvalues the decision uses: of the reduced matrix (squared multiple correlations on the
  // diagonal), observed and the random-data percentile.
  std::vector<double> observed_factor, random_factor;
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

// The fitted model (lode_model_compute); when it fails, `reason` holds the C ABI's message.
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
};

// Bootstrap intervals (lode_bootstrap_compute); when they fail, `reason` says why.
struct BootResult {
  bool available = false;
  std::string reason;
  double replicates = 0, used = 0, failed = 0, poorly_matched = 0, level = 0.95;
  std::vector<double> estimate, lower, upper;  // items x factors (pattern loadings)
  std::vector<double> phi_lower, phi_upper;    // factors x factors
  std::string alignment;
  std::vector<std::string> failures, notes;
};

struct ScaleReliability {
  std::size_t factor = 0;
  std::vector<std::size_t> items;  // indices into the analysed items, in loading order
  std::vector<bool> reversed;      // per scale item: reverse-scored for these figures
  double omega = kNaN;             // omega total of the scale (McDonald 1999)
  double omega_share = kNaN;       // the factor's share of the scale's variance
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
  // Where they go: beside the data (when every column there is free and the range has a header row)
  // or on a sheet of their own.
  bool beside = false, sheet = false;
  std::string where, moved;  // where in words; why not beside the data (empty when beside or not asked)
};

// Split-half replication (lode_replication_compute); when it fails, `reason` says why.
struct ReplicationResult {
  bool available = false;
  std::string reason;
  double splits = 0, used = 0, failed = 0, share_same_count = kNaN, suggested_full = kNaN;
  std::vector<double> median, p5, fair, equal;  // per factor: congruence between halves, shares >= 0.85 and 0.95
  std::vector<double> stability;                // per item: share of splits on the same factor in both halves
  std::vector<std::string> failures, notes;
};

// The confirmatory check on held-out respondents (lode_holdout_compute and its restricted fit).
struct HoldoutResult {
  bool available = false;
  std::string reason;
  double n_explore = 0, n_holdout = 0, share = 0, salient = 0;
  std::vector<double> pattern;                 // items x factors, 0/1: the simple structure taken from the rest
  std::vector<std::size_t> fitted, left_out;   // indices into the analysed items
  // The restricted fit on the held-out respondents, over the fitted items
  std::vector<double> loadings, se, phi, uniquenesses;  // fitted x factors; fitted x factors; k x k; fitted
  bool converged = false;
  double iterations = 0, heywood = 0;
  double chi2 = kNaN, df = kNaN, p = kNaN, cfi = kNaN, tli = kNaN, rmsea = kNaN, rmsea_lo = kNaN, rmsea_hi = kNaN,
         srmr = kNaN, bic = kNaN;
  std::vector<std::string> notes;
};

// A general factor under the group factors (lode_schmid_leiman_compute): run when the solution is
// oblique with at least 3 factors; otherwise `reason` says why not.
struct GeneralResult {
  bool available = false;
  std::string reason;
  std::vector<double> general, group;  // items; items x factors
  std::vector<double> second_order;    // factors: each factor's loading on the general factor
  std::vector<double> omega_subscales, subscale_omega_total;  // factors (NaN: no items)
  std::vector<double> assignment;      // items: each item's subscale (0-based, -1 none)
  double omega_total = kNaN, omega_hierarchical = kNaN, ecv = kNaN;
  std::vector<std::string> notes;
};

// The comparison across groups of respondents (lode_group_comparison_compute), asked for by
// options.group_column; when it cannot be made, `reason` says why.
struct GroupsResult {
  bool asked = false, available = false;
  std::string reason, column;
  std::int64_t needed = 0;             // the smallest group analysed: max(min_group, items + 1)
  double threshold = 0.2;              // a loading differing by more than this is listed
  bool oblique = false;                // oblique Procrustes
  std::vector<std::string> labels;     // analysed groups, in order
  std::vector<double> rows;            // respondents per analysed group
  std::vector<double> congruence, alpha, omega;  // groups x factors
  struct Skipped {
    std::string label;
    double rows = 0;
  };
  std::vector<Skipped> skipped;
  struct Shift {
    std::string group;
    std::size_t item = 0, factor = 0;
    double group_loading = kNaN, pooled_loading = kNaN;
  };
  std::vector<Shift> shifts;
};

// Everything one report run computed, with the options and source it came from.
struct Analysis {
  Options options;
  std::string timestamp;
  // The source range (as SourceTable, without its cells)
  std::string address, sheet_name;
  std::size_t first_row = 0, first_column = 0, source_cols = 0;
  Items items;
  std::vector<std::vector<SourceCell>> id_cells;  // per row: up to 3 columns not analysed (respondent codes)
  std::vector<std::string> id_names;              // their names
  std::uint64_t values_hash = 0;
  std::string library_version;  // lode_version(): "x.y.z (C ABI a.b)"
  CorrelationFacts corr;
  CountResult count;
  ModelResult model;  // model.available: the fit succeeded
  BootResult boot;    // asked for when options.bootstrap > 0
  ReliabilityResult reliability;
  ScoreResult scores;  // asked for when options.scores != "none"
  ReplicationResult halves;  // asked for when options.halves > 0
  HoldoutResult holdout;     // asked for when options.holdout > 0
  GeneralResult general;
  GroupsResult groups;

  std::size_t p() const { return items.names.size(); }
  std::size_t k() const { return model.available ? static_cast<std::size_t>(model.factors) : 0; }
  bool bootstrap_asked() const { return options.bootstrap > 0; }
  bool halves_asked() const { return options.halves > 0; }
  bool holdout_asked() const { return options.holdout > 0.0; }
};

// Reads the items, runs the analysis through the C ABI. Throws std::invalid_argument (bad options or
// data, with the reason), Cancelled, or std::runtime_error.
Analysis analyse(const SourceTable& source, const Options& options, const std::string& timestamp,
                 const Progress& progress);

}  // namespace lode::addin::report
