#include "functions.hpp"

#include "capi.hpp"

#include <algorithm>
#include <cctype>
#include <chrono>
#include <cmath>
#include <initializer_list>
#include <string>

namespace lode::addin {

// ---------------------------------------------------------------------------------------------
// The C ABI's statuses as cell results
// ---------------------------------------------------------------------------------------------

Failure failure_of_status(int status) noexcept {
  switch (status) {
    case LODE_E_INVALID_ARGUMENT:
    case LODE_E_INSUFFICIENT_DATA:
    case LODE_E_TOO_MANY_FACTORS:
      return Failure::bad_argument;  // Err:502
    case LODE_E_NOT_POSITIVE_DEFINITE:
      return Failure::not_computable;  // #NUM!
    case LODE_E_NOT_CONVERGED:
      return Failure::not_converged;  // Err:523
    case LODE_E_CANCELLED:  // only the add-in's own time limit cancels
    case LODE_E_NOMEM:
      return Failure::too_large;  // Err:502
    default:  // LODE_E_INTERNAL, LODE_E_BUFFER_TOO_SMALL, LODE_E_UNSUPPORTED, unknown
      return Failure::internal;  // #VALUE!
  }
}

void check(int status, const char* what) {
  if (status == LODE_OK) return;
  if (status == LODE_E_CANCELLED)
    throw CellError(Failure::too_large, std::string(what) + ": stopped after " + std::to_string(kTimeLimit.count()) +
                                            " s, the time limit of a cell function; use fewer rows, items or "
                                            "replicates");
  const char* detail = lode_last_error();
  throw CellError(failure_of_status(status),
                  std::string(what) + ": " + (detail && *detail ? detail : lode_status_name(status)));
}

Output to_output(const Matrix& m) {
  Output out = Output::table(static_cast<std::size_t>(m.rows), static_cast<std::size_t>(m.cols));
  for (std::size_t i = 0; i < out.cells.size(); ++i) {
    const double v = m.values[i];
    out.cells[i] = OutCell::of(v);
    if (!std::isfinite(v)) out.cells[i].error = Failure::not_computable;
  }
  return out;
}

int deadline_progress(void* user, std::int64_t, std::int64_t) {
  return std::chrono::steady_clock::now() > static_cast<const Deadline*>(user)->until ? 1 : 0;
}

namespace {

// ---------------------------------------------------------------------------------------------
// Reading arguments
// ---------------------------------------------------------------------------------------------

std::string lower(std::string s) {
  std::transform(s.begin(), s.end(), s.begin(), [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
  return s;
}

std::string join(std::initializer_list<const char*> words) {
  std::string s;
  for (const char* w : words) s += (s.empty() ? "\"" : ", \"") + std::string(w) + "\"";
  return s;
}

// A text option: one of `choices` (case-insensitive), or the first choice when left out.
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

// A whole number in [lo, hi], or `fallback` when left out.
[[maybe_unused]] std::int64_t whole(const Arg& a, const char* name, std::int64_t fallback, std::int64_t lo, std::int64_t hi) {
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

// The data argument: raw responses, or a correlation matrix (square, symmetric, ones on the
// diagonal, every cell a number in [-1, 1]).
struct Input {
  const Grid* grid = nullptr;
  bool is_correlation = false;
};

Input read_input(const Arg& a, const char* name) {
  if (a.kind != Arg::Kind::grid || a.grid.empty() || a.grid.number_cells == 0)
    throw CellError(Failure::bad_argument, std::string("'") + name + "' holds no numbers");
  const Grid& g = a.grid;
  Input in{&g, false};
  if (g.rows != g.cols || g.number_cells != g.rows * g.cols || g.rows < 2) return in;
  constexpr double tol = 1e-9;  // typed or rounded values are symmetric to far better than this
  for (std::size_t i = 0; i < g.rows; ++i) {
    if (std::fabs(g.at(i, i) - 1.0) > tol) return in;
    for (std::size_t j = 0; j < i; ++j)
      if (std::fabs(g.at(i, j) - g.at(j, i)) > tol || std::fabs(g.at(i, j)) > 1.0) return in;
  }
  in.is_correlation = true;
  return in;
}

KeyBuilder& add_grid(KeyBuilder& k, const Grid& g) {
  k.add(static_cast<std::uint64_t>(g.rows)).add(static_cast<std::uint64_t>(g.cols));
  return k.add(g.values.data(), g.values.size());
}

DataHandle make_data(const Input& in, std::int64_t n_obs) {
  const Grid& g = *in.grid;
  lode_data* d = nullptr;
  if (in.is_correlation) {
    check(lode_data_from_correlation(g.values.data(), static_cast<std::int64_t>(g.rows), static_cast<std::int64_t>(g.cols),
                                     1, n_obs, &d),
          "correlation matrix");
  } else {
    check(lode_data_from_raw(g.values.data(), static_cast<std::int64_t>(g.rows), static_cast<std::int64_t>(g.cols),
                             static_cast<std::int64_t>(g.cols), 1, &d),
          "data");
  }
  DataHandle data(d);
  if (!g.header.empty()) {
    std::vector<const char*> names;
    for (const std::string& s : g.header) names.push_back(s.c_str());
    check(lode_data_set_item_names(d, names.data(), static_cast<std::int64_t>(names.size())), "item names");
  }
  return data;
}

struct CorrelationSpec {
  int kind = LODE_PEARSON;
  int missing = LODE_PAIRWISE;
  std::int64_t n_obs = 0;  // for a correlation matrix given as data
};

// The correlation of the input with these options, computed once per distinct input.
std::shared_ptr<const lode_correlation> correlation(const Call& call, const Input& in, const CorrelationSpec& spec) {
  KeyBuilder k("correlation");
  add_grid(k, *in.grid)
      .add(static_cast<std::uint64_t>(in.is_correlation))
      .add(static_cast<std::uint64_t>(spec.kind))
      .add(static_cast<std::uint64_t>(spec.missing))
      .add(static_cast<std::uint64_t>(spec.n_obs));
  const std::size_t items = in.grid->cols;
  return call.cache.get_or_compute<lode_correlation>(
      k.take(),
      [&]() -> std::shared_ptr<const lode_correlation> {
        DataHandle data = make_data(in, spec.n_obs);
        lode_correlation_options opts;
        check(lode_correlation_options_init(&opts, sizeof opts), "correlation options");
        opts.kind = spec.kind;
        opts.missing = spec.missing;
        Deadline deadline;
        opts.progress = deadline_progress;
        opts.progress_user = &deadline;
        lode_correlation* c = nullptr;
        check(lode_correlate(data.get(), &opts, &c), "correlation");
        return std::shared_ptr<const lode_correlation>(c, [](const lode_correlation* p) {
          lode_correlation_free(const_cast<lode_correlation*>(p));
        });
      },
      items * items * 2 * sizeof(double) + 4096);
}

Matrix correlation_matrix(const lode_correlation* c, int key, const char* what) {
  return read_matrix(c, key, lode_correlation_matrix, what);
}

}  // namespace

// ---------------------------------------------------------------------------------------------
// The functions
// ---------------------------------------------------------------------------------------------

Output fn_version(const Call&) {
  const lode_version_info* v = lode_version();
  Output out = Output::table(1, 1);
  out.scalar = true;
  out.cells[0] = OutCell::of("Lode " + std::string(v->string) + " (C ABI " + std::to_string(v->abi_major) + "." +
                             std::to_string(v->abi_minor) + ")");
  return out;
}

Output fn_corr(const Call& call) {
  const Input in = read_input(call.args[0], "data");
  CorrelationSpec spec;
  const int kinds[] = {LODE_PEARSON, LODE_SPEARMAN, LODE_POLYCHORIC};
  spec.kind = kinds[choice(call.args[1], "kind", {"pearson", "spearman", "polychoric"})];
  spec.missing = choice(call.args[2], "missing", {"pairwise", "listwise"}) == 0 ? LODE_PAIRWISE : LODE_LISTWISE;
  auto c = correlation(call, in, spec);
  return to_output(correlation_matrix(c.get(), LODE_CORRELATION_MATRIX, "correlation matrix"));
}

Output fn_eigen(const Call& call) {
  const Input in = read_input(call.args[0], "data");
  const bool reduced = flag(call.args[1], "reduced", false);
  auto c = correlation(call, in, CorrelationSpec{});
  return to_output(correlation_matrix(c.get(), reduced ? LODE_CORRELATION_REDUCED_EIGENVALUES : LODE_CORRELATION_EIGENVALUES,
                                      "eigenvalues"));
}

}  // namespace lode::addin
