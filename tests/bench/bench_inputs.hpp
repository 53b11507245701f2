// The benchmark inputs: binary files of doubles (column-major, with a small header) written once by
// make_inputs.py and read by Lode's benchmarks, numpy and R alike, so every tool sees the same numbers.
#pragma once

#include "lode/common.hpp"

#include <string>

// Each suite measures an API only once it has landed in the core: these say which headers exist.
#define LODE_BENCH_HAS_EXTRACTION __has_include("lode/extraction.hpp")
#define LODE_BENCH_HAS_ROTATION __has_include("lode/rotation.hpp")
#define LODE_BENCH_HAS_FIT __has_include("lode/fit.hpp")
#define LODE_BENCH_HAS_FACTOR_COUNT __has_include("lode/factor_count.hpp")
#define LODE_BENCH_HAS_POLYCHORIC __has_include("lode/polychoric.hpp")
#define LODE_BENCH_HAS_BOOTSTRAP __has_include("lode/bootstrap.hpp")

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
