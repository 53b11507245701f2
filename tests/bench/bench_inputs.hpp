// The benchmark inputs: binary files of doubles (column-major, with a small header) written once by
// make_inputs.py and read by Lode's benchmarks, numpy and R alike, so every tool sees the same numbers.
#pragma once

#include "lode/common.hpp"

#include <string>

// Each suite measures an API only once it has landed in the core: the generated bench_features.hpp
// defines LODE_BENCH_HAS_<FAMILY> to 1 for each core header that exists (extraction, rotation, fit,
// factor_count, polychoric, bootstrap) and to 0 otherwise.
#include "bench_features.hpp"

namespace lode::bench {

// The folder of input files: $LODE_BENCH_INPUTS (./lode bench sets it).
std::string inputs_folder();

// Reads <folder>/<name>.f64: two little-endian int64 (rows, cols), then rows*cols doubles, column-major.
Matrix read_input(const std::string& name);

// The same input, read once per process and kept, after one full pass over it: on this kind of
// virtual machine the first pass over freshly read memory is several times slower than the next
// ones, and the alternatives, timed as medians of repeated runs on the same array, do not pay it
// either. Each benchmark repetition then times the same warm data.
const Matrix& input(const std::string& name);

}  // namespace lode::bench
