// Internal to the core (not installed): symmetric eigenvalue building blocks shared by the methods
// that need many eigen decompositions of small matrices (parallel analysis, extraction).
#pragma once

#include "lode/common.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <vector>

namespace lode::detail {

// Eigenvalues of symmetric tridiagonal matrices by the root-free implicit QL iteration of Pal, Walker &
// Kahan (1969), the scheme of LAPACK's dsterf. Eigen's general solver spends most of its time in this
// phase; this form is about twice as fast, and two independent matrices (e.g. a parallel-analysis
// replicate's component and factor versions) can be swept in lockstep so the processor overlaps their
// chains of divisions.
//
// One matrix: d, the diagonal, overwritten by the eigenvalues in no particular order; e2, the squared
// off-diagonal (n - 1 used), destroyed.
struct QlState {
  double* d;
  double* e2;
  Index n;
  int max_iterations;  // per eigenvalue
  Index l = 0, m = 0, i = 0;
  int iterations = 0;
  bool failed = false;
  double c = 1.0, s = 0.0, gamma = 0.0, p = 0.0, sigma = 0.0;

  // Moves past converged eigenvalues and sets up the next sweep; false when every eigenvalue is found
  // (or the iteration cap was hit: `failed`).
  bool next_sweep() {
    constexpr double eps2 = std::numeric_limits<double>::epsilon() * std::numeric_limits<double>::epsilon();
    while (l < n) {
      // The first negligible off-diagonal entry at or after l (four tests per branch).
      auto small = [&](Index j) { return static_cast<int>(std::abs(e2[j]) <= eps2 * std::abs(d[j] * d[j + 1])); };
      Index mm = l;
      for (; mm + 4 <= n - 1; mm += 4)
        if (small(mm) | small(mm + 1) | small(mm + 2) | small(mm + 3)) break;
      for (; mm < n - 1; ++mm)
        if (small(mm)) break;
      if (mm < n - 1) e2[mm] = 0.0;
      if (mm == l) {
        ++l;
        iterations = 0;
        continue;
      }
      if (mm == l + 1) {  // a 2 x 2 block, in closed form
        const double mean = 0.5 * (d[l] + d[l + 1]), half = 0.5 * (d[l] - d[l + 1]);
        const double root = std::sqrt(half * half + e2[l]);
        d[l] = mean + root;
        d[l + 1] = mean - root;
        e2[l] = 0.0;
        l += 2;
        iterations = 0;
        continue;
      }
      if (++iterations > max_iterations) {
        failed = true;
        return false;
      }
      m = mm;
      const double rte = std::sqrt(e2[l]);
      double g = (d[l + 1] - d[l]) / (2.0 * rte);
      const double r0 = std::sqrt(g * g + 1.0);
      sigma = d[l] - rte / (g + (g >= 0.0 ? r0 : -r0));
      c = 1.0;
      s = 0.0;
      gamma = d[m] - sigma;
      p = gamma * gamma;
      i = m - 1;
      return true;
    }
    return false;
  }
  void end_sweep() {
    e2[l] = s * p;
    d[l] = sigma + gamma;
  }
};

// `count` rotations of a sweep, from row i upwards. Locals only, so two calls inlined side by side
// leave the processor two independent dependency chains.
inline void ql_rotations(double* d, double* e2, Index m, double sigma, Index& i, double& c, double& s, double& gamma,
                         double& p, Index count) {
  for (Index t = 0; t < count; ++t, --i) {
    const double bb = e2[i], r = p + bb;
    const double ir = 1.0 / r, ip = 1.0 / p;  // independent divisions, issued together
    if (i != m - 1) e2[i + 1] = s * r;
    const double old_c = c, old_gamma = gamma, alpha = d[i];
    c = p * ir;
    s = bb * ir;
    gamma = c * (alpha - sigma) - s * old_gamma;
    d[i + 1] = old_gamma + (alpha - gamma);
    const double r_over_p = r * ip;  // off the dependency chain
    p = c != 0.0 ? (gamma * gamma) * r_over_p : old_c * bb;
  }
}

inline void finish_alone(QlState& q, bool& has_sweep) {
  while (has_sweep) {
    ql_rotations(q.d, q.e2, q.m, q.sigma, q.i, q.c, q.s, q.gamma, q.p, q.i - q.l + 1);
    q.end_sweep();
    has_sweep = q.next_sweep();
  }
}

// Both matrices' eigenvalues; false if either did not converge.
inline bool tridiagonal_eigenvalues_pair(QlState& a, QlState& b) {
  bool ha = a.next_sweep(), hb = b.next_sweep();
  while (ha && hb) {
    const Index k = std::min(a.i - a.l, b.i - b.l) + 1;
    Index ia = a.i, ib = b.i;
    double ca = a.c, sa = a.s, ga = a.gamma, pa = a.p, cb = b.c, sb = b.s, gb = b.gamma, pb = b.p;
    for (Index t = 0; t < k; ++t) {
      ql_rotations(a.d, a.e2, a.m, a.sigma, ia, ca, sa, ga, pa, 1);
      ql_rotations(b.d, b.e2, b.m, b.sigma, ib, cb, sb, gb, pb, 1);
    }
    a.i = ia, a.c = ca, a.s = sa, a.gamma = ga, a.p = pa;
    b.i = ib, b.c = cb, b.s = sb, b.gamma = gb, b.p = pb;
    if (a.i < a.l) {
      a.end_sweep();
      ha = a.next_sweep();
    }
    if (b.i < b.l) {
      b.end_sweep();
      hb = b.next_sweep();
    }
  }
  finish_alone(a, ha);
  finish_alone(b, hb);
  return !a.failed && !b.failed;
}


// One tridiagonal matrix's eigenvalues (d overwritten, in no particular order; e2 destroyed); false if
// some eigenvalue needed more than max_iterations sweeps.
inline bool tridiagonal_eigenvalues(double* d, double* e2, Index n, int max_iterations) {
  QlState q{d, e2, n, max_iterations};
  bool has_sweep = q.next_sweep();
  finish_alone(q, has_sweep);
  return !q.failed;
}

// Eigenvalues of up to 8 tridiagonal matrices at once (each: d overwritten in no particular order, e2
// destroyed), their sweeps interleaved four at a time so the processor overlaps their chains of
// divisions; every matrix gets exactly the arithmetic of tridiagonal_eigenvalues. False if any failed.
bool tridiagonal_eigenvalues_many(QlState* states, int count);

// The same for exactly 4 or 8 matrices with one matrix per vector lane (AVX2 where the processor has
// it; the same numbers either way, and the same as tridiagonal_eigenvalues_many); other counts go to
// tridiagonal_eigenvalues_many.
// `vector_instructions` false forces the portable form (for the tests that compare the two).
bool tridiagonal_eigenvalues_lanes(QlState* states, int count, bool vector_instructions = true);

// Householder tridiagonalisation (Golub & Van Loan 2013, "Matrix Computations", algorithm 8.3.1, in the
// form of Eigen's Tridiagonalization) of `lanes` symmetric matrices of one size at once, one matrix
// per lane of the processor's vector registers. Every lane does exactly the arithmetic of the
// one-matrix algorithm (no sums across lanes, no fused multiply-adds), so the results do not depend on
// the vector width: the AVX2 form, chosen at run time where the processor has it, and the portable form
// give the same numbers. With AVX2 the four matrices take about the time Eigen's one-matrix
// Tridiagonalization needs for two.
class TridiagonalLanes {
 public:
  static constexpr int lanes = 4;
  explicit TridiagonalLanes(Index n);
  Index size() const { return n_; }
  // Element (row, col), row >= col, of the lower triangle of matrix `lane` (only this is read).
  double& operator()(Index row, Index col, int lane) {
    return a_[static_cast<std::size_t>((col * n_ + row) * lanes + lane)];
  }
  // Tridiagonalises every lane; the lower triangles are overwritten. `vector_instructions` false forces
  // the portable form (for the tests that compare the two).
  void run(bool vector_instructions = true);
  // After run: the diagonal (n) and the squared subdiagonal (n - 1, then a 0) of matrix `lane`.
  void extract(int lane, double* diag, double* sub2) const;

