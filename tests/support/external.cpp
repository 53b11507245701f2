#include "support/external.hpp"

#include <fmt/format.h>

#include <array>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <random>
#include <sstream>
#include <stdexcept>

namespace lode::testing {

namespace fs = std::filesystem;

namespace {

struct TempDir {
  fs::path path;
  TempDir() {
    std::random_device rd;
    path = fs::temp_directory_path() / fmt::format("lode-ref-{:x}{:x}", rd(), rd());
    fs::create_directories(path);
  }
  ~TempDir() {
    std::error_code ec;
    fs::remove_all(path, ec);
  }
};

std::string shell_quote(const std::string& s) {
  std::string out = "'";
  for (char c : s) out += c == '\'' ? std::string("'\\''") : std::string(1, c);
  return out + "'";
}

std::string run_command(const std::string& command) {
  std::string output;
  FILE* pipe = popen((command + " 2>&1").c_str(), "r");
  if (!pipe) throw std::runtime_error("could not start: " + command);
  std::array<char, 4096> buffer{};
  while (std::fgets(buffer.data(), static_cast<int>(buffer.size()), pipe)) output += buffer.data();
  const int status = pclose(pipe);
  if (status != 0) throw std::runtime_error(fmt::format("reference command failed ({}):\n{}\n{}", status, command, output));
  return output;
}

Matrices collect(const fs::path& out_dir) {
  Matrices out;
  for (const auto& entry : fs::directory_iterator(out_dir))
    out[entry.path().stem().string()] = read_matrix(entry.path().string());
  return out;
}

}  // namespace

Matrix scalar(double value) { return Matrix::Constant(1, 1, value); }

void write_matrix(const std::string& path, const Matrix& m) {
  std::ofstream f(path);
  f << m.rows() << ' ' << m.cols() << '\n';
  for (Index i = 0; i < m.rows(); ++i) {
    for (Index j = 0; j < m.cols(); ++j) {
      if (j) f << ' ';
      if (std::isnan(m(i, j))) f << "NA";
      else f << fmt::format("{:.17g}", m(i, j));
    }
    f << '\n';
  }
}

Matrix read_matrix(const std::string& path) {
  std::ifstream f(path);
  Index rows = 0, cols = 0;
  if (!(f >> rows >> cols)) throw std::runtime_error("unreadable reference output: " + path);
  Matrix m(rows, cols);
  for (Index i = 0; i < rows; ++i)
    for (Index j = 0; j < cols; ++j) {
      std::string token;
      f >> token;
      if (token == "NA" || token == "nan" || token == "NaN") m(i, j) = std::nan("");
      else if (token == "Inf" || token == "inf") m(i, j) = INFINITY;
      else if (token == "-Inf" || token == "-inf") m(i, j) = -INFINITY;
      else m(i, j) = std::stod(token);
    }
  return m;
}

Matrices run_r(const std::string& script, const Matrices& inputs) {
  TempDir dir;
  const fs::path out_dir = dir.path / "out";
  fs::create_directories(out_dir);
  std::ostringstream prelude;
  prelude << ".lode_read <- function(path) { con <- file(path, 'r'); on.exit(close(con));\n"
             "  dims <- scan(con, nlines = 1, quiet = TRUE);\n"
             "  v <- scan(con, quiet = TRUE, na.strings = 'NA');\n"
             "  matrix(v, nrow = dims[1], ncol = dims[2], byrow = TRUE) }\n"
             "emit <- function(name, x) { x <- as.matrix(x); storage.mode(x) <- 'double';\n"
          << "  path <- file.path(\"" << out_dir.string() << "\", paste0(name, '.txt'));\n"
             "  cat(nrow(x), ncol(x), '\\n', file = path);\n"
             "  write.table(formatC(x, digits = 17, format = 'g'), path, append = TRUE, quote = FALSE,\n"
             "              row.names = FALSE, col.names = FALSE) }\n";
  for (const auto& [name, m] : inputs) {
    const fs::path p = dir.path / (name + ".in");
    write_matrix(p.string(), m);
    prelude << name << " <- .lode_read(\"" << p.string() << "\")\n";
  }
  const fs::path script_path = dir.path / "script.R";
  std::ofstream(script_path) << prelude.str() << script << '\n';
  run_command("Rscript --vanilla " + shell_quote(script_path.string()));
  return collect(out_dir);
}

Matrices run_python(const std::string& script, const Matrices& inputs) {
  TempDir dir;
  const fs::path out_dir = dir.path / "out";
  fs::create_directories(out_dir);
  std::ostringstream prelude;
  prelude << "import numpy as np\n"
             "def _lode_read(path):\n"
             "    with open(path) as f:\n"
             "        r, c = (int(t) for t in f.readline().split())\n"
             "        v = [float('nan') if t == 'NA' else float(t) for t in f.read().split()]\n"
             "    return np.array(v, dtype=float).reshape(r, c)\n"
             "def emit(name, x):\n"
             "    x = np.asarray(x, dtype=float)\n"
             "    x = x.reshape(-1, 1) if x.ndim < 2 else x\n"
             "    with open(" << "r'" << out_dir.string() << "/' + name + '.txt', 'w') as f:\n"
             "        f.write(f'{x.shape[0]} {x.shape[1]}\\n')\n"
             "        for row in x:\n"
             "            f.write(' '.join('NA' if np.isnan(v) else repr(float(v)) for v in row) + '\\n')\n";
  for (const auto& [name, m] : inputs) {
    const fs::path p = dir.path / (name + ".in");
    write_matrix(p.string(), m);
    prelude << name << " = _lode_read(r'" << p.string() << "')\n";
  }
  const fs::path script_path = dir.path / "script.py";
  std::ofstream(script_path) << prelude.str() << script << '\n';
  run_command("/usr/bin/python3 " + shell_quote(script_path.string()));
  return collect(out_dir);
}

double max_abs_diff_up_to_column_sign(const Matrix& actual, const Matrix& expected) {
  if (actual.rows() != expected.rows() || actual.cols() != expected.cols()) return INFINITY;
  double worst = 0.0;
  for (Index j = 0; j < actual.cols(); ++j) {
    const double same = (actual.col(j) - expected.col(j)).cwiseAbs().maxCoeff();
    const double flipped = (actual.col(j) + expected.col(j)).cwiseAbs().maxCoeff();
    worst = std::max(worst, std::min(same, flipped));
  }
  return worst;
}

}  // namespace lode::testing
