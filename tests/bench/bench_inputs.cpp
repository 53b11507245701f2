#include "bench_inputs.hpp"

#include <cstdint>
#include <cstdlib>
#include <fstream>
#include <stdexcept>

namespace lode::bench {

std::string inputs_folder() {
  const char* dir = std::getenv("LODE_BENCH_INPUTS");
  if (!dir || !*dir) throw std::runtime_error("LODE_BENCH_INPUTS is not set: run the benchmarks through ./lode bench");
  return dir;
}

Matrix read_input(const std::string& name) {
  const std::string path = inputs_folder() + "/" + name + ".f64";
  std::ifstream f(path, std::ios::binary);
  if (!f) throw std::runtime_error("missing benchmark input " + path);
  std::int64_t rows = 0, cols = 0;
  f.read(reinterpret_cast<char*>(&rows), sizeof rows);
  f.read(reinterpret_cast<char*>(&cols), sizeof cols);
  Matrix m(rows, cols);  // stored column-major, read in place: no second copy of large data
  f.read(reinterpret_cast<char*>(m.data()), static_cast<std::streamsize>(sizeof(double) * rows * cols));
  if (!f) throw std::runtime_error("truncated benchmark input " + path);
  return m;
}

}  // namespace lode::bench
