// The table of the analysis's word options (see option_table.hpp).
#include "option_table.hpp"

#include "report_text.hpp"

#include <cmath>
#include <limits>
#include <stdexcept>

namespace lode::addin::report {

const std::vector<WordOption>& word_options() {
  static const std::vector<WordOption> table = {
      {"Correlation", "Correlations", "Correlations",
       {{"pearson", "Pearson"}, {"spearman", "Spearman (ranks)"}, {"polychoric", "Polychoric (ordered answers)"}},
       defaults::correlation,
       "How items are correlated: Pearson takes answers as numbers; Spearman uses their ranks; polychoric treats "
       "them as ordered categories.",
       &Options::correlation},
      {"Missing", "Missing answers", "Missing answers",
       {{"pairwise", "Pairwise: all who answered both"},
        {"listwise", "Listwise: complete answers only"},
        {"em", "EM: estimated under missing at random"}},
       defaults::missing,
       "Pairwise: each correlation uses everyone who answered both items. Listwise: only respondents who "
       "answered every item. EM: maximum likelihood correlations from everyone with an answer, assuming skipped "
       "answers depend only on answers given (missing at random; Pearson correlations only).",
       &Options::missing},
      {"Extraction", "Extraction", "Extraction",
       {{"ml", "Maximum likelihood (fit tests)"}, {"paf", "Principal axis"}, {"minres", "Least squares residuals"}},
       defaults::extraction,
       "How the factors are estimated: maximum likelihood also gives tests of fit (chi-square, RMSEA, TLI).",
       &Options::extraction},
      {"Rotation", "Rotation", "Rotation",
       {{"oblimin", "Oblimin (factors may correlate)"},
        {"promax", "Promax (factors may correlate)"},
        {"varimax", "Varimax (factors kept apart)"},
        {"none", "None"}},
       defaults::rotation,
       "How the factors are turned to be read: oblique rotations let them correlate, as survey factors usually do.",
       &Options::rotation},
      {"Scores", "Factor scores", "Factor scores",
       {{"none", "None"}, {"regression", "Regression"}, {"bartlett", "Bartlett"}, {"correlation_preserving", "Correlation-preserving"}},
       defaults::scores,
       "Respondents' estimated scores on each factor, and how they are estimated.",
       &Options::scores},
      {"ScoresPlace", "Put the scores", "Factor scores placed",
       {{"beside", "Beside the data, if empty"}, {"sheet", "On a sheet of their own"}},
       defaults::scores_place,
       "Where the scores go: new columns right of the data (only when those cells are empty) or a new sheet.",
       &Options::scores_place},
  };
  return table;
}

const std::vector<CheckOption>& check_options() {
  static const std::vector<CheckOption> table = {
      {"Holdout", "Hold out respondents for a confirmatory check", "Share held out", "Share held out (confirmatory check)",
       0.5, 0.1, 0.9, 2,
       "Before anything else, sets this share of the respondents aside at random (with the random seed); explores "
       "the rest; then fits the simple structure found there to the respondents set aside. Its own sheet says "
       "whether the structure fits them."},
      {"Halves", "Replicate in random halves", "Splits", "Random splits into halves", 100, 2, 10000, 0,
       "Splits the respondents into two random halves this many times (split i from stream i of the random seed), "
       "repeats the analysis in each half and compares the halves' factors. Its own sheet says whether the "
       "structure replicates."},
  };
  return table;
}
const ValueOption kGroupColumnOption{
    "GroupColumn", "Compare groups by", "Groups compared by",
    "A column of the range holding each respondent's group (text or numbers): each group large enough is analysed "
    "like all respondents and its factors compared with theirs on a sheet of its own. The column is never an item."};
const ValueOption kMinGroupOption{
    "MinGroup", "Smallest group", "Smallest group compared",
    "Groups with fewer respondents are listed and left out. 100 is common practice for loadings stable enough to "
    "compare; never fewer than the items + 1."};
namespace {
// Former words of renamed option words, still read so saved scripts and run records keep working
// (README, "Former names"); the table of words lists only the current ones.
struct FormerWord {
  const char* property;
  const char* word;
  const char* now;
};
constexpr FormerWord kFormerWords[] = {{"Scores", "tenberge", "correlation_preserving"}};
}  // namespace

std::string current_word(const WordOption& option, const std::string& word) {
  for (const FormerWord& f : kFormerWords)
    if (std::string_view(option.property) == f.property && word == f.word) return f.now;
  return word;
}

const WordOption* find_word_option(std::string_view property) {
  for (const WordOption& w : word_options())
    if (property == w.property) return &w;
  return nullptr;
}

std::vector<std::string> word_labels(const WordOption& option) {
  std::vector<std::string> s;
  for (const OptionWord& w : option.words) s.push_back(w.label);
  return s;
}

std::size_t word_index(const WordOption& option, std::string_view word) {
  std::size_t fallback = 0;
  for (std::size_t i = 0; i < option.words.size(); ++i) {
    if (word == option.words[i].word) return i;
    if (std::string_view(option.fallback) == option.words[i].word) fallback = i;
  }
  return fallback;
}

Options options_from(const std::vector<OptionValue>& values) {
  using Kind = OptionValue::Kind;
  Options o;
  for (const OptionValue& v : values) {
    const std::string& n = v.name;
    auto text = [&]() {
      if (v.kind != Kind::text) throw std::invalid_argument("option " + n + " must be text");
      return trimmed(v.text);
    };
    // A whole number in [lo, hi], refused by name otherwise (never wrapped into a smaller type).
    auto integer = [&](std::int64_t lo, std::int64_t hi, const char* range) {
      std::int64_t i = v.integer;
      bool whole = v.kind == Kind::integer;
      if (v.kind == Kind::number && std::isfinite(v.number) && v.number == std::floor(v.number)) {
        if (v.number < static_cast<double>(lo) || v.number > static_cast<double>(hi))
          throw std::invalid_argument("option " + n + " is " + fmt_whole(v.number) + "; it must be " + range);
        i = static_cast<std::int64_t>(v.number);
        whole = true;
      }
      if (!whole) throw std::invalid_argument("option " + n + " must be a whole number, " + range);
      if (i < lo || i > hi) throw std::invalid_argument("option " + n + " is " + std::to_string(i) + "; it must be " + range);
      return i;
    };
    auto small = [&](std::int64_t lo, std::int64_t hi, const char* range) { return static_cast<int>(integer(lo, hi, range)); };
    auto number = [&]() {
      if (v.kind == Kind::number || v.kind == Kind::integer) return v.number;
      throw std::invalid_argument("option " + n + " must be a number");
    };
    if (n == "HeaderRow") o.header = small(-1, 1, "-1 (detect), 0 or 1");
    else if (n == "Items") {
      if (v.kind != Kind::list) throw std::invalid_argument("option Items must be a list of item names");
      o.items = v.list;
    } else if (const WordOption* w = find_word_option(n)) o.*(w->field) = current_word(*w, text());
    else if (n == "Factors") o.factors = small(0, kMaxReportFactors, "0 (suggest) to 100");
    else if (n == kGroupColumnOption.property) o.group_column = text();
    else if (n == kMinGroupOption.property) o.min_group = small(2, kMaxMinGroup, "2 to 1000000 respondents");
    else if (n == "RotationParameter") o.rotation_parameter = number();
    else if (n == "Bootstrap") o.bootstrap = small(0, kMaxReportBootstrap, "0 (off) or 2 to 100000 resamples");
    else if (n == "Holdout") o.holdout = number();  // validate() checks the share
    else if (n == "Halves") o.halves = small(0, kMaxReportHalves, "0 (off) or 2 to 10000 random splits");
    else if (n == "Salient") o.salient = number();
    else if (n == "Seed") o.seed = static_cast<std::uint64_t>(integer(0, std::numeric_limits<std::int64_t>::max(), "0 or more"));
    else if (n == "CancelAfterSheets") o.cancel_after_sheets = small(-1, 1000, "-1 (never) to 1000");
    else throw std::invalid_argument("unknown option " + n);
  }
  return o;
}

}  // namespace lode::addin::report
