// Seeded random streams. Every random computation in Lode takes a seed; unit i of a computation
// (a replicate, a random start) draws from random_stream(seed, i), so results are reproducible and
// independent of how the units are spread over threads.
#pragma once

#include "lode/common.hpp"

#include <cstdint>
#include <limits>
#include <random>

namespace lode {

// The generator behind every stream: xoshiro256++ (Blackman & Vigna, "Scrambled linear pseudorandom
// number generators", ACM Transactions on Mathematical Software 47(4), 2021; the authors' reference C
// code of 2019, prng.di.unimi.it). 256 bits of state, period 2^256 - 1, 64-bit outputs, no
// systematic failures in BigCrush or PractRand (as reported by its authors). A stream is set up with a
// handful of arithmetic operations (random_stream below), so a computation may open one per unit of
// work, however small the unit. Satisfies std::uniform_random_bit_generator, so the standard
// distributions and std::shuffle accept it.
class Xoshiro256pp {
 public:
  using result_type = std::uint64_t;
  static constexpr result_type min() noexcept { return 0; }
  static constexpr result_type max() noexcept { return std::numeric_limits<result_type>::max(); }

  // The state words as given; an all-zero state (the generator's one fixed point) is replaced by a
  // non-zero one.
  Xoshiro256pp(std::uint64_t s0, std::uint64_t s1, std::uint64_t s2, std::uint64_t s3) noexcept : s_{s0, s1, s2, s3} {
    if ((s0 | s1 | s2 | s3) == 0) s_[0] = 0x9e3779b97f4a7c15ULL;
  }

  result_type operator()() noexcept {
    const std::uint64_t result = rotl(s_[0] + s_[3], 23) + s_[0];
    const std::uint64_t t = s_[1] << 17;
    s_[2] ^= s_[0];
    s_[3] ^= s_[1];
    s_[1] ^= s_[2];
    s_[0] ^= s_[3];
    s_[2] ^= t;
    s_[3] = rotl(s_[3], 45);
    return result;
  }

  void discard(unsigned long long z) noexcept {
    for (; z > 0; --z) (*this)();
  }

  friend bool operator==(const Xoshiro256pp& a, const Xoshiro256pp& b) noexcept {
    return a.s_[0] == b.s_[0] && a.s_[1] == b.s_[1] && a.s_[2] == b.s_[2] && a.s_[3] == b.s_[3];
  }

 private:
  static constexpr std::uint64_t rotl(std::uint64_t x, int k) noexcept { return (x << k) | (x >> (64 - k)); }
  std::uint64_t s_[4];
};

using RandomEngine = Xoshiro256pp;

// The SplitMix64 finaliser (Steele, Lea & Flood 2014, "Fast splittable pseudorandom number
// generators", OOPSLA; the form in Vigna's splitmix64.c): a bijection of 64-bit words that spreads
// nearby inputs far apart; used to derive stream states from seeds.
std::uint64_t mix_seed(std::uint64_t x) noexcept;

// The engine for unit `stream` of a computation seeded with `seed`. The first two state words are a
// two-round Feistel network of (seed, stream) with mix_seed as round function, hence a bijection:
// different (seed, stream) pairs always start from different states. The other two words are mix_seed
// of those (the seeding Blackman & Vigna recommend: state words from SplitMix64 outputs).
RandomEngine random_stream(std::uint64_t seed, std::uint64_t stream) noexcept;

// A double uniform on the open interval (0, 1), from the top 53 bits of one draw.
inline double open_uniform(RandomEngine& engine) noexcept {
  return (static_cast<double>(engine() >> 11) + 0.5) * 0x1.0p-53;
}

// A standard normal draw by the ziggurat method (Marsaglia & Tsang 2000, "The ziggurat method for
// generating random variables", J. Statistical Software 5(8)) with 256 layers, in the double-precision
// form of Doornik (2005, "An improved ziggurat method to generate normal random samples"): the layer
// from the low 8 bits of one 64-bit draw, the abscissa from its top 53 bits; the tail beyond the last
// layer by Marsaglia's (1964) method. Exact (rejection), and several times cheaper than
// std::normal_distribution.
double ziggurat_normal(RandomEngine& engine) noexcept;

// A chi-square draw with `df` > 0 degrees of freedom: twice a Gamma(df / 2) draw by the squeeze and
// rejection method of Marsaglia & Tsang (2000, "A simple method for generating gamma variables", ACM
// TOMS 26(3)) on ziggurat normals; shape a < 1 through Gamma(a + 1) U^(1/a) (the same paper, section 6).
double chi_square_draw(double df, RandomEngine& engine) noexcept;

// A matrix of independent standard normal draws.
Matrix standard_normal_matrix(Index rows, Index cols, RandomEngine& engine);

// A uniformly distributed (Haar) random orthogonal matrix (QR of a Gaussian matrix with the signs of
// R's diagonal folded in; Mezzadri 2007).
Matrix random_orthogonal(Index size, RandomEngine& engine);

}  // namespace lode
