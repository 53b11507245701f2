// Seeded random streams. Every random computation in Lode takes a seed; unit i of a computation
// (a replicate, a random start) draws from random_stream(seed, i), so results are reproducible and
// independent of how the units are spread over threads.
#pragma once

#include "lode/common.hpp"

#include <cstdint>
#include <random>

namespace lode {

using RandomEngine = std::mt19937_64;

// SplitMix64 (Steele, Lea & Flood 2014) finaliser, used to derive well-separated stream seeds.
std::uint64_t mix_seed(std::uint64_t x) noexcept;

// The engine for unit `stream` of a computation seeded with `seed`.
RandomEngine random_stream(std::uint64_t seed, std::uint64_t stream) noexcept;

// A matrix of independent standard normal draws.
Matrix standard_normal_matrix(Index rows, Index cols, RandomEngine& engine);

// A uniformly distributed (Haar) random orthogonal matrix (QR of a Gaussian matrix with the signs of
// R's diagonal folded in; Mezzadri 2007).
Matrix random_orthogonal(Index size, RandomEngine& engine);

}  // namespace lode
