#include "lode/random.hpp"

#include <cmath>

namespace lode {

std::uint64_t mix_seed(std::uint64_t x) noexcept {
  x += 0x9e3779b97f4a7c15ULL;
  x = (x ^ (x >> 30)) * 0xbf58476d1ce4e5b9ULL;
  x = (x ^ (x >> 27)) * 0x94d049bb133111ebULL;
  return x ^ (x >> 31);
}

RandomEngine random_stream(std::uint64_t seed, std::uint64_t stream) noexcept {
  // Feistel rounds: (seed, stream) -> (s0, s1) is invertible (stream = s1 ^ mix(s0 ^ k1), then
  // seed = s0 ^ mix(stream ^ k0)), so no two units or seeds share a starting state.
  const std::uint64_t s0 = seed ^ mix_seed(stream ^ 0x5851f42d4c957f2dULL);
  const std::uint64_t s1 = stream ^ mix_seed(s0 ^ 0x14057b7ef767814fULL);
  return RandomEngine(s0, s1, mix_seed(s0 ^ 0xd1b54a32d192ed03ULL), mix_seed(s1 ^ 0x8cb92ba72f3d8dd7ULL));
}

namespace {

// Ziggurat tables for 256 layers of equal area v; x[1] = r starts the tail (Marsaglia & Tsang 2000,
// Table 1 constants for the normal density exp(-x^2/2)). Built once (thread-safe static).
struct ZigguratTables {
  static constexpr int layers = 256;
  static constexpr double r = 3.6541528853610088;  // start of the tail
  static constexpr double v = 4.92867323399e-3;    // area of each layer
  double x[layers + 1];
  double ratio[layers];
  ZigguratTables() {
    double f = std::exp(-0.5 * r * r);
    x[0] = v / f;
    x[1] = r;
    x[layers] = 0.0;
    for (int i = 2; i < layers; ++i) {
      x[i] = std::sqrt(-2.0 * std::log(v / x[i - 1] + f));
      f = std::exp(-0.5 * x[i] * x[i]);
    }
    for (int i = 0; i < layers; ++i) ratio[i] = x[i + 1] / x[i];
  }
};

const ZigguratTables& ziggurat() {
  static const ZigguratTables tables;
  return tables;
}

double ziggurat_slow(RandomEngine& engine, const ZigguratTables& t, int i, double u) noexcept {
  for (;;) {
    if (i == 0) {  // the tail beyond r (Marsaglia 1964)
      double a, b;
      do {
        a = -std::log(open_uniform(engine)) / ZigguratTables::r;
        b = -std::log(open_uniform(engine));
      } while (b + b < a * a);
      return u < 0.0 ? -(ZigguratTables::r + a) : ZigguratTables::r + a;
    }
    const double z = u * t.x[i];
    const double f0 = std::exp(-0.5 * (t.x[i] * t.x[i] - z * z));
    const double f1 = std::exp(-0.5 * (t.x[i + 1] * t.x[i + 1] - z * z));
    if (f1 + open_uniform(engine) * (f0 - f1) < 1.0) return z;
    const std::uint64_t bits = engine();
    i = static_cast<int>(bits & 0xffU);
    u = 2.0 * (static_cast<double>(bits >> 11) * 0x1.0p-53) - 1.0;
    if (std::abs(u) < t.ratio[i]) return u * t.x[i];
  }
}

}  // namespace

double ziggurat_normal(RandomEngine& engine) noexcept {
  const ZigguratTables& t = ziggurat();
  const std::uint64_t bits = engine();
  const int i = static_cast<int>(bits & 0xffU);
  const double u = 2.0 * (static_cast<double>(bits >> 11) * 0x1.0p-53) - 1.0;  // [-1, 1)
  if (std::abs(u) < t.ratio[i]) return u * t.x[i];  // about 99% of draws end here
  return ziggurat_slow(engine, t, i, u);
}

double chi_square_draw(double df, RandomEngine& engine) noexcept {
  double a = 0.5 * df, boost = 1.0;
  if (a < 1.0) {  // Gamma(a) = Gamma(a + 1) * U^(1/a)
    boost = std::pow(open_uniform(engine), 1.0 / a);
    a += 1.0;
  }
  const double d = a - 1.0 / 3.0, c = 1.0 / std::sqrt(9.0 * d);
  for (;;) {
    double x, v;
    do {
      x = ziggurat_normal(engine);
      v = 1.0 + c * x;
    } while (v <= 0.0);
    v = v * v * v;
    const double u = open_uniform(engine);
    const double x2 = x * x;
    if (u < 1.0 - 0.0331 * x2 * x2 || std::log(u) < 0.5 * x2 + d * (1.0 - v + std::log(v)))
      return 2.0 * d * v * boost;
  }
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
