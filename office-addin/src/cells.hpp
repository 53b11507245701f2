// What a cell function receives and returns, free of UNO types: the component converts UNO values
// into these at the boundary, so everything behind it is plain C++ over the C ABI.
#pragma once

#include <chrono>
#include <cmath>
#include <cstddef>
#include <exception>
#include <limits>
#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace lode::addin {

inline constexpr double kMissing = std::numeric_limits<double>::quiet_NaN();

// A range as it came from the sheet: rows x cols, row-major. Empty and text cells are missing (NaN).
struct Grid {
  std::size_t rows = 0;
  std::size_t cols = 0;
  std::vector<double> values;       // NaN where the cell is empty or holds text
  std::vector<std::string> header;  // item names when the first row held only text (that row is then dropped)
  std::size_t number_cells = 0;     // cells that held a number
  // The cells that held text (below a header row): (index into values, the text trimmed). Few in
  // answers; a column of group labels reads its labels from here.
  std::vector<std::pair<std::size_t, std::string>> texts;

  double at(std::size_t r, std::size_t c) const { return values[r * cols + c]; }
  bool empty() const { return rows == 0 || cols == 0; }
};

// One argument of a cell function. An optional argument left out (or an empty cell) is `missing`.
struct Arg {
  enum class Kind { missing, number, text, grid };
  Kind kind = Kind::missing;
  double number = 0.0;
  std::string text;
  Grid grid;
};

// How a failure shows in the cell. Every C ABI status maps to one of these (see errors.cpp and the
// README's table of cell functions).
enum class Failure {
  bad_argument,   // Err:502 "Invalid argument": malformed arguments, unusable data
  not_converged,  // Err:523 "The calculation does not converge"
  not_computable, // #NUM!: the data allow no answer (matrix not positive definite, too many factors)
  too_large,      // Err:502 as well: the input exceeds the add-in's size limits
  internal,       // #VALUE!: a defect in Lode (or out of memory)
};

class CellError : public std::exception {
 public:
  CellError(Failure failure, std::string message) : failure_(failure), message_(std::move(message)) {}
  Failure failure() const noexcept { return failure_; }
  const char* what() const noexcept override { return message_.c_str(); }

 private:
  Failure failure_;
  std::string message_;
};

// One cell of a result: a number, a text, or an error of its own (shown as #NUM! etc.).
struct OutCell {
  double number = 0.0;
  std::string text;
  bool is_text = false;
  std::optional<Failure> error;

  static OutCell of(double v) { return OutCell{v, {}, false, std::nullopt}; }
  static OutCell of(std::string t) { return OutCell{0.0, std::move(t), true, std::nullopt}; }
};

// A result: one value (rows = cols = 1 and scalar = true) or an array for an array formula.
struct Output {
  std::size_t rows = 0;
  std::size_t cols = 0;
  bool scalar = false;
  std::vector<OutCell> cells;

  static Output number(double v) { return Output{1, 1, true, {OutCell::of(v)}}; }
  static Output table(std::size_t rows, std::size_t cols) { return Output{rows, cols, false, std::vector<OutCell>(rows * cols)}; }
  OutCell& at(std::size_t r, std::size_t c) { return cells[r * cols + c]; }
};

// The time one formula may compute (README: "Cell functions", time limit). One Deadline is set when
// the formula starts and every stage of its computation checks it: the C ABI's long calls through
// their progress callback (deadline_progress), the add-in before each stage it starts.
inline constexpr std::chrono::seconds kTimeLimit{30};
struct Deadline {
  std::chrono::steady_clock::time_point until = std::chrono::steady_clock::now() + kTimeLimit;
  bool passed() const { return std::chrono::steady_clock::now() > until; }
};

// Calc's code for each failure as a NaN payload (formula/errorcodes.hxx): cells of an array result
// and scalar results carry it. Err:502 and Err:523 are raised as exceptions instead.
double error_value(Failure failure);

// The cell failure and message of an exception caught at the add-in's boundary: a CellError as it
// says, lack of memory as too large an input, anything else as an internal failure.
std::pair<Failure, std::string> failure_of(const std::exception_ptr& e);

}  // namespace lode::addin
