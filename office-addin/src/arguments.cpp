#include "arguments.hpp"

#include <cstdint>
#include <cstring>
#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdio>
#include <new>
#include <string>

namespace lode::addin {
namespace {

std::string lower(std::string s) {
  std::transform(s.begin(), s.end(), s.begin(), [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
  return s;
}

std::string join(std::initializer_list<const char*> words) {
  std::string s;
  for (const char* w : words) s += (s.empty() ? "\"" : ", \"") + std::string(w) + "\"";
  return s;
}

std::string cell_name(std::size_t r, std::size_t c) {
  return "row " + std::to_string(r + 1) + ", column " + std::to_string(c + 1);
}

std::string number_text(double v) {
  char buf[32];
  std::snprintf(buf, sizeof buf, "%.10g", v);
  return buf;
}

}  // namespace

// A text option: one of `choices` (case-insensitive; arg_from_value has trimmed the white space around
// it, as the C ABI's name lookups do), or the first choice when left out.
int choice(const Arg& a, const char* name, std::initializer_list<const char*> choices) {
  if (a.kind == Arg::Kind::missing) return 0;
  if (a.kind == Arg::Kind::text) {
    const std::string t = lower(a.text);
    int i = 0;
    for (const char* c : choices) {
      if (t == c) return i;
      ++i;
    }
  }
  throw CellError(Failure::bad_argument, std::string("'") + name + "' must be one of " + join(choices));
}

int choice(const Arg& a, const char* name, std::initializer_list<const char*> choices, FormerWord former) {
  if (a.kind == Arg::Kind::text && lower(a.text) == former.word) return former.index;
  return choice(a, name, choices);
}

// A whole number in [lo, hi], or `fallback` when left out.
std::int64_t whole(const Arg& a, const char* name, std::int64_t fallback, std::int64_t lo, std::int64_t hi) {
  if (a.kind == Arg::Kind::missing) return fallback;
  if (a.kind != Arg::Kind::number || a.number != std::floor(a.number) || a.number < static_cast<double>(lo) ||
      a.number > static_cast<double>(hi))
    throw CellError(Failure::bad_argument, std::string("'") + name + "' must be a whole number from " +
                                               std::to_string(lo) + " to " + std::to_string(hi));
  return static_cast<std::int64_t>(a.number);
}

// A yes/no option: TRUE/FALSE, 1/0, or left out (= fallback).
bool flag(const Arg& a, const char* name, bool fallback) {
  if (a.kind == Arg::Kind::missing) return fallback;
  if (a.kind == Arg::Kind::number && (a.number == 0.0 || a.number == 1.0)) return a.number == 1.0;
  throw CellError(Failure::bad_argument, std::string("'") + name + "' must be TRUE or FALSE (1 or 0)");
}


// How a square block of numbers reads (README, "Using them"): as a correlation matrix when it has
// ones on the diagonal, is symmetric and holds no value outside [-1, 1] off the diagonal; refused as
// "almost a correlation matrix" when it misses exactly one of these three and holds a fraction
// strictly between -1 and 1 off the diagonal (answers coded as whole numbers never do); otherwise as
// answers. Returns the reason for a refusal, empty otherwise; sets `is_correlation`.
std::string classify_square(const Grid& g, bool& is_correlation) {
  constexpr double tol = 1e-9;  // typed or rounded values are symmetric to far better than this
  std::string diagonal, asymmetric, outside;
  bool fraction = false;
  for (std::size_t i = 0; i < g.rows; ++i) {
    if (diagonal.empty() && std::fabs(g.at(i, i) - 1.0) > tol)
      diagonal = "its diagonal holds " + number_text(g.at(i, i)) + " in " + cell_name(i, i) +
                 " (a correlation matrix has 1 on its diagonal)";
    for (std::size_t j = 0; j < g.cols; ++j) {
      if (i == j) continue;
      const double v = g.at(i, j);
      if (std::fabs(v) < 1.0 && v != 0.0) fraction = true;
      if (outside.empty() && std::fabs(v) > 1.0 + tol)
        outside = cell_name(i, j) + " holds " + number_text(v) + " (a correlation lies between -1 and 1)";
      if (j < i && asymmetric.empty() && std::fabs(v - g.at(j, i)) > tol)
        asymmetric = "it is not symmetric: " + cell_name(i, j) + " holds " + number_text(v) + " but " +
                     cell_name(j, i) + " holds " + number_text(g.at(j, i));
    }
  }
  const int missed = !diagonal.empty() + !asymmetric.empty() + !outside.empty();
  is_correlation = missed == 0;
  if (missed != 1 || !fraction) return std::string();
  return "looks like a correlation matrix, but " + (!diagonal.empty() ? diagonal : !asymmetric.empty() ? asymmetric : outside) +
         "; correct it, or give the answers themselves (respondents in rows, more rows than items)";
}

Input read_input(const Arg& a, const char* name) {
  if (a.kind != Arg::Kind::grid || a.grid.empty() || a.grid.number_cells == 0)
    throw CellError(Failure::bad_argument, std::string("'") + name + "' holds no numbers");
  const Grid& g = a.grid;
  Input in{&g, false};
  if (g.rows != g.cols || g.number_cells != g.rows * g.cols || g.rows < 2) return in;
  const std::string problem = classify_square(g, in.is_correlation);
  if (!problem.empty()) throw CellError(Failure::bad_argument, std::string("'") + name + "' " + problem);
  return in;
}

double error_value(Failure failure) {
  // FormulaError codes (LibreOffice formula/errorcodes.hxx): 502 invalid argument, 503 #NUM!,
  // 519 #VALUE!, 523 no convergence. Calc stores an error as a quiet NaN whose low word is the code.
  std::uint32_t code = 519;
  switch (failure) {
    case Failure::bad_argument:
    case Failure::too_large: code = 502; break;
    case Failure::not_converged: code = 523; break;
    case Failure::not_computable: code = 503; break;
    case Failure::internal: code = 519; break;
  }
  const std::uint64_t bits = 0x7FF8000000000000ULL | code;
  double d;
  std::memcpy(&d, &bits, sizeof d);
  return d;
}

std::pair<Failure, std::string> failure_of(const std::exception_ptr& e) {
  try {
    std::rethrow_exception(e);
  } catch (const CellError& c) {
    return {c.failure(), c.what()};
  } catch (const std::bad_alloc&) {
    return {Failure::too_large, "not enough memory for this input"};
  } catch (const std::exception& x) {
    return {Failure::internal, x.what()};
  } catch (...) {
    return {Failure::internal, "unexpected failure"};
  }
}

}  // namespace lode::addin
