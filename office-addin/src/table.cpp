// The declarative table of Lode's cell functions (see table.hpp). One row per function.
#include "table.hpp"

#include "functions.hpp"

#include <algorithm>
#include <cctype>

namespace lode::addin {
namespace {

// Argument help shared by several rows.
constexpr std::string_view kFactorsHelp =
    "Number of factors; left out or 0: the count parallel analysis suggests (factor eigenvalues against the 95th "
    "percentile of 500 random data sets, as LODE.FACTORCOUNT)";
constexpr std::string_view kMethodHelp =
    "Extraction: \"ml\" maximum likelihood (default), \"paf\" principal axis, \"minres\" minimum residual";
constexpr std::string_view kRotationHelp =
    "\"oblimin\" (default), \"none\", \"varimax\", \"quartimax\", \"equamax\", \"promax\", \"quartimin\" or "
    "\"geomin\"";
constexpr std::string_view kNobsHelp =
    "Number of respondents behind a correlation matrix given as data (needed for tests and fit indices); "
    "ignored for raw data";
constexpr std::string_view kSeedHelp =
    "Seed of the random data (a whole number); left out: Lode's fixed default, so results repeat";
constexpr std::string_view kFitErrors =
    "#NUM!: matrix not positive definite; Err:523: no convergence";
constexpr std::string_view kPatternHelp =
    "Which item loads on which factor, one row per item in the data's order: 0/1 with one column per factor (1: "
    "the item loads on it; empty counts as 0), or one column of factor numbers 1, 2, ...; every item on a factor, "
    "every factor with at least two items";
constexpr std::string_view kDataHelp =
    "Respondents in rows, items in columns (empty and text cells are missing; a first row of names is "
    "used as item names), or a square correlation matrix with ones on the diagonal";

constexpr std::string_view kObliqueHelp =
    "An oblique rotation: \"oblimin\" (default), \"promax\", \"quartimin\" or \"geomin\"; the orthogonal ones are "
    "refused (their factors do not correlate, so no general factor lies under them)";
constexpr std::string_view kGeneralErrors =
    "Err:502: fewer than 3 factors or an orthogonal rotation; #NUM!: matrix not positive definite; Err:523: no "
    "convergence";
constexpr std::string_view kAnswersHelp =
    "Respondents in rows, items in columns: the answers themselves, not a correlation matrix (empty and text cells "
    "are missing; a first row of names is used as item names)";
constexpr std::string_view kGroupsHelp =
    "One column of group labels (text or numbers), one per respondent in the same rows as `data` (a heading above "
    "them when `data` has a row of names)";
constexpr std::string_view kMinGroupHelp =
    "Smallest group analysed (default 100, common practice for stable loadings; never fewer than items + 1); smaller "
    "groups are listed by LODE.GROUPSKIPPED";
constexpr std::string_view kGroupErrors =
    "Err:502: `groups` not one column, of another length than `data`, or with an empty cell; every group too small; "
    "Err:523: no convergence";

// The arguments of LODE.GENERAL and LODE.GENERALOMEGA (those of LODE.LOADINGS, an oblique rotation) and of
// the group comparison's cells (which share one comparison).
const std::vector<ArgSpec> kGeneralArgs = {{"data", ArgKind::range, kDataHelp},
                                           {"factors", ArgKind::value, kFactorsHelp},
                                           {"method", ArgKind::value, kMethodHelp},
                                           {"rotation", ArgKind::value, kObliqueHelp},
                                           {"n_obs", ArgKind::value, kNobsHelp}};
const std::vector<ArgSpec> kGroupArgs = {{"data", ArgKind::range, kAnswersHelp},
                                         {"groups", ArgKind::range, kGroupsHelp},
                                         {"factors", ArgKind::value, kFactorsHelp},
                                         {"method", ArgKind::value, kMethodHelp},
                                         {"rotation", ArgKind::value, kRotationHelp},
                                         {"min_group", ArgKind::value, kMinGroupHelp}};
std::vector<ArgSpec> with_arg(std::vector<ArgSpec> args, ArgSpec extra) {
  args.push_back(extra);
  return args;
}
// The arguments of LODE.FACTORCOUNT (and of its former name, LODE.NFACTORS).
const std::vector<ArgSpec> kCountArgs = {
    {"data", ArgKind::range, kDataHelp},
    {"rule", ArgKind::value,
     "\"parallel\" (default: parallel analysis of the reduced-matrix factor eigenvalues against the 95th percentile "
     "of 500 random data sets, the count every Lode function uses when factors is left out), \"map\" (Velicer's "
     "minimum average partial), \"kaiser\" (eigenvalues above one), \"ekc\" (empirical Kaiser criterion)"},
    {"seed", ArgKind::value, kSeedHelp}};
constexpr std::string_view kCountErrors = "#NUM!: matrix not positive definite (map)";

const std::vector<FunctionSpec> kTable = {
    {"version", "LODE.VERSION", "The version of Lode and of its C library, as text.", {},
     "text, e.g. `Lode 0.1.0 (C ABI 2.0)`", "none", fn_version},
    {"corr",
     "LODE.CORR",
     "The correlation matrix of the items (items x items; an array formula).",
     {{"data", ArgKind::range, kDataHelp},
      {"kind", ArgKind::value,
       "\"pearson\" (default), \"spearman\" or \"polychoric\" (ordinal items with at most 10 categories; "
       "tetrachoric for two)"},
      {"missing", ArgKind::value, "\"pairwise\" (default: each correlation uses the rows answering both items), "
                                  "\"listwise\" (only rows answering every item) or \"em\" (maximum likelihood "
                                  "under missing at random, Pearson only)"}},
     "items x items", "none beyond Err:502", fn_corr},
    {"eigen",
     "LODE.EIGEN",
     "The eigenvalues of the correlation matrix, largest first (one column).",
     {{"data", ArgKind::range, kDataHelp},
      {"reduced", ArgKind::value,
       "TRUE: eigenvalues of the reduced matrix (squared multiple correlations on the diagonal); FALSE or "
       "left out: of the full correlation matrix"}},
     "items x 1", "#NUM!: `reduced` on a matrix that is not positive definite", fn_eigen},
    {"kmo",
     "LODE.KMO",
     "The overall Kaiser-Meyer-Olkin measure of sampling adequacy (0 to 1; higher: more worth factoring).",
     {{"data", ArgKind::range, kDataHelp}},
     "one number", "#NUM!: matrix not positive definite", fn_kmo},
    {"msa",
     "LODE.MSA",
     "The measure of sampling adequacy of each item (Kaiser-Meyer-Olkin per item; one column).",
     {{"data", ArgKind::range, kDataHelp}},
     "items x 1", "#NUM!: matrix not positive definite", fn_msa},
    {"sphericity",
     "LODE.SPHERICITY",
     "Bartlett's test that the items are uncorrelated: one row of chi-square, degrees of freedom, p-value.",
     {{"data", ArgKind::range, kDataHelp}, {"n_obs", ArgKind::value, kNobsHelp}},
     "1 x 3: chi-square, df, p", "#NUM!: matrix not positive definite; Err:502: a correlation matrix without `n_obs`",
     fn_sphericity},
    {"parallel",
     "LODE.PARALLEL",
     "Parallel analysis: per position, the observed eigenvalue of the correlation matrix, the mean and a percentile "
     "of eigenvalues of random data of the same size (component eigenvalues; the suggested count, LODE.FACTORCOUNT, "
     "compares the reduced-matrix factor eigenvalues instead, shown by LODE.EIGEN with `reduced` TRUE).",
     {{"data", ArgKind::range, kDataHelp},
      {"replicates", ArgKind::value, "Number of random data sets, 10 to 10000 (default 500)"},
      {"percentile", ArgKind::value, "Percentile of the random eigenvalues, between 0 and 100 (default 95)"},
      {"seed", ArgKind::value, kSeedHelp}},
     "items x 3: observed, random mean, random percentile", "Err:502: a correlation matrix without `n_obs` cannot be "
     "simulated", fn_parallel},
    {"factorcount",
     "LODE.FACTORCOUNT",
     "The suggested number of factors by one rule.",
     kCountArgs,
     "one number", kCountErrors, fn_factorcount},
    // The former name of LODE.FACTORCOUNT: saved workbooks store the method name "nfactors" and
    // people may type the old display name, so the row stays, computing the same (README, "Former names").
    {"nfactors",
     "LODE.NFACTORS",
     "Former name of LODE.FACTORCOUNT, kept so saved workbooks still compute: the suggested number of factors by "
     "one rule.",
     kCountArgs,
     "one number (former name of `LODE.FACTORCOUNT`)", kCountErrors, fn_factorcount},
    {"loadings",
     "LODE.LOADINGS",
     "The factor loadings (pattern matrix), items x factors.",
     {{"data", ArgKind::range, kDataHelp},
      {"factors", ArgKind::value, kFactorsHelp},
      {"method", ArgKind::value, kMethodHelp},
      {"rotation", ArgKind::value, kRotationHelp},
      {"n_obs", ArgKind::value, kNobsHelp}},
     "items x factors", kFitErrors, fn_loadings},
    {"structure",
     "LODE.STRUCTURE",
     "The structure matrix (correlations of items with factors), items x factors; equals the loadings when the "
     "rotation is orthogonal.",
     {{"data", ArgKind::range, kDataHelp},
      {"factors", ArgKind::value, kFactorsHelp},
      {"method", ArgKind::value, kMethodHelp},
      {"rotation", ArgKind::value, kRotationHelp},
      {"n_obs", ArgKind::value, kNobsHelp}},
     "items x factors", kFitErrors, fn_structure},
    {"uniqueness",
     "LODE.UNIQUENESS",
     "The uniqueness of each item: the share of its variance the factors leave unexplained (one column).",
     {{"data", ArgKind::range, kDataHelp},
      {"factors", ArgKind::value, kFactorsHelp},
      {"method", ArgKind::value, kMethodHelp},
      {"rotation", ArgKind::value, kRotationHelp},
      {"n_obs", ArgKind::value, kNobsHelp}},
     "items x 1", kFitErrors, fn_uniqueness},
    {"communality",
     "LODE.COMMUNALITY",
     "The communality of each item: the share of its variance the factors explain (one column).",
     {{"data", ArgKind::range, kDataHelp},
      {"factors", ArgKind::value, kFactorsHelp},
      {"method", ArgKind::value, kMethodHelp},
      {"rotation", ArgKind::value, kRotationHelp},
      {"n_obs", ArgKind::value, kNobsHelp}},
     "items x 1", kFitErrors, fn_communality},
    {"factorcorr",
     "LODE.FACTORCORR",
     "The correlations between the factors, factors x factors (the identity for orthogonal rotations).",
     {{"data", ArgKind::range, kDataHelp},
      {"factors", ArgKind::value, kFactorsHelp},
      {"method", ArgKind::value, kMethodHelp},
      {"rotation", ArgKind::value, kRotationHelp},
      {"n_obs", ArgKind::value, kNobsHelp}},
     "factors x factors", kFitErrors, fn_factorcorr},
    {"residuals",
     "LODE.RESIDUALS",
     "The residual correlations: observed minus reproduced by the factors, items x items.",
     {{"data", ArgKind::range, kDataHelp},
      {"factors", ArgKind::value, kFactorsHelp},
      {"method", ArgKind::value, kMethodHelp},
      {"rotation", ArgKind::value, kRotationHelp},
      {"n_obs", ArgKind::value, kNobsHelp}},
     "items x items", kFitErrors, fn_residuals},
    {"fit",
     "LODE.FIT",
     "How well the factors fit: two columns, a label and a value per row (chi-square, df, p, RMSEA and its "
     "interval, TLI, BIC, RMSR, convergence, Heywood cases). With \"paf\" or \"minres\" the chi-square, p, "
     "RMSEA, TLI and BIC are the maximum likelihood discrepancy evaluated at that solution, not a likelihood-ratio "
     "test: read them as descriptive.",
     {{"data", ArgKind::range, kDataHelp},
      {"factors", ArgKind::value, kFactorsHelp},
      {"method", ArgKind::value, kMethodHelp},
      {"rotation", ArgKind::value, kRotationHelp},
      {"n_obs", ArgKind::value, kNobsHelp}},
     "rows x 2: label, value", "none: a failure shows as the row `error` with the reason as text", fn_fit},
    {"rotate",
     "LODE.ROTATE",
     "Rotates a loading matrix you already have; returns the rotated loadings (pattern), items x factors.",
     {{"loadings", ArgKind::range, "Loadings: items in rows, factors in columns, every cell a number"},
      {"rotation", ArgKind::value, kRotationHelp},
      {"parameter", ArgKind::value,
       "The rotation's parameter: oblimin gamma (default 0, Jennrich 1979), promax power (default 4, Hendrickson "
       "and White 1964), geomin epsilon (default 0.01, Browne 2001); ignored by the others"}},
     "items x factors", "Err:523: no convergence", fn_rotate},
    {"scores",
     "LODE.SCORES",
     "Factor scores of each respondent, rows x factors, from the factor model of LODE.LOADINGS with the same "
     "arguments. Factor scores are estimates, not measurements: each respondent's score carries error, and "
     "different scoring methods give different scores. An instrument needs validation for the purpose before its "
     "scores are used to select, rate or diagnose individuals; local law and professional testing standards govern "
     "such use.",
     {{"data", ArgKind::range,
       "Respondents in rows, items in columns: the answers themselves, not a correlation matrix (empty and text "
       "cells are missing; a first row of names is used as item names and gets no row of scores)"},
      {"factors", ArgKind::value, kFactorsHelp},
      {"method", ArgKind::value, kMethodHelp},
      {"rotation", ArgKind::value, kRotationHelp},
      {"score_method", ArgKind::value,
       "\"regression\" (default, Thurstone 1935), \"bartlett\" (Bartlett 1937) or \"correlation_preserving\" "
       "(ten Berge et al. 1999; the former word \"tenberge\" is still read). A respondent who skipped items is scored "
       "from the items answered when at least half were answered (a rule of common practice); otherwise the row "
       "shows #NUM!"}},
     "rows x factors, one row per respondent", "#NUM! in a row: fewer than half of its items answered, not scored; "
     "Err:502: a correlation matrix as `data`; Err:523: no convergence", fn_scores},
    {"alpha",
     "LODE.ALPHA",
     "Cronbach's alpha of one scale: one row of raw alpha, standardised alpha (from the correlations), the mean "
     "inter-item correlation and the number of respondents used (those who answered every item).",
     {{"items", ArgKind::range,
       "The scale's items: respondents in rows, one column per item, already reverse-scored where needed (empty "
       "and text cells are missing; a respondent with a missing item is left out)"}},
     "1 x 4: alpha, standardised alpha, mean inter-item correlation, respondents used", "none beyond Err:502",
     fn_alpha},
    {"omega",
     "LODE.OMEGA",
     "McDonald's omega of one scale, from a one-factor maximum likelihood fit of its items: (sum of loadings)^2 / "
     "((sum of loadings)^2 + sum of uniquenesses).",
     {{"items", ArgKind::range,
       "The scale's items: respondents in rows, one column per item, already reverse-scored where needed (empty "
       "and text cells are missing; correlations use each pair's answers), or their square correlation matrix"}},
     "one number", "#NUM!: matrix not positive definite; Err:523: the one-factor fit did not converge", fn_omega},
    {"congruence",
     "LODE.CONGRUENCE",
     "Tucker's congruence of two loading matrices for the same items: each factor of the first is matched to one "
     "factor of the second (largest total congruence, reflecting where needed); one row per factor of the first: "
     "congruence, matched column of the second, sign.",
     {{"loadings_a", ArgKind::range, "Loadings: items in rows, factors in columns, every cell a number"},
      {"loadings_b", ArgKind::range,
       "Loadings of the same items in the same order, with as many factors, e.g. from another sample or method"}},
     "factors x 3: congruence (0 to 1), matched column of `loadings_b`, sign (1 or -1)",
     "Err:502: shapes differ, a factor with only zero loadings", fn_congruence},
    // The confirmatory cells: the restricted fit and split-half replication (functions_confirm.cpp)
    {"patternloadings",
     "LODE.PATTERNLOADINGS",
     "Fits a factor model in which each item loads only where a pattern you give allows (maximum likelihood; "
     "factor variances 1, factor correlations and uniquenesses free) and returns its loadings, items x factors (0 "
     "where the pattern fixes them), or, by `part`, their standard errors, the uniquenesses or the factor "
     "correlations.",
     {{"data", ArgKind::range, kDataHelp},
      {"pattern", ArgKind::range, kPatternHelp},
      {"n_obs", ArgKind::value, kNobsHelp},
      {"part", ArgKind::value,
       "\"loadings\" (default), \"se\" (standard errors of the loadings from the observed information; empty where "
       "the pattern fixes a loading), \"uniqueness\" (one column) or \"factorcorr\" (factors x factors)"}},
     "items x factors (`part`: loadings, se); items x 1 (uniqueness); factors x factors (factorcorr)",
     "Err:502: a pattern with an item on no factor, a factor with fewer than two items, or not one row per item; "
     "Err:523: no convergence",
     fn_patternloadings},
    {"patternfit",
     "LODE.PATTERNFIT",
     "How well the model of LODE.PATTERNLOADINGS fits: two columns, a label and a value per row (chi-square = (N - 1) "
     "times the minimised discrepancy, df, p, CFI, TLI, RMSEA and its 90% interval, SRMR, BIC, convergence, Heywood "
     "cases).",
     {{"data", ArgKind::range, kDataHelp},
      {"pattern", ArgKind::range, kPatternHelp},
      {"n_obs", ArgKind::value, kNobsHelp}},
     "rows x 2: label, value", "none: a failure shows as the row `error` with the reason as text", fn_patternfit},
    {"halves",
     "LODE.HALVES",
     "Does the factor solution replicate? Splits the respondents into random halves again and again, repeats the "
     "analysis of LODE.LOADINGS in each half and compares the halves' matched factors (Tucker's congruence); one row "
     "per factor: median congruence, its 5th percentile, share of splits at least 0.85, share at least 0.95.",
     {{"data", ArgKind::range,
       "Respondents in rows, items in columns: the answers themselves, not a correlation matrix (empty and text "
       "cells are missing; a first row of names is used as item names)"},
      {"factors", ArgKind::value, kFactorsHelp},
      {"method", ArgKind::value, kMethodHelp},
      {"rotation", ArgKind::value, kRotationHelp},
      {"splits", ArgKind::value, "Number of random splits into halves, 2 to 10000 (default 100)"},
      {"seed", ArgKind::value, kSeedHelp},
      {"part", ArgKind::value,
       "\"factors\" (default: the table per factor), \"items\" (one column: per item, the share of splits in which "
       "it lands on the same factor in both halves) or \"count\" (one row: the share of splits whose halves suggest "
       "the same number of factors by the empirical Kaiser criterion, and the splits used)"}},
     "factors x 4 (`part` factors); items x 1 (items); 1 x 2 (count)",
     "Err:502: a correlation matrix as `data`; #NUM!: a figure no split could give", fn_halves},
    // --- A general factor and groups (functions_structure.cpp) ---
    {"general",
     "LODE.GENERAL",
     "A general factor under the group factors of an oblique solution with at least 3 factors (Schmid & Leiman "
     "1957, from a one-factor fit of the factor correlations): per item its loading on the general factor, then on "
     "each group factor. Same arguments and fit as LODE.LOADINGS.",
     kGeneralArgs,
     "items x (1 + factors): general loading, group loadings", kGeneralErrors, fn_general},
    {"generalomega",
     "LODE.GENERALOMEGA",
     "How much a total score measures one thing: omega total, omega hierarchical (the general factor's share of the "
     "total score's variance) and the general factor's share of the common variance (ECV), then per factor its "
     "subscale's omega total and omega subscale (McDonald 1999; Zinbarg et al. 2005). A high omega hierarchical says "
     "a total score mostly measures one thing; a low one says the subscales carry their own information.",
     kGeneralArgs,
     "rows x 2: label, value (3 + 2 x factors rows)", kGeneralErrors, fn_generalomega},
    {"groupmatch",
     "LODE.GROUPMATCH",
     "Does the structure hold in every group? The analysis of all respondents, then of each group large enough, "
     "turned towards the pooled factors (Procrustes); one row per group: label, respondents, Tucker's congruence "
     "with each pooled factor (0.95 and above: the same factor; 0.85 to 0.94: fair similarity; below: it differs; "
     "Lorenzo-Seva & ten Berge 2006). A descriptive check, not a formal test of measurement invariance.",
     kGroupArgs,
     "groups x (2 + factors): label, respondents, congruence per factor", kGroupErrors, fn_groupmatch},
    {"groupskipped",
     "LODE.GROUPSKIPPED",
     "The groups LODE.GROUPMATCH with the same arguments left out as too small: one row per group, its label and "
     "its respondents.",
     kGroupArgs,
     "skipped x 2: label, respondents; one text cell when none", kGroupErrors, fn_groupskipped},
    {"groupshifts",
     "LODE.GROUPSHIFTS",
     "The loadings of LODE.GROUPMATCH's groups that differ from the pooled loading by more than a threshold: one "
     "row per such loading with the group, the item, the factor, the group's loading and the pooled loading.",
     with_arg(kGroupArgs, {"threshold", ArgKind::value,
                           "A loading is listed when it differs from the pooled one by more than this (default 0.2, "
                           "common practice)"}),
     "flagged x 5: group, item, factor, group loading, pooled loading; one text cell when none", kGroupErrors,
     fn_groupshifts},
    // --- end of the general factor and groups ---
    {"reason",
     "LODE.REASON",
     "Why a Lode formula fails: give the function's name and then the same arguments as the failing formula; "
     "returns its message as text (or says it computes).",
     {{"function", ArgKind::value, "The name of the Lode function, as text: \"LODE.LOADINGS\" or \"LOADINGS\""},
      {"argument1", ArgKind::value, "The failing formula's first argument (e.g. its data range)"},
      {"argument2", ArgKind::value, "Its second argument, if it has one"},
      {"argument3", ArgKind::value, "Its third argument, if it has one"},
      {"argument4", ArgKind::value, "Its fourth argument, if it has one"},
      {"argument5", ArgKind::value, "Its fifth argument, if it has one"},
      {"argument6", ArgKind::value, "Its sixth argument, if it has one"},
      {"argument7", ArgKind::value, "Its seventh argument, if it has one"}},
     "text: the cell's error and the reason, e.g. `Err:502: 'method' must be one of \"ml\", \"paf\", \"minres\"`",
     "none: every failure, its own included, is the text it returns", fn_reason},
};

bool iequal(std::string_view a, std::string_view b) {
  return a.size() == b.size() && std::equal(a.begin(), a.end(), b.begin(), [](unsigned char x, unsigned char y) {
           return std::tolower(x) == std::tolower(y);
         });
}

}  // namespace

const std::vector<FunctionSpec>& function_table() { return kTable; }

const FunctionSpec* find_by_method(std::string_view method) {
  for (const auto& f : kTable)
    if (f.method == method) return &f;
  return nullptr;
}

const FunctionSpec* find_by_display(std::string_view display) {
  for (const auto& f : kTable)
    if (iequal(f.display, display)) return &f;
  return nullptr;
}

std::string addin_text(const std::string& method, AddinText what, long argument) {
  const FunctionSpec* f = find_by_method(method);
  if (f == nullptr) return {};
  const bool arg_ok = argument >= 0 && static_cast<std::size_t>(argument) < f->args.size();
  switch (what) {
    case AddinText::display: return std::string(f->display);
    case AddinText::description: return std::string(f->description);
    case AddinText::argument_name: return arg_ok ? std::string(f->args[static_cast<std::size_t>(argument)].name) : std::string();
    case AddinText::argument_help: return arg_ok ? std::string(f->args[static_cast<std::size_t>(argument)].help) : std::string();
  }
  return {};
}

}  // namespace lode::addin
