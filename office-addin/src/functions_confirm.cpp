// The compute functions of the confirmatory cells: the restricted (pattern) fit by maximum likelihood
// (LODE.PATTERNLOADINGS, LODE.PATTERNFIT) and split-half replication (LODE.HALVES). UNO-free; the
// data argument, the correlation and the fit family's arguments come from functions_shared.hpp.
#include "functions.hpp"

#include "functions_shared.hpp"

#include <algorithm>
#include <cmath>
#include <string>
#include <utility>
#include <vector>

namespace lode::addin {
namespace {

// ---------------------------------------------------------------------------------------------
// The pattern argument
// ---------------------------------------------------------------------------------------------

// Items x factors of 0/1, row-major, read from the `pattern` argument: either a block of 0 and 1
// (empty and text cells count as 0: the item is not on that factor), or one column of item-to-factor
// assignments (whole numbers 1 to k; 0 or empty: on no factor, which the C ABI refuses by name).
struct Pattern {
  std::vector<double> values;
  std::int64_t items = 0, factors = 0;
};

Pattern read_pattern(const Arg& a, std::size_t items) {
  if (a.kind != Arg::Kind::grid || a.grid.empty() || a.grid.number_cells == 0)
    throw CellError(Failure::bad_argument,
                    "'pattern' must be a range: one row per item, either 0/1 with one column per factor or one "
                    "column giving each item's factor (1, 2, ...)");
  const Grid& g = a.grid;
  if (g.rows != items)
    throw CellError(Failure::bad_argument, "'pattern' has " + std::to_string(g.rows) + " rows but the data have " +
                                               std::to_string(items) + " items; it needs one row per item");
  bool assignments = false;
  double largest = 0.0;
  for (double v : g.values) {
    if (std::isnan(v)) continue;
    if (!(v >= 0.0) || v != std::floor(v) || v > static_cast<double>(kMaxFactors))
      throw CellError(Failure::bad_argument, "'pattern' holds " + std::to_string(v) +
                                                 "; it takes 0 and 1 (one column per factor) or factor numbers 1 "
                                                 "to 100 (one column)");
    largest = std::max(largest, v);
  }
  if (largest > 1.0) {
    if (g.cols != 1)
      throw CellError(Failure::bad_argument,
                      "'pattern' with several columns takes only 0 and 1 (1: the item loads on that column's factor)");
    assignments = true;
  }
  Pattern p;
  p.items = static_cast<std::int64_t>(items);
  p.factors = assignments ? static_cast<std::int64_t>(largest) : static_cast<std::int64_t>(g.cols);
  p.values.assign(items * static_cast<std::size_t>(p.factors), 0.0);
  for (std::size_t i = 0; i < items; ++i)
    for (std::size_t c = 0; c < g.cols; ++c) {
      const double v = g.at(i, c);
      if (std::isnan(v) || v == 0.0) continue;
      const std::size_t f = assignments ? static_cast<std::size_t>(v) - 1 : c;
      p.values[i * static_cast<std::size_t>(p.factors) + f] = 1.0;
    }
  return p;
}

// ---------------------------------------------------------------------------------------------
// The restricted fit
// ---------------------------------------------------------------------------------------------

struct PatternFitOutputs {
  Matrix loadings, loadings_se, phi, uniquenesses;
  std::vector<std::pair<std::string, double>> statistics;  // LODE.PATTERNFIT's rows
  bool converged = true;
  std::string convergence_note;
  double heywood = 0.0;
};

std::shared_ptr<const PatternFitOutputs> run_pattern_fit(const lode_correlation* corr, const Pattern& pattern) {
  lode_restricted_fit* raw = nullptr;
  check(lode_restricted_fit_compute(corr, pattern.values.data(), pattern.items, pattern.factors, pattern.factors, 1,
                                    nullptr, &raw),
        "restricted fit");
  auto fit = shared_handle<lode_restricted_fit, lode_restricted_fit_free>(raw);
  const lode_restricted_fit* f = fit.get();
  const auto value = [f](int key) { return read_value(f, key, lode_restricted_fit_value, "restricted fit"); };
  auto out = std::make_shared<PatternFitOutputs>();
  out->loadings = read_matrix(f, LODE_RESTRICTED_FIT_LOADINGS, lode_restricted_fit_matrix, "restricted fit");
  out->loadings_se = read_matrix(f, LODE_RESTRICTED_FIT_LOADINGS_SE, lode_restricted_fit_matrix, "restricted fit");
  out->phi = read_matrix(f, LODE_RESTRICTED_FIT_FACTOR_CORRELATIONS, lode_restricted_fit_matrix, "restricted fit");
  out->uniquenesses = read_matrix(f, LODE_RESTRICTED_FIT_UNIQUENESSES, lode_restricted_fit_matrix, "restricted fit");
  out->converged = value(LODE_RESTRICTED_FIT_CONVERGED) == 1.0;
  if (!out->converged)
    out->convergence_note = "the restricted fit did not converge in " +
                            std::to_string(static_cast<long long>(value(LODE_RESTRICTED_FIT_ITERATIONS))) + " iterations";
  out->heywood = value(LODE_RESTRICTED_FIT_HEYWOOD_COUNT);
  const std::pair<const char*, int> keys[] = {
      {"chi-square", LODE_RESTRICTED_FIT_CHI_SQUARE}, {"df", LODE_RESTRICTED_FIT_DF},
      {"p", LODE_RESTRICTED_FIT_P_VALUE},             {"CFI", LODE_RESTRICTED_FIT_CFI},
      {"TLI", LODE_RESTRICTED_FIT_TLI},               {"RMSEA", LODE_RESTRICTED_FIT_RMSEA},
      {"RMSEA lower (90%)", LODE_RESTRICTED_FIT_RMSEA_LOWER},
      {"RMSEA upper (90%)", LODE_RESTRICTED_FIT_RMSEA_UPPER},
      {"SRMR", LODE_RESTRICTED_FIT_SRMR},             {"BIC", LODE_RESTRICTED_FIT_BIC}};
  for (const auto& [label, key] : keys) out->statistics.emplace_back(label, value(key));
  return out;
}

// Arguments of both pattern cells: data; pattern; [n_obs].
std::shared_ptr<const PatternFitOutputs> pattern_fit(const Call& call) {
  const Source src = read_source(call, 2);
  const std::size_t items = src.input.grid->cols;
  const Pattern pattern = read_pattern(call.args[1], items);
  auto corr = correlation(call, src.input, src.spec);
  KeyBuilder k("patternfit");
  k.add(source_key(src)).add(static_cast<std::uint64_t>(pattern.factors)).add(pattern.values.data(), pattern.values.size());
  const std::size_t cells = pattern.values.size();
  // lode_restricted_fit_compute reports no progress: it runs on a thread of its own, waited for until the deadline
  return cached_in_time<PatternFitOutputs>(
      call, k.take(), "restricted fit", [corr, pattern] { return run_pattern_fit(corr.get(), pattern); },
      (cells * 2 + src.input.grid->cols * 2) * sizeof(double) + 2048);
}

// ---------------------------------------------------------------------------------------------
// Split-half replication
// ---------------------------------------------------------------------------------------------

struct HalvesOutputs {
  Matrix median, p5, fair, equal, stability;
  double share_same_count = 0.0, used = 0.0, failed = 0.0;
};

std::shared_ptr<const HalvesOutputs> run_halves(const lode_correlation* corr, const FitSpec& spec, std::int64_t splits,
                                                std::int64_t seed, const Deadline& deadline) {
  check_time(deadline, "replication");
  ModelSetup setup(spec);
  if (seed >= 0) setup.ro.seed = static_cast<std::uint64_t>(seed);  // as the Python binding's seed reaches the rotation
  lode_replication_options ro;
  check(lode_replication_options_init(&ro, sizeof ro), "replication options");
  ro.splits = splits;
  if (seed >= 0) ro.seed = static_cast<std::uint64_t>(seed);
  ro.progress = deadline_progress;  // checked after every split
  ro.progress_user = const_cast<Deadline*>(&deadline);
  lode_replication* raw = nullptr;
  check(lode_replication_compute(corr, &setup.fo, &ro, &raw), "replication");
  auto rep = shared_handle<lode_replication, lode_replication_free>(raw);
  const lode_replication* r = rep.get();
  const auto mat = [r](int key) { return read_matrix(r, key, lode_replication_matrix, "replication"); };
  const auto value = [r](int key) { return read_value(r, key, lode_replication_value, "replication"); };
  auto out = std::make_shared<HalvesOutputs>();
  out->median = mat(LODE_REPLICATION_CONGRUENCE_MEDIAN);
  out->p5 = mat(LODE_REPLICATION_CONGRUENCE_P5);
  out->fair = mat(LODE_REPLICATION_SHARE_FAIR);
  out->equal = mat(LODE_REPLICATION_SHARE_EQUAL);
  out->stability = mat(LODE_REPLICATION_ITEM_STABILITY);
  out->share_same_count = value(LODE_REPLICATION_SHARE_SAME_COUNT);
  out->used = value(LODE_REPLICATION_USED);
  out->failed = value(LODE_REPLICATION_FAILED);
  return out;
}

}  // namespace

Output fn_patternloadings(const Call& call) {
  const int part = choice(call.args[3], "part", {"loadings", "se", "uniqueness", "factorcorr"});
  auto f = pattern_fit(call);
  if (!f->converged) throw CellError(Failure::not_converged, f->convergence_note);
  switch (part) {
    case 1: {  // a loading the pattern fixes at 0 has no standard error: its cell is left empty
      Output out = to_output(f->loadings_se);
      for (std::size_t i = 0; i < out.cells.size(); ++i)
        if (std::isnan(f->loadings_se.values[i])) out.cells[i] = OutCell::of(std::string());
      return out;
    }
    case 2: return to_output(f->uniquenesses);
    case 3: return to_output(f->phi);
    default: return to_output(f->loadings);
  }
}

Output fn_patternfit(const Call& call) {
  std::shared_ptr<const PatternFitOutputs> f;
  try {
    f = pattern_fit(call);
  } catch (const CellError& e) {  // LODE.PATTERNFIT says why in its cells, as LODE.FIT does
    return error_row(e);
  }
  LabelRows rows;
  for (const auto& [label, value] : f->statistics) rows.emplace_back(label, statistic_cell(value));
  rows.emplace_back("converged", f->converged ? OutCell::of(1.0) : OutCell::of("no: " + f->convergence_note));
  rows.emplace_back("Heywood cases", OutCell::of(f->heywood));
  return label_value_table(rows);
}

Output fn_halves(const Call& call) {
  const FitRequest req = read_fit_request(call, kNoArg);
  const std::int64_t splits = whole(call.args[4], "splits", 100, 2, kMaxReplicates);
  const std::int64_t seed = seed_arg(call.args[5]);
  const int part = choice(call.args[6], "part", {"factors", "items", "count"});
  auto corr = correlation(call, req.src.input, req.src.spec);
  KeyBuilder k("halves");
  k.add(req.key).add(static_cast<std::uint64_t>(splits)).add(static_cast<std::uint64_t>(seed));
  const std::size_t p = req.src.input.grid->cols;
  auto h = cached_in_time<HalvesOutputs>(
      call, k.take(), "replication",
      [corr, spec = req.spec, splits, seed, deadline = call.deadline] {
        return run_halves(corr.get(), spec, splits, seed, deadline);
      },
      (p + 4 * static_cast<std::size_t>(req.spec.factors)) * sizeof(double) + 1024);
  if (part == 1) return to_output(h->stability);
  if (part == 2) {
    Output out = Output::table(1, 2);
    out.at(0, 0) = OutCell::of(h->share_same_count);
    out.at(0, 1) = OutCell::of(h->used);
    return out;
  }
  Matrix table;
  table.rows = h->median.rows;
  table.cols = 4;
  for (std::int64_t f = 0; f < table.rows; ++f) {
    const auto i = static_cast<std::size_t>(f);
    table.values.insert(table.values.end(), {h->median.values[i], h->p5.values[i], h->fair.values[i], h->equal.values[i]});
  }
  return to_output(table);
}

}  // namespace lode::addin
