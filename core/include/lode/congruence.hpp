// Comparing two factor solutions: Tucker's congruence coefficient (Tucker 1951; Lorenzo-Seva & ten Berge
// 2006) and the optimal one-to-one matching of factors with sign flips (Hungarian assignment, Kuhn 1955;
// Munkres 1957). Used directly (the same scale in two departments, two halves of a sample) and to align
// bootstrap replicates to the full-sample solution.
#pragma once

#include "lode/common.hpp"

#include <string>
#include <vector>

namespace lode {

// Tucker's congruence coefficient between every column of `a` and every column of `b` (same items, same
// order): phi(i, j) = sum_r a(r,i) b(r,j) / sqrt(sum_r a(r,i)^2 * sum_r b(r,j)^2). Result: a.cols() x b.cols().
// A column of zeros gives NaN for its row/column (the coefficient is undefined).
Matrix tucker_congruence(const Matrix& a, const Matrix& b);

// Solves the assignment problem: a permutation `match` of [0, n) maximising sum_i score(i, match[i]) for a
// square score matrix (Hungarian method, O(n^3)). Exposed for reuse and testing.
std::vector<Index> best_assignment(const Matrix& score);

// The result of matching the factors of `other` to those of `reference`.
struct FactorMatch {
  Matrix congruence;          // reference.cols() x other.cols(), before matching (signed)
  std::vector<Index> order;   // order[j] = the column of `other` matched to column j of `reference`
  Vector signs;               // +1 or -1: the sign applied to that column of `other`
  Vector matched_congruence;  // congruence of each matched pair after the sign flip (>= 0)
  Matrix aligned;             // `other` with columns reordered and reflected to match `reference`
  std::vector<std::string> notes;  // plain-language reading of each matched pair
};

// Matches the columns of `other` to those of `reference` so that the sum of |congruence| over matched
// pairs is largest (Hungarian method), then reflects each matched column of `other` whose congruence is
// negative. Both must have the same shape and at least one column. The notes read each pair with the
// bands of Lorenzo-Seva & ten Berge (2006): >= 0.95 the factors can be considered equal, 0.85-0.94 fair
// similarity, below 0.85 not the same factor.
FactorMatch match_factors(const Matrix& reference, const Matrix& other);

// The reading of a congruence by those bands, as the end of "it ...": "can be considered the same
// factor", "shows fair similarity", "is not the same factor".
const char* congruence_reading(double congruence) noexcept;

// Applies a match to a factor correlation matrix of `other`: returns D P' Phi P D, where P is the column
// permutation and D the signs, so that it refers to the aligned factors.
Matrix align_factor_correlations(const Matrix& phi, const FactorMatch& match);

}  // namespace lode
