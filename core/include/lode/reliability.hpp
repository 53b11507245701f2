// Reliability of scales: Cronbach's alpha (Cronbach 1951), raw and standardised, with alpha if an item is
// deleted and corrected item-total correlations; McDonald's omega total and each factor's share
// of a scale (McDonald 1999) from fitted loadings.
#pragma once

#include "lode/common.hpp"
#include "lode/extraction.hpp"

#include <string>
#include <vector>

namespace lode {

struct AlphaOptions {
  std::vector<std::string> item_names;  // optional, used in messages and notes
};

struct AlphaResult {
  // Rows with any missing item of the scale are left out (listwise deletion within the scale), so every
  // figure below comes from the same respondents.
  Index rows_total = 0;
  Index rows_used = 0;
  Index items = 0;
  // Raw alpha, from the covariances: k/(k-1) (1 - sum var_i / var(total)) (Cronbach 1951).
  double alpha = 0.0;
  // Standardised alpha, from the correlations: k rbar / (1 + (k-1) rbar), rbar the mean inter-item
  // correlation (the Spearman-Brown form).
  double alpha_standardized = 0.0;
  double mean_inter_item_correlation = 0.0;
  Vector alpha_if_deleted;               // raw alpha of the scale without item i (NaN when only 1 would remain)
  Vector alpha_standardized_if_deleted;  // standardised alpha without item i
  Vector item_total_correlation;         // corrected: item i with the sum of the other items
  Vector item_means, item_sds;           // over the rows used (n - 1 denominator)
  std::vector<std::string> notes;
};

// Alpha for one scale: `data` holds the scale's items only (rows = respondents, NaN = missing), already
// reverse-scored where needed. Needs at least 2 items and 3 complete rows; a constant item is an error.
AlphaResult cronbach_alpha(const Matrix& data, const AlphaOptions& options = {});

// Raw alpha from a covariance matrix (standardised alpha when it is a correlation matrix).
double alpha_from_covariance(const Matrix& covariance);

struct OmegaOptions {
  // Which factor each item's scale is: -1 = not in any scale. Empty = each item goes to the factor of its
  // largest absolute pattern loading (the rule stated in the notes).
  std::vector<Index> assignment;
  std::vector<std::string> item_names;
  // Factor correlations Phi (factors x factors) of an oblique solution; empty = uncorrelated factors.
  Matrix factor_correlations;
  // Reverse-keyed items, one flag per item (empty = none): a flagged item enters its scale's sum
  // reverse-scored (a constant minus the answer). Reverse-scoring item i changes the correlations R to
  // D R D (D = diag(+-1), -1 at i); the common factor model fitted to D R D is D Lambda with the same Phi
  // and Psi, because the extraction's discrepancy (maximum likelihood, least squares, principal axis)
  // and every rotation criterion Lode offers other than a fixed target depend on the loadings only
  // through the fitted D Sigma D and the squares of the loadings. So the omega of the reverse-keyed
  // scale is computed here from D Lambda, exactly, without refitting (the refit would reproduce it up to
  // its convergence tolerance).
  std::vector<bool> reverse_keyed;
  // When true, an item loading negatively on the factor of its scale is reverse-keyed too (as a scale
  // score that adds the items the way they point would score it).
  bool reverse_negative_loaders = false;
};

// Two figures for the scale (the sum) of the items S assigned to factor f, both ratios to the variance of
// that sum implied by the model, 1' Sigma_SS 1 with Sigma = Lambda Phi Lambda' + Psi (McDonald 1999,
// "Test theory: a unified treatment"; the several-factor form of omega total as in Revelle & Zinbarg 2009,
// Psychometrika 74, 145-154, here with the model-implied rather than the observed variance of the sum):
//   omega total    = 1' (Lambda Phi Lambda')_SS 1 / 1' Sigma_SS 1: the share of the sum's variance due to all
//                    the common factors (its loadings on other factors and the factor correlations count);
//   factor share   = (sum_{i in S} lambda_if)^2 / 1' Sigma_SS 1: the share due to factor f alone.
// With one factor (or a scale whose items load on their factor only, factors uncorrelated) the two agree
// and equal (sum lambda)^2 / ((sum lambda)^2 + sum psi).
struct ScaleOmega {
  Index factor = 0;            // 0-based factor the scale belongs to
  std::vector<Index> items;    // 0-based items of the scale
  double sum_loadings = 0.0;   // sum of the items' loadings on the factor (signed)
  double sum_uniquenesses = 0.0;
  double scale_variance = 0.0;  // 1' Sigma_SS 1, the model-implied variance of the scale's sum
  double omega = 0.0;           // omega total (see above); NaN when the scale has no items
  double factor_share = 0.0;    // the factor's share (see above); NaN when the scale has no items
};

struct OmegaResult {
  std::vector<ScaleOmega> scales;  // one per factor, in factor order
  std::vector<Index> assignment;   // the assignment used (per item, -1 = none)
  std::vector<bool> reversed;      // per item: reverse-scored in its scale (OmegaOptions::reverse_keyed and rule)
  std::vector<std::string> notes;
};

// Omega total and the factor's share for the scale of each factor, from fitted pattern loadings (items x
// factors), uniquenesses and (oblique solutions) the factor correlations, e.g. of a correlation-matrix fit.
// Negative loadings are used as they are (the scale adds the item as scored) unless the item is reverse-keyed
// (OmegaOptions::reverse_keyed, reverse_negative_loaders); the notes name items loading negatively on their
// scale's factor that are not reverse-keyed. With a one-factor fit this is omega for that single scale.
OmegaResult omega_from_loadings(const Matrix& loadings, const Vector& uniquenesses, const OmegaOptions& options = {});

// Omega for a single scale from a one-factor fit of its items' correlation matrix (maximum likelihood by
// default; the extraction options choose). The fit's convergence and any Heywood case are reported, not
// hidden: a scale whose one-factor fit did not converge gets its omega with a note saying so.
struct SingleScaleOmega {
  double omega = 0.0;
  Vector loadings;      // items: the one-factor loadings (column sum made non-negative)
  Vector uniquenesses;  // items
  ExtractionMethod method = ExtractionMethod::maximum_likelihood;
  Convergence convergence;
  std::vector<std::string> notes;
};

SingleScaleOmega omega_single_scale(const Matrix& correlation, const ExtractionOptions& options = {});

}  // namespace lode
