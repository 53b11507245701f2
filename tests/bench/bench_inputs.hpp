// The benchmark inputs: binary files of doubles (row-major, with a small header) written once by
// make_inputs.py and read by Lode's benchmarks, numpy and R alike, so every tool sees the same numbers.
#pragma once

#include "lode/common.hpp"

#include <string>

namespace lode::bench {

// The folder of input files: $LODE_BENCH_INPUTS (./lode bench sets it).
std::string inputs_folder();

// Reads <folder>/<name>.f64: two little-endian int64 (rows, cols), then rows*cols doubles, column-major.
Matrix read_input(const std::string& name);

}  // namespace lode::bench