 private:
  Index n_;
  std::vector<double> a_, diag_, sub_, v_, w_;
};

// The k largest eigenpairs, and all eigenvalues, of a symmetric matrix (its lower triangle is read):
// Householder tridiagonalisation (Eigen), every eigenvalue by the root-free QL iteration above, the k
// leading eigenvectors of the tridiagonal matrix by inverse iteration with partial pivoting,
// reorthogonalised within clusters of close eigenvalues (Wilkinson 1965, "The algebraic eigenvalue
// problem", ch. 5 and 9; the scheme of LAPACK's dstein), and turned back by the Householder
// reflections. For k much smaller than the size this costs a fraction of a full decomposition (whose
// eigenvector accumulation dominates). Where the iteration does not settle, it falls back to Eigen's
// SelfAdjointEigenSolver, so the answer is always a full-accuracy one. Keeps its storage between calls.
class LeadingEigen {
 public:
  // Returns false only when even the fallback failed.
  bool compute(const Matrix& symmetric, Index k);
  const Vector& values() const { return values_; }    // all eigenvalues, largest first
  const Matrix& vectors() const { return vectors_; }  // size x k, unit columns, in the same order

 private:
  bool fast(const Matrix& symmetric, Index k);
  bool inverse_iteration(Index k);
  Eigen::Tridiagonalization<Matrix> tri_;
  Vector diag_, sub_, e2_, values_;
  Matrix x_, vectors_;
  std::vector<double> u0_, u1_, u2_, mult_, rhs_;
  std::vector<char> swapped_;
};

}  // namespace lode::detail
