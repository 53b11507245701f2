#include "bench_inputs.hpp"

#include <cstdint>
#include <cstdlib>
#include <fstream>
#include <map>
#include <memory>
#include <mutex>
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

const Matrix& input(const std::string& name) {
  static std::mutex mutex;
  static std::map<std::string, std::unique_ptr<Matrix>> cache;
  std::lock_guard<std::mutex> lock(mutex);
  auto& slot = cache[name];
  if (!slot) {
    slot = std::make_unique<Matrix>(read_input(name));
    volatile double sink = slot->array().isNaN().count();  // one full pass over the data
    (void)sink;
  }
  return *slot;
}

}  // namespace lode::bench
