// The overview sheet: the data used, whether the items can be factored, how many factors, the fit,
// the items to look at, the cautions about scores, and the scores' and bootstrap's summaries.
#include "report_layout.hpp"
#include "report_text.hpp"

#include <cmath>

namespace lode::addin::report {
namespace {

using namespace styles;

void data_used(Sheet& ov, const Analysis& a) {
  const CorrelationFacts& c = a.corr;
  heading_row(ov, "Data used", 2);
  ov.line({Cell::txt("Source range", label), Cell::txt(a.address)});
  ov.line({Cell::txt("First row holds item names", label), Cell::txt(a.items.header ? "yes" : "no")});
  ov.line({Cell::txt("Items analysed", label), Cell::num(static_cast<double>(a.p()))});
  ov.line({Cell::txt("Respondents in the range", label), Cell::num(c.rows_total)});
  ov.line({Cell::txt("Respondents used", label), Cell::num(c.rows_used)});
  ov.line({Cell::txt("Respondents who answered every item", label), Cell::num(c.rows_complete)});
  ov.line({Cell::txt("Sample size for tests", label), Cell::num(c.n_obs)});
  ov.line({Cell::txt("Share of answers missing", label), Cell::num(c.missing_share, number)});
  ov.line({Cell::txt("Missing answers", label), Cell::txt(missing_words(a.options.missing))});
  ov.line({Cell::txt("Correlations", label), Cell::txt(correlation_words(a.options.correlation))});
  if (a.items.text_as_missing > 0)
    ov.line({Cell::txt("Text cells among the answers", label), Cell::num(static_cast<double>(a.items.text_as_missing)),
             Cell::txt("read as missing answers", note)});
}

// The verdict on factoring these items, in one line, from the figures below it.
std::string factorability_verdict(const CorrelationFacts& c) {
  const bool kmo_ok = c.kmo.reason.empty() && c.kmo.value >= 0.50;
  const bool related = c.bartlett_p.reason.empty() && c.bartlett_p.value < 0.05;
  if (!c.kmo.reason.empty() && !c.bartlett_p.reason.empty()) return "not judged: the figures below could not be computed";
  if (kmo_ok && related)
    return std::string("yes: the items share enough to be factored") +
           (c.positive_definite ? "" : ", though the correlation matrix is not positive definite (see the notes)");
  if (!kmo_ok && c.kmo.reason.empty()) return "doubtful: the items share too little (sampling adequacy under 0.50)";
  if (c.bartlett_p.reason.empty() && !related) return "doubtful: the items may be unrelated (Bartlett's p is 0.05 or more)";
  return "partly judged: see the figures below";
}

void factorability(Sheet& ov, const Analysis& a) {
  const CorrelationFacts& c = a.corr;
  heading_row(ov, "Can these items be factored?", 2);
  ov.line({Cell::txt("Verdict", label), Cell::txt(factorability_verdict(c))});
  if (c.kmo.reason.empty())
    ov.line({Cell::txt("KMO sampling adequacy", label), Cell::num(c.kmo.value, number),
             Cell::txt(c.kmo_label + " (Kaiser 1974); under 0.50 the items share too little to factor (Kaiser 1974)", note)});
  else
    ov.line({Cell::txt("KMO sampling adequacy", label), Cell::txt("not available: " + c.kmo.reason, note)});
  if (c.bartlett_chi2.reason.empty()) {
    const double p = c.bartlett_p.value;
    ov.line({Cell::txt("Are the items unrelated? Bartlett's p", label), p_cell(p),
             Cell::txt(p < 0.05 ? "no: they are correlated (p under 0.05; common practice); Bartlett (1950)"
                                : "perhaps: p is 0.05 or more (common practice); Bartlett (1950)",
                       note)});
    ov.line({Cell::txt("Bartlett's chi-square, degrees of freedom", label), Cell::num(c.bartlett_chi2.value, number),
             Cell::num(c.bartlett_df.value)});
  } else {
    ov.line({Cell::txt("Are the items unrelated? Bartlett's p", label),
             Cell::txt("not available: " + c.bartlett_chi2.reason, note)});
  }
  ov.line({Cell::txt("Correlation matrix positive definite", label), Cell::txt(c.positive_definite ? "yes" : "no")});
  for (const std::string& n : c.factorability_notes) ov.line({Cell::txt("Note on factorability", flag), Cell::txt(n, note)});
}

void how_many(Sheet& ov, const Analysis& a) {
  const CountResult& count = a.count;
  const std::vector<double>& eig = a.corr.eigenvalues;
  const int fixed = a.options.factors;
  heading_row(ov, "How many factors", 5);
  double total = 0.0;
  std::size_t above_one = 0;  // eigenvalues above 1: common practice (Kaiser 1960), known to over-count
  for (double e : eig) {
    total += e;
    if (e > 1.0) ++above_one;
  }
  // The decision compares the reduced-matrix eigenvalues with random data's: those come first; the
  // eigenvalues of the correlations themselves (what each component's share of variance reads) follow.
  const bool reduced = count.available && count.observed_factor.size() >= eig.size() && count.random_factor.size() >= eig.size();
  if (reduced) {
    ov.line({Cell::txt("The count compares the first two columns: a factor counts while its reduced-matrix eigenvalue "
                       "(squared multiple correlations on the diagonal) exceeds random data's at the same position "
                       "(Horn 1965; O'Connor 2000).",
                       note)});
    ov.line({Cell::txt("Factor", label), Cell::txt("Reduced-matrix eigenvalue", label),
             Cell::txt(random_data_words(count), label), Cell::txt("Eigenvalue", label),
             Cell::txt("Share of variance", label)});
  } else {
    ov.line({Cell::txt("Factor", label), Cell::txt("Eigenvalue", label), Cell::txt("Share of variance", label),
             Cell::txt(random_data_words(count), label)});
  }
  for (std::size_t k = 0; k < eig.size(); ++k) {
    const Cell factor = Cell::num(static_cast<double>(k + 1)), e = Cell::num(eig[k], number),
               share = Cell::num(eig[k] / total, number);
    if (reduced)
      ov.line({factor, Cell::num(count.observed_factor[k], number), Cell::num(count.random_factor[k], number), e, share});
    else
      ov.line({factor, e, share, Cell::txt(k == 0 ? count.reason : "", note)});
  }
  if (count.available) {
    ov.line({Cell::txt("Rule", label), Cell::txt("Factors", label), Cell::txt("Basis", label)});
    for (const CountResult::Rule& r : count.rules)
      ov.line({Cell::txt(r.rule, r.primary ? salient : label), Cell::txt(r.factors), Cell::txt(r.basis, note)});
    for (const std::string& n : count.notes) ov.line({Cell::txt("Note on the count", flag), Cell::txt(n, note)});
  } else {
    ov.line({Cell::txt("Eigenvalues above 1", label), Cell::num(static_cast<double>(above_one)),
             Cell::txt("a rule of thumb that tends to suggest too many factors (common practice)", note)});
  }
  if (fixed > 0)
    ov.line({Cell::txt("Decision", label), Cell::num(fixed),
             Cell::txt(count.available ? "factors, as you fixed them; the evidence suggests " + std::to_string(count.suggested)
                                       : std::string("factors, as you fixed them"),
                       note)});
  else if (count.available)
    ov.line({Cell::txt("Decision", label), Cell::num(count.suggested), Cell::txt(count.why, note)});
  else
    ov.line({Cell::txt("Decision", label), Cell::txt("not made: " + count.reason, note)});
}

void fit_statistics(Sheet& ov, const ModelResult& model) {
  ov.line({Cell::txt("Chi-square", label), Cell::num(model.chi2, number), Cell::txt("degrees of freedom", note),
           Cell::num(model.df)});
  ov.line({Cell::txt("p-value", label), p_cell(model.p),
           Cell::txt("with a few hundred respondents even small misfit gives a small p; read RMSEA and TLI too "
                     "(common practice)",
                     note)});
  ov.line({Cell::txt("RMSEA", label), Cell::num(model.rmsea, number),
           Cell::txt(model.rmsea <= 0.05   ? "close fit (0.05 or less; Browne and Cudeck 1993)"
                     : model.rmsea <= 0.08 ? "reasonable fit (0.08 or less; Browne and Cudeck 1993)"
                     : model.rmsea <= 0.10 ? "mediocre fit (0.10 or less; MacCallum, Browne and Sugawara 1996)"
                                           : "poor fit (above 0.10; MacCallum, Browne and Sugawara 1996)",
                     note)});
  ov.line({Cell::txt("RMSEA interval (90%)", label), Cell::num(model.rmsea_lo, number), Cell::txt("to", note),
           Cell::num(model.rmsea_hi, number)});
  ov.line({Cell::txt("TLI", label), Cell::num(model.tli, number),
           Cell::txt(model.tli >= 0.95   ? "good (0.95 or more; Hu and Bentler 1999)"
                     : model.tli >= 0.90 ? "acceptable (0.90 or more; common practice)"
                                         : "weak (under 0.90; common practice)",
                     note)});
  ov.line({Cell::txt("BIC", label), Cell::num(model.bic, number), Cell::txt("lower is better when comparing models", note)});
}

void model_fit(Sheet& ov, const Analysis& a) {
  const ModelResult& model = a.model;
  heading_row(ov, "How well the model fits", 2);
  if (!model.available) {
    ov.line({Cell::txt("Fit statistics (RMSEA, TLI, RMSR)", label), Cell::txt("not available: " + model.reason, note)});
    return;
  }
  ov.line({Cell::txt("Factors in the model", label), Cell::num(static_cast<double>(a.k())),
           Cell::txt(std::string(extraction_words(a.options.extraction)) + "; rotation " +
                         rotation_words(a.options.rotation, a.options.rotation_parameter, model.rotation_used),
                     note)});
  ov.line({Cell::txt("Root mean square residual (RMSR)", label), Cell::num(model.rmsr, number),
           Cell::txt(model.rmsr <= 0.05   ? "small: the model reproduces the correlations well (0.05 or less; common practice)"
                     : model.rmsr <= 0.08 ? "acceptable (0.08 or less; common practice)"
                                          : "large: correlations the factors do not explain (above 0.08; common practice)",
                     note)});
  if (model.have_stats) {
    fit_statistics(ov, model);
    if (a.options.extraction != "ml") ov.line({Cell::txt("About these figures", label), Cell::txt(kNotLikelihoodRatio, flag)});
  } else {
    ov.line({Cell::txt("Chi-square, RMSEA, TLI", label), Cell::txt("not available: " + model.stats_reason, note)});
  }
  for (const std::string& n : model.notes) ov.line({Cell::txt("Note on the model", flag), Cell::txt(n, note)});
}

void items_to_look_at(Sheet& ov, const Analysis& a) {
  const ModelResult& model = a.model;
  const std::vector<std::string>& names = a.items.names;
  const std::size_t p = a.p(), k = a.k();
  const double cut = a.options.salient;
  heading_row(ov, "Items to look at", 3);
  bool any_flag = false;
  if (model.available)
    for (std::size_t j = 0; j < p; ++j) {
      std::size_t strong = 0;
      for (std::size_t f = 0; f < k; ++f)
        if (std::fabs(model.loadings[j * k + f]) >= cut) ++strong;
      std::string why;
      if (model.heywood[j] > 0.5)
        why = "an improper solution for this item (communality at or above 1): the model cannot be trusted for it";
      else if (strong == 0)
        why = "no loading reaches " + fmt_num(cut, 2) + " (the strong-loading cut; common practice): it does not clearly "
              "belong to any factor";
      else if (strong > 1)
        why = "loads on " + std::to_string(strong) + " factors at " + fmt_num(cut, 2) +
              " or more (the strong-loading cut; common practice): it measures more than one thing";
      if (why.empty()) continue;
      any_flag = true;
      ov.line({Cell::txt(names[j], flag), Cell::num(model.communalities[j], number), Cell::txt(why, note)});
    }
  const std::vector<double>& msa = a.corr.msa;
  for (std::size_t j = 0; j < msa.size() && j < p; ++j)
    if (msa[j] < 0.50) {  // Kaiser (1974): a sampling adequacy under 0.50 is unacceptable
      any_flag = true;
      ov.line({Cell::txt(names[j], flag), Cell::num(msa[j], number),
               Cell::txt("its sampling adequacy (MSA) is under 0.50 (unacceptable; Kaiser 1974): the other items say "
                         "little about it; consider leaving it out",
                         note)});
    }
  const std::vector<double>& smc = a.corr.smc;
  if (!smc.empty()) {
    for (std::size_t j = 0; j < p; ++j)
      if (smc[j] < 0.20) {  // common practice: an item sharing under a fifth of its variance with the rest
        any_flag = true;
        ov.line({Cell::txt(names[j], flag), Cell::num(smc[j], number),
                 Cell::txt("shares little with the other items (squared multiple correlation under 0.20; common practice); "
                           "check its wording and whether it belongs to this questionnaire",
                           note)});
      }
  } else {
    ov.line({Cell::txt("Squared multiple correlations", label), Cell::txt(a.corr.smc_problem, note)});
  }
  for (const std::string& n : a.corr.notes) {
    any_flag = true;
    ov.line({Cell::txt("Note on the correlations", flag), Cell::txt(n, note)});
  }
  if (!any_flag) ov.line({Cell::txt("No item stands out.", note)});
}

void scores_summary(Sheet& ov, const Analysis& a) {
  const ScoreResult& scores = a.scores;
  heading_row(ov, "Factor scores", 3);
  if (!scores.available) {
    ov.line({Cell::txt("Scores", label), Cell::txt("not written: " + scores.reason, note)});
    return;
  }
  ov.line({Cell::txt("Method", label), Cell::txt(score_method_words(a.options.scores))});
  ov.line({Cell::txt("Written to", label), Cell::txt(scores.where)});
  if (!scores.moved.empty()) ov.line({Cell::txt("Not beside the data", flag), Cell::txt("because " + scores.moved, note)});
  ov.line({Cell::txt("Respondents scored from every item", label), Cell::num(scores.rows_complete)});
  ov.line({Cell::txt("Respondents scored from the items they answered", label), Cell::num(scores.rows_partial)});
  ov.line({Cell::txt("Respondents without scores (blank)", label), Cell::num(scores.rows_missing)});
  ov.line({Cell::txt("Rule for skipped items", label), Cell::txt(scores.rule, note)});
  ov.line({Cell::txt("Factor", label), Cell::txt("Determinacy", label), Cell::txt("Scores' correlation with the factor", label)});
  for (std::size_t f = 0; f < a.k() && f < scores.determinacy.size(); ++f)
    ov.line({Cell::txt("Factor " + std::to_string(f + 1), label), Cell::num(scores.determinacy[f], number),
             Cell::num(scores.validity[f], number),
             scores.low[f] > 0.5 ? Cell::txt("low determinacy: scores on this factor are poorly determined by the "
                                             "answers (under 0.80; common practice)",
                                             flag)
                                 : Cell::txt("")});
  for (const std::string& n : scores.notes) ov.line({Cell::txt("Note on the scores", flag), Cell::txt(n, note)});
  ov.line({Cell::txt(scores.cautions, caution)});
}

void bootstrap_summary(Sheet& ov, const BootResult& b) {
  heading_row(ov, "Bootstrap intervals", 3);
  if (!b.available) {
    ov.line({Cell::txt("Intervals", label), Cell::txt("not computed: " + b.reason, note)});
    return;
  }
  ov.line({Cell::txt("Resamples asked for", label), Cell::num(b.replicates),
           Cell::txt("respondents drawn with replacement, each resample refitted the same way (Efron and "
                     "Tibshirani 1993)",
                     note)});
  ov.line({Cell::txt("Resamples used", label), Cell::num(b.used)});
  ov.line({Cell::txt("Resamples failed", label), Cell::num(b.failed),
           Cell::txt(b.failed > 0 ? "left out of the intervals; the reasons follow" : "none failed", note)});
  for (const std::string& f : b.failures) ov.line({Cell::txt("Why resamples failed", flag), Cell::txt(f, note)});
  ov.line({Cell::txt("Interval", label), Cell::num(b.level, number),
           Cell::txt("two-sided percentile intervals, beside the loadings on " + std::string(names::loadings), note)});
  ov.line({Cell::txt("How resamples were aligned", label), Cell::txt(b.alignment, note)});
  ov.line({Cell::txt("Resamples poorly matched", label), Cell::num(b.poorly_matched),
           Cell::txt(b.poorly_matched > 0 ? "some factor matched with congruence under 0.85 (Lorenzo-Seva and ten Berge "
                                            "2006): its intervals mix different factors"
                                          : "every factor of every resample matched with congruence 0.85 or more "
                                            "(Lorenzo-Seva and ten Berge 2006)",
                     b.poorly_matched > 0 ? flag : note)});
  for (const std::string& n : b.notes) ov.line({Cell::txt("Note on the bootstrap", flag), Cell::txt(n, note)});
}

}  // namespace

Sheet layout_overview(const Analysis& a) {
  Sheet ov;
  ov.base_name = names::overview;
  ov.column_widths = {7000, 4500, 4000, 4000, 4000};
  ov.line({Cell::txt("Lode factor analysis report", title)});
  ov.line({Cell::txt("Written " + a.timestamp + ". The sheets of this report:", note)});
  for (const char* s : {names::overview, names::loadings, names::factors, names::scree})
    ov.line({Cell::txt(s, label)});
  if (a.halves_asked()) ov.line({Cell::txt(names::replication, label)});
  if (a.holdout_asked()) ov.line({Cell::txt(names::holdout, label)});
  if (a.general.available) ov.line({Cell::txt(names::general, label)});
  if (a.groups.asked) ov.line({Cell::txt(names::groups, label)});
  ov.line({Cell::txt(names::record, label)});
  if (a.scores.sheet) ov.line({Cell::txt(names::scores, label)});
  if (a.scores.beside) ov.line({Cell::txt("Factor scores: " + a.scores.where, note)});
  ov.blank();
  data_used(ov, a);
  ov.blank();
  factorability(ov, a);
  ov.blank();
  how_many(ov, a);
  ov.blank();
  model_fit(ov, a);
  ov.blank();
  items_to_look_at(ov, a);
  ov.blank();
  heading_row(ov, "Before using factor scores about people", 2);
  for (const char* s :
       {"Factor scores are estimates with error, not measurements of a person.",
        "An instrument needs evidence of validity for the intended use before scores inform decisions about "
        "individuals (selection, rating, diagnosis).",
        "Professional testing standards and local law govern such use; follow them, and prefer group summaries "
        "where a decision about one person is not needed."})
    ov.line({Cell::txt(s, caution)});
  if (a.options.scores != "none") {
    ov.blank();
    scores_summary(ov, a);
  }
  if (a.bootstrap_asked()) {
    ov.blank();
    bootstrap_summary(ov, a.boot);
  }
  return ov;
}

}  // namespace lode::addin::report
