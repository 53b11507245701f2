#include "symmetric_eigen.hpp"

#include "lode/random.hpp"

#include <functional>

namespace lode::detail {

namespace {

// Interleaved sweeps of N tridiagonal QL iterations that all have a sweep under way; returns when any
// of them has found all its eigenvalues (has[t] false) or failed.
template <int N>
void lockstep(QlState* const* q, bool* has) {
  for (;;) {
    Index k = q[0]->i - q[0]->l;
    for (int t = 1; t < N; ++t) k = std::min(k, q[t]->i - q[t]->l);
    ++k;
    Index i[N];
    double c[N], s[N], g[N], p[N];
    for (int t = 0; t < N; ++t) i[t] = q[t]->i, c[t] = q[t]->c, s[t] = q[t]->s, g[t] = q[t]->gamma, p[t] = q[t]->p;
    for (Index step = 0; step < k; ++step)
      for (int t = 0; t < N; ++t) ql_rotations(q[t]->d, q[t]->e2, q[t]->m, q[t]->sigma, i[t], c[t], s[t], g[t], p[t], 1);
    bool all = true;
    for (int t = 0; t < N; ++t) {
      q[t]->i = i[t], q[t]->c = c[t], q[t]->s = s[t], q[t]->gamma = g[t], q[t]->p = p[t];
      if (q[t]->i < q[t]->l) {
        q[t]->end_sweep();
        has[t] = q[t]->next_sweep();
        all = all && has[t];
      }
    }
    if (!all) return;
  }
}

// Four doubles, one per matrix; loads and stores need only the alignment of a double.
typedef double Lanes __attribute__((vector_size(4 * sizeof(double)), aligned(alignof(double)), may_alias));
typedef long long LaneMask __attribute__((vector_size(4 * sizeof(double)), aligned(alignof(double)), may_alias));
static_assert(TridiagonalLanes::lanes == 4, "the kernels' vector type holds four lanes");

// The QL iteration of 4 G tridiagonal matrices with each lane of G vector registers running one
// matrix's sweeps: the rotations of ql_rotations, lane by lane the same operations in the same order
// (so the same numbers as one matrix at a time), the divisions of four matrices issued as one and G
// independent chains of them in flight. Between sweep ends (found in advance: the shortest remaining
// sweep) the loop has no branch; a lane whose matrix is done runs on a harmless stand-in (dummy: n + 1
// doubles) until the others finish.
template <int G>
[[gnu::always_inline]] inline void ql_lanes(QlState* q, double* dummy_d, double* dummy_e2) {
  constexpr int L = 4 * G;
  bool active[L];
  double* base_d[L];
  double* base_e2[L];
  Index idx[L];
  Lanes c[G], s[G], g[G], p[G], sigma[G];
  auto load = [&](int t) {
    const int v = t / 4, l = t % 4;
    c[v][l] = q[t].c, s[v][l] = q[t].s, g[v][l] = q[t].gamma, p[v][l] = q[t].p, sigma[v][l] = q[t].sigma;
  };
  auto stand_in = [&](int t) {
    const int v = t / 4, l = t % 4;
    c[v][l] = 1.0, s[v][l] = 0.0, g[v][l] = 1.0, p[v][l] = 1.0, sigma[v][l] = 0.0;
  };
  for (int t = 0; t < L; ++t) {
    active[t] = q[t].next_sweep();
    if (active[t]) load(t);
    else stand_in(t);
  }
  const Lanes zero = {0.0, 0.0, 0.0, 0.0};
  for (;;) {
    Index k = -1;
    for (int t = 0; t < L; ++t)
      if (active[t] && (k < 0 || q[t].i - q[t].l + 1 < k)) k = q[t].i - q[t].l + 1;
    if (k < 0) break;
    for (int t = 0; t < L; ++t) {
      if (active[t]) {
        base_d[t] = q[t].d, base_e2[t] = q[t].e2, idx[t] = q[t].i;
      } else {
        base_d[t] = dummy_d, base_e2[t] = dummy_e2, idx[t] = k - 1;
        stand_in(t);
      }
    }
    for (Index step = 0; step < k; ++step) {
      for (int v = 0; v < G; ++v) {
        const int o = 4 * v;
        const Lanes bb = {base_e2[o][idx[o]], base_e2[o + 1][idx[o + 1]], base_e2[o + 2][idx[o + 2]],
                          base_e2[o + 3][idx[o + 3]]};
        const Lanes alpha = {base_d[o][idx[o]], base_d[o + 1][idx[o + 1]], base_d[o + 2][idx[o + 2]],
                             base_d[o + 3][idx[o + 3]]};
        const Lanes r = p[v] + bb;
        const Lanes ir = 1.0 / r, ip = 1.0 / p[v];
        // e2[i + 1] = s r; at a sweep's first rotation s is 0 and e2[m] already 0, so writing it is harmless.
        const Lanes sr = s[v] * r;
        const Lanes old_c = c[v], old_g = g[v];
        c[v] = p[v] * ir;
        s[v] = bb * ir;
        g[v] = c[v] * (alpha - sigma[v]) - s[v] * old_g;
        const Lanes next_d = old_g + (alpha - g[v]);
        const Lanes r_over_p = r * ip;
        const LaneMask nonzero = (LaneMask)(c[v] != zero);
        p[v] = (Lanes)(((LaneMask)((g[v] * g[v]) * r_over_p) & nonzero) | ((LaneMask)(old_c * bb) & ~nonzero));
        for (int l = 0; l < 4; ++l) {
          base_e2[o + l][idx[o + l] + 1] = sr[l];
          base_d[o + l][idx[o + l] + 1] = next_d[l];
          --idx[o + l];
        }
      }
    }
    for (int t = 0; t < L; ++t) {
      if (!active[t]) continue;
      const int v = t / 4, l = t % 4;
      q[t].i = idx[t], q[t].c = c[v][l], q[t].s = s[v][l], q[t].gamma = g[v][l], q[t].p = p[v][l];
      if (q[t].i < q[t].l) {
        q[t].end_sweep();
        active[t] = q[t].next_sweep();
        if (active[t]) load(t);
      }
    }
  }
}

void ql_lanes_portable(QlState* q, int groups, double* dummy_d, double* dummy_e2) {
  if (groups == 2) ql_lanes<2>(q, dummy_d, dummy_e2);
  else ql_lanes<1>(q, dummy_d, dummy_e2);
}

#if defined(__x86_64__) && (defined(__GNUC__) || defined(__clang__))
#define LODE_HAS_AVX2_KERNEL 1
[[gnu::target("avx2")]] void ql_lanes_avx2(QlState* q, int groups, double* dummy_d, double* dummy_e2) {
  if (groups == 2) ql_lanes<2>(q, dummy_d, dummy_e2);
  else ql_lanes<1>(q, dummy_d, dummy_e2);
}
bool has_avx2() {
  static const bool avx2 = __builtin_cpu_supports("avx2");  // a fact of the machine, fixed at first use
  return avx2;
}
#endif

}  // namespace

bool tridiagonal_eigenvalues_lanes(QlState* states, int count, bool vector_instructions) {
  if (count != 4 && count != 8) return tridiagonal_eigenvalues_many(states, count);
  Index n = 0;
  for (int t = 0; t < count; ++t) n = std::max(n, states[t].n);
  std::vector<double> dummy_d(static_cast<std::size_t>(n + 1), 1.0), dummy_e2(static_cast<std::size_t>(n + 1), 0.0);
#ifdef LODE_HAS_AVX2_KERNEL
  if (vector_instructions && has_avx2()) ql_lanes_avx2(states, count / 4, dummy_d.data(), dummy_e2.data());
  else ql_lanes_portable(states, count / 4, dummy_d.data(), dummy_e2.data());
#else
  (void)vector_instructions;  // only the portable form here
  ql_lanes_portable(states, count / 4, dummy_d.data(), dummy_e2.data());
#endif
  for (int t = 0; t < count; ++t)
    if (states[t].failed) return false;
  return true;
}

bool tridiagonal_eigenvalues_many(QlState* states, int count) {
  QlState* active[8];
  int n = 0;
  for (int t = 0; t < count && t < 8; ++t)
    if (states[t].next_sweep()) active[n++] = &states[t];
  while (n > 0) {
    bool has[4] = {true, true, true, true};
    const int now = std::min(n, 4);
    switch (now) {
      case 1: lockstep<1>(active, has); break;
      case 2: lockstep<2>(active, has); break;
      case 3: lockstep<3>(active, has); break;
      default: lockstep<4>(active, has); break;
    }
    int kept = 0;
    for (int t = 0; t < now; ++t)
      if (has[t]) active[kept++] = active[t];
    for (int t = now; t < n; ++t) active[kept++] = active[t];
    n = kept;
  }
  for (int t = 0; t < count; ++t)
    if (states[t].failed) return false;
  return true;
}

namespace {


// The kernel, inlined into one function per instruction set. a: n x n lower triangles, column-major,
// four lanes per element; diag (n), sub (n - 1): outputs; v, w: scratch (n).
[[gnu::always_inline]] inline void tridiagonalise_lanes(double* a_data, Index n, double* diag_data, double* sub_data,
                                                        double* v_data, double* w_data) {
  Lanes* a = reinterpret_cast<Lanes*>(a_data);
  Lanes* diag = reinterpret_cast<Lanes*>(diag_data);
  Lanes* sub = reinterpret_cast<Lanes*>(sub_data);
  Lanes* v = reinterpret_cast<Lanes*>(v_data);
  Lanes* w = reinterpret_cast<Lanes*>(w_data);
  const Lanes zero = {0.0, 0.0, 0.0, 0.0};
  for (Index i = 0; i + 1 < n; ++i) {
    const Index rs = n - i - 1;  // size of the trailing block
    Lanes* x = a + i * n + i + 1;  // column i below the diagonal
    diag[i] = a[i * n + i];
    Lanes tail = zero;
    for (Index r = 1; r < rs; ++r) tail += x[r] * x[r];
    // The Householder reflection I - tau v v' (v_0 = 1) taking x to beta e_1, lane by lane.
    Lanes beta, tau, scale;
    for (int l = 0; l < 4; ++l) {
      const double c0 = x[0][l], t = tail[l];
      if (t <= std::numeric_limits<double>::min()) {
        beta[l] = c0, tau[l] = 0.0, scale[l] = 0.0;
      } else {
        double b = std::sqrt(c0 * c0 + t);
        if (c0 >= 0.0) b = -b;
        beta[l] = b, tau[l] = (b - c0) / b, scale[l] = 1.0 / (c0 - b);
      }
    }
    sub[i] = beta;
    v[0] = Lanes{1.0, 1.0, 1.0, 1.0};
    for (Index r = 1; r < rs; ++r) v[r] = x[r] * scale;
    // w = tau S v, S the trailing block (its lower triangle), then w -= (tau/2)(w'v) v.
    Lanes* s = a + (i + 1) * n + i + 1;
    for (Index r = 0; r < rs; ++r) w[r] = zero;
    for (Index j = 0; j < rs; ++j) {
      const Lanes* cj = s + j * n;
      const Lanes vj = v[j];
      Lanes t = zero;
      w[j] += cj[j] * vj;
      for (Index r = j + 1; r < rs; ++r) {
        w[r] += cj[r] * vj;
        t += cj[r] * v[r];
      }
      w[j] += t;
    }
    Lanes wv = zero;
    for (Index r = 0; r < rs; ++r) {
      w[r] *= tau;
      wv += w[r] * v[r];
    }
    const Lanes alpha = Lanes{-0.5, -0.5, -0.5, -0.5} * tau * wv;
    for (Index r = 0; r < rs; ++r) w[r] += alpha * v[r];
    // S -= v w' + w v'
    for (Index j = 0; j < rs; ++j) {
      Lanes* cj = s + j * n;
      const Lanes vj = v[j], wj = w[j];
      for (Index r = j; r < rs; ++r) cj[r] -= v[r] * wj + w[r] * vj;
    }
  }
  diag[n - 1] = a[(n - 1) * n + n - 1];
}

void tridiagonalise_portable(double* a, Index n, double* diag, double* sub, double* v, double* w) {
  tridiagonalise_lanes(a, n, diag, sub, v, w);
}

#ifdef LODE_HAS_AVX2_KERNEL
[[gnu::target("avx2")]] void tridiagonalise_avx2(double* a, Index n, double* diag, double* sub, double* v, double* w) {
  tridiagonalise_lanes(a, n, diag, sub, v, w);
}
#endif

}  // namespace

TridiagonalLanes::TridiagonalLanes(Index n)
    : n_(n),
      a_(static_cast<std::size_t>(n * n * lanes), 0.0),
      diag_(static_cast<std::size_t>(n * lanes)),
      sub_(static_cast<std::size_t>(n * lanes)),
      v_(static_cast<std::size_t>(n * lanes)),
      w_(static_cast<std::size_t>(n * lanes)) {}

void TridiagonalLanes::run(bool vector_instructions) {
  (void)vector_instructions;  // unused where there is only the portable form
  if (n_ < 1) return;
#ifdef LODE_HAS_AVX2_KERNEL
  if (vector_instructions && has_avx2()) {
    tridiagonalise_avx2(a_.data(), n_, diag_.data(), sub_.data(), v_.data(), w_.data());
    return;
  }
#endif
  tridiagonalise_portable(a_.data(), n_, diag_.data(), sub_.data(), v_.data(), w_.data());
}

void TridiagonalLanes::extract(int lane, double* diag, double* sub2) const {
  for (Index i = 0; i < n_; ++i) diag[i] = diag_[static_cast<std::size_t>(i * lanes + lane)];
  for (Index i = 0; i + 1 < n_; ++i) {
    const double e = sub_[static_cast<std::size_t>(i * lanes + lane)];
    sub2[i] = e * e;
  }
  sub2[n_ - 1] = 0.0;
}

bool LeadingEigen::compute(const Matrix& symmetric, Index k) {
  const Index n = symmetric.rows();
  k = std::clamp<Index>(k, 0, n);
  if (n >= 3 && fast(symmetric, k)) return true;
  Eigen::SelfAdjointEigenSolver<Matrix> es(symmetric);
  if (es.info() != Eigen::Success) return false;
  values_ = es.eigenvalues().reverse();
  vectors_ = es.eigenvectors().rowwise().reverse().leftCols(k);
  return true;
}

bool LeadingEigen::fast(const Matrix& symmetric, Index k) {
  const Index n = symmetric.rows();
  tri_.compute(symmetric);
  diag_ = tri_.diagonal();
  sub_ = tri_.subDiagonal();
  values_ = diag_;
  e2_.resize(n);
  e2_.head(n - 1) = sub_.cwiseAbs2();
  e2_(n - 1) = 0.0;
  if (!tridiagonal_eigenvalues(values_.data(), e2_.data(), n, 50)) return false;
  std::sort(values_.data(), values_.data() + n, std::greater<double>());
  if (!values_.allFinite()) return false;
  if (k == 0) {
    vectors_.resize(n, 0);
    return true;
  }
  if (!inverse_iteration(k)) return false;
  vectors_ = tri_.matrixQ() * x_;
  return vectors_.allFinite();
}

// Inverse iteration on the tridiagonal matrix T (diag_, sub_) for the k largest eigenvalues, as in
// LAPACK's dstein: the shift is the computed eigenvalue (moved apart from an equal neighbour by
// 10 eps |T|), T - shift I is factorised by Gaussian elimination with partial pivoting (tiny pivots
// replaced by eps |T|), a pseudo-random start vector is solved against it until the growth shows
// convergence, then twice more; vectors whose eigenvalues lie within 1e-3 |T| of each other are
// orthogonalised against the earlier ones of their cluster after every solve.
bool LeadingEigen::inverse_iteration(Index k) {
  const Index n = diag_.size();
  constexpr double eps = std::numeric_limits<double>::epsilon();
  double norm = 0.0;  // the 1-norm of T
  for (Index i = 0; i < n; ++i) {
    const double left = i > 0 ? std::abs(sub_(i - 1)) : 0.0, right = i + 1 < n ? std::abs(sub_(i)) : 0.0;
    norm = std::max(norm, std::abs(diag_(i)) + left + right);
  }
  if (!(norm > 0.0)) norm = 1.0;
  const double pertol = 10.0 * eps * norm, ortol = 1e-3 * norm, tiny = eps * norm;
  const double converged_growth = std::sqrt(0.1 / static_cast<double>(n)) / (static_cast<double>(n) * eps * norm);
  constexpr int max_iterations = 5, extra = 2;
  const auto un = static_cast<std::size_t>(n);
  u0_.resize(un);
  u1_.resize(un);
  u2_.resize(un);
  mult_.resize(un);
  rhs_.resize(un);
  swapped_.resize(un);
  x_.resize(n, k);
  RandomEngine engine = random_stream(0x1eadULL, static_cast<std::uint64_t>(n));  // fixed: the result is deterministic
  Index cluster_start = 0;
  double shift = 0.0;
  for (Index j = 0; j < k; ++j) {
    double sigma = values_(j);
    if (j > 0) {
      if (values_(j - 1) - values_(j) > ortol) cluster_start = j;
      if (shift - sigma < pertol) sigma = shift - pertol;
    }
    shift = sigma;
    // Factorise T - sigma I = P L U: U with two superdiagonals (u1, u2), multipliers mult, row swaps.
    double pivot = diag_(0) - sigma, s1 = n > 1 ? sub_(0) : 0.0;
    for (Index i = 0; i + 1 < n; ++i) {
      const auto ui = static_cast<std::size_t>(i);
      const double below = sub_(i), next_diag = diag_(i + 1) - sigma, next_sup = i + 2 < n ? sub_(i + 1) : 0.0;
      if (std::abs(pivot) >= std::abs(below)) {
        if (pivot == 0.0) pivot = tiny;
        const double m = below / pivot;
        u0_[ui] = pivot, u1_[ui] = s1, u2_[ui] = 0.0, mult_[ui] = m, swapped_[ui] = 0;
        pivot = next_diag - m * s1;
        s1 = next_sup;
      } else {
        const double m = pivot / below;
        u0_[ui] = below, u1_[ui] = next_diag, u2_[ui] = next_sup, mult_[ui] = m, swapped_[ui] = 1;
        pivot = s1 - m * next_diag;
        s1 = -m * next_sup;
      }
    }
    u0_[un - 1] = pivot;
    for (auto& u : u0_)
      if (std::abs(u) < tiny) u = u < 0.0 ? -tiny : tiny;

    double* x = rhs_.data();
    for (Index i = 0; i < n; ++i) x[i] = 2.0 * open_uniform(engine) - 1.0;
    int after = -1;  // iterations left once converged
    for (int it = 0; it < max_iterations + extra; ++it) {
      // Scale the right-hand side to unit 1-norm, solve, measure the growth.
      double sum = 0.0;
      for (Index i = 0; i < n; ++i) sum += std::abs(x[i]);
      if (!(sum > 0.0) || !std::isfinite(sum)) return false;
      for (Index i = 0; i < n; ++i) x[i] /= sum;
      for (Index i = 0; i + 1 < n; ++i) {
        const auto ui = static_cast<std::size_t>(i);
        if (swapped_[ui]) std::swap(x[i], x[i + 1]);
        x[i + 1] -= mult_[ui] * x[i];
      }
      x[n - 1] /= u0_[un - 1];
      if (n > 1) x[n - 2] = (x[n - 2] - u1_[un - 2] * x[n - 1]) / u0_[un - 2];
      for (Index i = n - 3; i >= 0; --i) {
        const auto ui = static_cast<std::size_t>(i);
        x[i] = (x[i] - u1_[ui] * x[i + 1] - u2_[ui] * x[i + 2]) / u0_[ui];
      }
      // Against the earlier vectors of the cluster (modified Gram-Schmidt).
      Eigen::Map<Vector> xv(x, n);
      for (Index c = cluster_start; c < j; ++c) xv -= x_.col(c).dot(xv) * x_.col(c);
      const double growth = xv.cwiseAbs().maxCoeff();
      if (!std::isfinite(growth)) return false;
      const double len = xv.norm();
      if (!(len > 0.0)) return false;
      xv /= len;
      if (after < 0 && growth >= converged_growth) after = extra;
      if (after >= 0 && after-- == 0) break;
      if (it + 1 == max_iterations + extra && after < 0) return false;
    }
    x_.col(j) = Eigen::Map<Vector>(x, n);
  }
  return true;
}

}  // namespace lode::detail
