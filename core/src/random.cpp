#include "lode/random.hpp"

namespace lode {

std::uint64_t mix_seed(std::uint64_t x) noexcept {
  x += 0x9e3779b97f4a7c15ULL;
  x = (x ^ (x >> 30)) * 0xbf58476d1ce4e5b9ULL;
  x = (x ^ (x >> 27)) * 0x94d049bb133111ebULL;
  return x ^ (x >> 31);
}

RandomEngine random_stream(std::uint64_t seed, std::uint64_t stream) noexcept {
  std::seed_seq seq{static_cast<std::uint32_t>(mix_seed(seed)), static_cast<std::uint32_t>(mix_seed(seed) >> 32),
                    static_cast<std::uint32_t>(mix_seed(stream ^ 0x5851f42d4c957f2dULL)),
                    static_cast<std::uint32_t>(mix_seed(stream ^ 0x5851f42d4c957f2dULL) >> 32)};
  return RandomEngine(seq);
}

Matrix standard_normal_matrix(Index rows, Index cols, RandomEngine& engine) {
  std::normal_distribution<double> normal(0.0, 1.0);
  Matrix m(rows, cols);
  for (Index j = 0; j < cols; ++j)
    for (Index i = 0; i < rows; ++i) m(i, j) = normal(engine);
  return m;
}

Matrix random_orthogonal(Index size, RandomEngine& engine) {
  const Matrix g = standard_normal_matrix(size, size, engine);
  Eigen::HouseholderQR<Matrix> qr(g);
  Matrix q = qr.householderQ();
  const Matrix r = qr.matrixQR().triangularView<Eigen::Upper>();
  for (Index j = 0; j < size; ++j)
    if (r(j, j) < 0) q.col(j) = -q.col(j);
  return q;
}

}  // namespace lode
