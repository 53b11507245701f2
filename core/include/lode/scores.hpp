// Factor scores for respondents: regression (Thurstone 1935), Bartlett (1937) and correlation-preserving
// (ten Berge, Krijnen, Wansbeek & Shapiro 1999) weights, for orthogonal and oblique solutions, with a
// stated rule for rows with missing items, and the determinacy of each factor (Guttman 1955; Grice 2001).
//
// The solution is given as plain matrices: pattern loadings Lambda (items x factors), factor correlations
// Phi (factors x factors; empty = orthogonal, the identity), uniquenesses psi (items), and the correlation
// matrix R the solution was fitted to. Scores are computed from the data standardised with the means and
// standard deviations behind R.
#pragma once

#include "lode/common.hpp"

#include <string>
#include <vector>

namespace lode {

// The usual cautions that go with any output of individual scores. Reports and the add-in show it
// wherever scores are shown or written.
inline constexpr const char score_cautions[] =
    "Factor scores are estimates, not measurements: each respondent's score carries error, and "
    "different scoring methods give different scores. An instrument needs validation for the purpose "
    "before its scores are used to select, rate or diagnose individuals; local law and professional "
    "testing standards govern such use.";

enum class ScoreMethod {
  regression,              // W = R^-1 Lambda Phi (Thurstone 1935): least-squares prediction of the factors
  bartlett,                // W = Psi^-1 Lambda (Lambda' Psi^-1 Lambda)^-1 (Bartlett 1937): conditionally unbiased
  correlation_preserving,  // ten Berge, Krijnen, Wansbeek & Shapiro (1999): scores correlate exactly as Phi
};

const char* to_string(ScoreMethod method) noexcept;

// What happens to a respondent who left some items unanswered.
enum class MissingItemRule {
  // Weights are recomputed from the answered items alone (the submatrices of R, Lambda and psi for
  // those items), so the score is the method's estimate given what the respondent answered. A row is
  // scored only when it answered at least `min_answered_share` of the items (and at least one).
  score_from_answered,
  // Any missing item leaves the respondent's scores missing (NaN).
  leave_missing,
};

const char* to_string(MissingItemRule rule) noexcept;

struct ScoreOptions {
  ScoreMethod method = ScoreMethod::regression;
  MissingItemRule missing = MissingItemRule::score_from_answered;
  // Under score_from_answered, the share of items a row must have answered to be scored. 0.5 is common
  // practice (the usual half-of-the-items rule for prorated scale scores).
  double min_answered_share = 0.5;
  // Means and standard deviations used to standardise each item: those behind R. Empty = computed from
  // the data, per item over its answered values, with the n - 1 denominator (as R's cor and scale do).
  Vector means;
  Vector sds;
  // Determinacy below this is flagged. 0.80 is common practice; Gorsuch (1983) is usually cited for
  // 0.80 as a minimum and Grice (2001) for preferring 0.90 (both from memory).
  double low_determinacy = 0.80;
  std::vector<std::string> item_names;  // optional, used in messages
};

struct FactorScores {
  ScoreMethod method = ScoreMethod::regression;
  MissingItemRule missing = MissingItemRule::score_from_answered;
  Matrix scores;   // rows x factors; NaN where a row was left missing
  Matrix weights;  // items x factors: the weights applied to standardised complete rows
  Vector means, sds;  // the standardisation used
  // Determinacy of each factor: the multiple correlation of the factor with the items,
  // sqrt(diag(S' R^-1 S)) with S = Lambda Phi the structure (Guttman 1955; Grice 2001). It is the
  // correlation of the regression scores with the factor, the best any linear score can reach.
  Vector determinacy;
  // Correlation of these scores (the chosen method, complete rows) with the factor they estimate:
  // diag(W' S) / sqrt(diag(W' R W)); equals `determinacy` for regression scores.
  Vector validity;
  // Correlations among the scores implied for complete rows: W' R W scaled to unit diagonal. Equals Phi
  // for correlation-preserving scores (exactly, in the sample R was computed from).
  Matrix score_correlations;
  std::vector<bool> low_determinacy;  // per factor: determinacy < options.low_determinacy
  Index rows_total = 0;
  Index rows_complete = 0;   // scored from all items
  Index rows_partial = 0;    // scored from the answered items only
  Index rows_missing = 0;    // left missing (by the rule, too few answers, or weights not estimable)
  std::vector<std::string> notes;  // plain language, ends with score_cautions
};

// Weights W (items x factors) such that scores = Z W for standardised data Z. `phi` may be empty
// (orthogonal). Checks shapes, finiteness, that R and Phi are positive definite, and (Bartlett) that
// every uniqueness is positive.
Matrix factor_score_weights(const Matrix& r, const Matrix& loadings, const Matrix& phi, const Vector& uniquenesses,
                            ScoreMethod method, const std::vector<std::string>& item_names = {});

// Determinacy of each factor: sqrt(diag(S' R^-1 S)), S = Lambda Phi.
Vector factor_determinacy(const Matrix& r, const Matrix& loadings, const Matrix& phi);

// Scores every row of `data` (rows = respondents, columns = the items of the solution, NaN = missing).
FactorScores factor_scores(const Matrix& data, const Matrix& r, const Matrix& loadings, const Matrix& phi,
                           const Vector& uniquenesses, const ScoreOptions& options = {});

}  // namespace lode
