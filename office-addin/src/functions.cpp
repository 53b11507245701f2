#include "functions.hpp"
#include "functions_shared.hpp"

#include "defaults.hpp"

#include <algorithm>
#include <cctype>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <initializer_list>
#include <string>

namespace lode::addin {

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
        check_time(call.deadline, "correlation");
        DataHandle data = make_data(in, spec.n_obs);
        lode_correlation_options opts;
        check(lode_correlation_options_init(&opts, sizeof opts), "correlation options");
        opts.kind = spec.kind;
        opts.missing = spec.missing;
        opts.progress = deadline_progress;
        opts.progress_user = const_cast<Deadline*>(&call.deadline);
        lode_correlation* c = nullptr;
        check(lode_correlation_compute(data.get(), &opts, &c), "correlation");
        return std::shared_ptr<const lode_correlation>(c, [](const lode_correlation* p) {
          lode_correlation_free(const_cast<lode_correlation*>(p));
        });
      },
      items * items * 2 * sizeof(double) + 4096);
}

namespace {
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
  const int kinds[] = {LODE_COEFFICIENT_PEARSON, LODE_COEFFICIENT_SPEARMAN, LODE_COEFFICIENT_POLYCHORIC};
  spec.kind = kinds[choice(call.args[1], "kind", {"pearson", "spearman", "polychoric"})];
  const int rules[] = {LODE_MISSING_PAIRWISE, LODE_MISSING_LISTWISE, LODE_MISSING_EM};
  spec.missing = rules[choice(call.args[2], "missing", {"pairwise", "listwise", "em"})];
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

// ---------------------------------------------------------------------------------------------
// Factor analyses shared by many cells. The C ABI is reached only in the run_* functions; the
// cells read their outputs, which the cache keeps per distinct (input values, options).
// ---------------------------------------------------------------------------------------------

// An option word left out stands for its default (defaults.hpp: the one set of defaults).
Arg or_default(const Arg& a, const char* word) {
  if (a.kind != Arg::Kind::missing) return a;
  Arg d;
  d.kind = Arg::Kind::text;
  d.text = word;
  return d;
}
// The extraction a cell asks for, as the C ABI's method.
int method_arg(const Arg& a) {
  static constexpr int kMethods[] = {LODE_EXTRACTION_ML, LODE_EXTRACTION_PAF, LODE_EXTRACTION_MINRES};
  return kMethods[choice(or_default(a, defaults::extraction), "method", {"ml", "paf", "minres"})];
}
// The rotation a cell asks for, as the C ABI's method (lode_criterion_from_name).
int rotation_arg(const Arg& a) {
  static constexpr std::initializer_list<const char*> kWords = {"oblimin", "none",    "varimax",   "quartimax",
                                                                "equamax", "promax", "quartimin", "geomin"};
  const Arg word = or_default(a, defaults::rotation);
  int method = LODE_CRITERION_NONE;
  check(lode_criterion_from_name(kWords.begin()[choice(word, "rotation", kWords)], &method), "rotation");
  return method;
}




struct ParallelOutputs {
  Matrix table;  // items x 3: observed, random mean, random percentile
};

std::shared_ptr<const FitOutputs> run_fit(const lode_correlation* corr, const FitSpec& spec, const Deadline& deadline);
std::shared_ptr<const ParallelOutputs> run_parallel(const lode_correlation* corr, std::int64_t replicates,
                                                    double percentile, std::int64_t seed, const Deadline& deadline);
std::int64_t run_nfactors(const lode_correlation* corr, int rule, std::int64_t seed, const Deadline& deadline);
Matrix run_rotate(const Grid& loadings, int rotation, const Arg& parameter);

Source read_source(const Call& call, std::size_t n_obs_index) {
  Source s{read_input(call.args[0], "data"), CorrelationSpec{}};
  if (n_obs_index < call.args.size()) s.spec.n_obs = whole(call.args[n_obs_index], "n_obs", 0, 1, kMaxObservations);
  if (!s.input.is_correlation) s.spec.n_obs = 0;  // raw data: the rows say how many
  return s;
}

std::string source_key(const Source& s) {
  KeyBuilder k("source");
  add_grid(k, *s.input.grid)
      .add(static_cast<std::uint64_t>(s.input.is_correlation))
      .add(static_cast<std::uint64_t>(s.spec.n_obs));
  return k.take();
}

std::int64_t cached_nfactors(const Call& call, const Source& src, int rule, std::int64_t seed) {
  auto corr = correlation(call, src.input, src.spec);
  KeyBuilder k("nfactors");
  k.add(source_key(src)).add(static_cast<std::uint64_t>(rule)).add(static_cast<std::uint64_t>(seed));
  return *call.cache.get_or_compute<std::int64_t>(
      k.take(), [&] { return std::make_shared<const std::int64_t>(run_nfactors(corr.get(), rule, seed, call.deadline)); }, 64);
}


// Arguments of the fit family: data; [factors]; [method]; [rotation]; then n_obs at `n_obs_index`
// (kNoArg for functions without it: LODE.SCORES takes raw data only).
FitRequest read_fit_request(const Call& call, std::size_t n_obs_index) {
  FitRequest req{read_source(call, n_obs_index), FitSpec{}, {}};
  req.spec.factors = static_cast<int>(whole(call.args[1], "factors", 0, 0, kMaxFactors));
  req.spec.method = method_arg(call.args[2]);
  req.spec.rotation = rotation_arg(call.args[3]);
  if (req.spec.factors == 0) req.spec.factors = static_cast<int>(cached_nfactors(call, req.src, 0, -1));
  if (req.spec.factors == 0)
    throw CellError(Failure::bad_argument, "parallel analysis suggests no common factor in these data");
  KeyBuilder k("fit");
  k.add(source_key(req.src))
      .add(static_cast<std::uint64_t>(req.spec.factors))
      .add(static_cast<std::uint64_t>(req.spec.method))
      .add(static_cast<std::uint64_t>(req.spec.rotation));
  req.key = k.take();
  return req;
}

std::shared_ptr<const FitOutputs> fit(const Call& call, const FitRequest& req) {
  auto corr = correlation(call, req.src.input, req.src.spec);
  const std::size_t p = req.src.input.grid->cols;
  const std::size_t k = static_cast<std::size_t>(req.spec.factors);
  // The outputs copied out of the model, plus the model itself (its matrices, about 4 p x p).
  // lode_model_compute reports no progress inside one extraction, one rotation start or the fit statistics
  return cached_in_time<FitOutputs>(
      call, req.key, "factor analysis",
      [corr, spec = req.spec, deadline = call.deadline] { return run_fit(corr.get(), spec, deadline); }, (p * p * 6 + p * k * 6) * sizeof(double) + 8192);
}

std::shared_ptr<const FitOutputs> fit(const Call& call) { return fit(call, read_fit_request(call, 4)); }

std::shared_ptr<const FitOutputs> converged_fit(const Call& call, const FitRequest& req) {
  auto f = fit(call, req);
  if (!f->converged) throw CellError(Failure::not_converged, f->convergence_note);
  return f;
}

std::shared_ptr<const FitOutputs> converged_fit(const Call& call) { return converged_fit(call, read_fit_request(call, 4)); }

std::shared_ptr<const lode_factorability> factorability(const Call& call, std::size_t n_obs_index) {
  const Source src = read_source(call, n_obs_index);
  auto corr = correlation(call, src.input, src.spec);
  KeyBuilder k("factorability");
  k.add(source_key(src));
  return cached_in_time<lode_factorability>(
      call, k.take(), "factorability",
      [corr] {
        lode_factorability* f = nullptr;
        check(lode_factorability_compute(corr.get(), &f), "factorability");
        return shared_handle<lode_factorability, lode_factorability_free>(f);
      },
      src.input.grid->cols * 2 * sizeof(double) + 1024);
}

double factorability_value(const lode_factorability* f, int key, const char* what) {
  double v = 0.0;
  check(lode_factorability_value(f, key, &v), what);
  return v;
}


double model_value(const lode_model* m, int key, const char* what) {
  double v = 0.0;
  check(lode_model_value(m, key, &v), what);
  return v;
}

ModelSetup::ModelSetup(const FitSpec& spec) {
  check(lode_rotation_options_init(&ro, sizeof ro), "rotation options");
  ro.method = spec.rotation;
  check(lode_model_options_init(&fo, sizeof fo), "fit options");
  fo.factors = spec.factors;
  fo.method = spec.method;
  fo.rotation = &ro;
}

std::shared_ptr<const FitOutputs> run_fit(const lode_correlation* corr, const FitSpec& spec, const Deadline& deadline) {
  check_time(deadline, "factor analysis");
  ModelSetup setup(spec);
  lode_model_options& fo = setup.fo;
  fo.progress = deadline_progress;  // checked before and after the extraction and at every rotation start
  fo.progress_user = const_cast<Deadline*>(&deadline);
  lode_model* raw = nullptr;
  check(lode_model_compute(corr, &fo, &raw), "factor analysis");
  auto model = shared_handle<lode_model, lode_model_free>(raw);
  const lode_model* m = model.get();
  auto out = std::make_shared<FitOutputs>();
  out->model = model;
  out->factors = static_cast<int>(model_value(m, LODE_MODEL_FACTORS, "factors"));
  out->pattern = read_matrix(m, LODE_MODEL_LOADINGS, lode_model_matrix, "loadings");
  out->structure = read_matrix(m, LODE_MODEL_STRUCTURE, lode_model_matrix, "structure");
  out->phi = read_matrix(m, LODE_MODEL_FACTOR_CORRELATIONS, lode_model_matrix, "factor correlations");
  out->uniquenesses = read_matrix(m, LODE_MODEL_UNIQUENESSES, lode_model_matrix, "uniquenesses");
  out->communalities = read_matrix(m, LODE_MODEL_COMMUNALITIES, lode_model_matrix, "communalities");
  out->residuals = read_matrix(m, LODE_MODEL_RESIDUALS, lode_model_matrix, "residuals");
  out->heywood = static_cast<std::int64_t>(model_value(m, LODE_MODEL_HEYWOOD_COUNT, "Heywood cases"));
  const bool extraction_ok = model_value(m, LODE_MODEL_CONVERGED, "convergence") == 1.0;
  const bool rotation_ok = model_value(m, LODE_MODEL_ROTATION_CONVERGED, "rotation convergence") == 1.0;
  out->converged = extraction_ok && rotation_ok;
  if (!extraction_ok)
    out->convergence_note = "the extraction did not converge in " +
                            std::to_string(static_cast<long long>(model_value(m, LODE_MODEL_ITERATIONS, "iterations"))) +
                            " iterations";
  else if (!rotation_ok)
    out->convergence_note = "the rotation did not converge";
  // Statistics: RMSR needs no sample size; the others do and report why when they cannot be had.
  const std::pair<const char*, int> keys[] = {
      {"chi-square", LODE_MODEL_CHI_SQUARE}, {"df", LODE_MODEL_DF},   {"p", LODE_MODEL_P_VALUE},
      {"RMSEA", LODE_MODEL_RMSEA},           {"RMSEA lower (90%)", LODE_MODEL_RMSEA_LOWER},
      {"RMSEA upper (90%)", LODE_MODEL_RMSEA_UPPER}, {"TLI", LODE_MODEL_TLI}, {"BIC", LODE_MODEL_BIC}};
  for (const auto& [label, key] : keys) {
    double v = 0.0;
    const int status = lode_model_value(m, key, &v);
    if (status != LODE_OK) {
      out->statistics_error = lode_error_message();
      if (out->statistics_error.empty()) out->statistics_error = lode_status_name(status);
      out->statistics.clear();
      break;
    }
    out->statistics.emplace_back(label, v);
  }
  out->statistics.emplace_back("RMSR", model_value(m, LODE_MODEL_RMSR, "RMSR"));
  return out;
}

std::shared_ptr<const lode_factor_count> run_count(const lode_correlation* corr, std::int64_t replicates,
                                                   double percentile, std::int64_t seed, const Deadline& deadline) {
  check_time(deadline, "factor count");
  lode_factor_count_options o;
  check(lode_factor_count_options_init(&o, sizeof o), "factor count options");
  if (replicates > 0) o.replicates = replicates;
  if (percentile > 0) o.percentile = percentile;
  if (seed >= 0) o.seed = static_cast<std::uint64_t>(seed);
  o.progress = deadline_progress;
  o.progress_user = const_cast<Deadline*>(&deadline);
  lode_factor_count* raw = nullptr;
  check(lode_factor_count_compute(corr, &o, &raw), "factor count");
  return shared_handle<lode_factor_count, lode_factor_count_free>(raw);
}

std::shared_ptr<const ParallelOutputs> run_parallel(const lode_correlation* corr, std::int64_t replicates,
                                                    double percentile, std::int64_t seed, const Deadline& deadline) {
  auto c = run_count(corr, replicates, percentile, seed, deadline);
  const Matrix observed = read_matrix(c.get(), LODE_FACTOR_COUNT_OBSERVED_PC, lode_factor_count_matrix, "eigenvalues");
  const Matrix mean = read_matrix(c.get(), LODE_FACTOR_COUNT_RANDOM_PC_MEAN, lode_factor_count_matrix, "random eigenvalues");
  const Matrix pct =
      read_matrix(c.get(), LODE_FACTOR_COUNT_RANDOM_PC_PERCENTILE, lode_factor_count_matrix, "random eigenvalues");
  auto out = std::make_shared<ParallelOutputs>();
  out->table.rows = observed.rows;
  out->table.cols = 3;
  for (std::int64_t i = 0; i < observed.rows; ++i) {
    out->table.values.push_back(observed.values[static_cast<std::size_t>(i)]);
    out->table.values.push_back(mean.values[static_cast<std::size_t>(i)]);
    out->table.values.push_back(pct.values[static_cast<std::size_t>(i)]);
  }
  return out;
}

std::int64_t run_nfactors(const lode_correlation* corr, int rule, std::int64_t seed, const Deadline& deadline) {
  auto c = run_count(corr, 0, 0.0, seed, deadline);
  // "parallel" is the library's suggested count (parallel analysis of the reduced-matrix factor eigenvalues
  // against the 95th percentile), the one rule lode_model_compute, the report and Python use when factors is 0.
  const int keys[] = {LODE_FACTOR_COUNT_SUGGESTED, LODE_FACTOR_COUNT_MAP_SQUARED_SUGGESTED, LODE_FACTOR_COUNT_KAISER,
                      LODE_FACTOR_COUNT_EMPIRICAL_KAISER};
  double v = 0.0;
  check(lode_factor_count_value(c.get(), keys[rule], &v), "factor count");
  return static_cast<std::int64_t>(v);
}

Matrix run_rotate(const Grid& loadings, int rotation, const Arg& parameter) {
  lode_rotation_options ro;
  check(lode_rotation_options_init(&ro, sizeof ro), "rotation options");
  ro.method = rotation;
  if (parameter.kind != Arg::Kind::missing) {
    if (parameter.kind != Arg::Kind::number)
      throw CellError(Failure::bad_argument, "'parameter' must be a number");
    switch (ro.method) {
      case LODE_CRITERION_OBLIMIN: ro.gamma = parameter.number; break;
      case LODE_CRITERION_PROMAX: ro.power = parameter.number; break;
      case LODE_CRITERION_GEOMIN: ro.epsilon = parameter.number; break;
      default: break;  // the other rotations take no parameter
    }
  }
  lode_rotation* raw = nullptr;
  check(lode_rotation_compute(loadings.values.data(), static_cast<std::int64_t>(loadings.rows),
                    static_cast<std::int64_t>(loadings.cols), static_cast<std::int64_t>(loadings.cols), 1, &ro, &raw),
        "rotation");
  auto r = shared_handle<lode_rotation, lode_rotation_free>(raw);
  double converged = 0.0;
  check(lode_rotation_value(r.get(), LODE_ROTATION_CONVERGED, &converged), "rotation");
  if (converged != 1.0) throw CellError(Failure::not_converged, "the rotation did not converge");
  return read_matrix(r.get(), LODE_ROTATION_PATTERN, lode_rotation_matrix, "rotated loadings");
}

std::int64_t seed_arg(const Arg& a) { return whole(a, "seed", -1, 0, std::int64_t{1} << 52); }

Output fn_kmo(const Call& call) {
  return Output::number(factorability_value(factorability(call, kNoArg).get(), LODE_FACTORABILITY_KMO, "KMO"));
}

Output fn_msa(const Call& call) {
  auto f = factorability(call, kNoArg);
  return to_output(read_matrix(f.get(), LODE_FACTORABILITY_MSA, lode_factorability_matrix, "MSA"));
}

Output fn_sphericity(const Call& call) {
  auto f = factorability(call, 1);
  Output out = Output::table(1, 3);
  out.at(0, 0) = OutCell::of(factorability_value(f.get(), LODE_FACTORABILITY_BARTLETT_CHI_SQUARE, "Bartlett's test"));
  out.at(0, 1) = OutCell::of(factorability_value(f.get(), LODE_FACTORABILITY_BARTLETT_DF, "Bartlett's test"));
  out.at(0, 2) = OutCell::of(factorability_value(f.get(), LODE_FACTORABILITY_BARTLETT_P_VALUE, "Bartlett's test"));
  return out;
}

Output fn_parallel(const Call& call) {
  const Source src = read_source(call, kNoArg);
  const std::int64_t replicates = whole(call.args[1], "replicates", 500, 10, kMaxReplicates);
  double percentile = 95.0;
  if (call.args[2].kind != Arg::Kind::missing) {
    if (call.args[2].kind != Arg::Kind::number || !(call.args[2].number > 0.0 && call.args[2].number < 100.0))
      throw CellError(Failure::bad_argument, "'percentile' must be a number between 0 and 100, e.g. 95");
    percentile = call.args[2].number;
  }
  const std::int64_t seed = seed_arg(call.args[3]);
  auto corr = correlation(call, src.input, src.spec);
  KeyBuilder k("parallel");
  k.add(source_key(src)).add(static_cast<std::uint64_t>(replicates)).add(percentile).add(static_cast<std::uint64_t>(seed));
  auto pa = call.cache.get_or_compute<ParallelOutputs>(
      k.take(), [&] { return run_parallel(corr.get(), replicates, percentile, seed, call.deadline); },
      src.input.grid->cols * 3 * sizeof(double) + 256);
  return to_output(pa->table);
}

Output fn_factorcount(const Call& call) {
  const Source src = read_source(call, kNoArg);
  const int rule = choice(call.args[1], "rule", {"parallel", "map", "kaiser", "ekc"});
  return Output::number(static_cast<double>(cached_nfactors(call, src, rule, seed_arg(call.args[2]))));
}

Output fn_loadings(const Call& call) { return to_output(converged_fit(call)->pattern); }
Output fn_structure(const Call& call) { return to_output(converged_fit(call)->structure); }
Output fn_uniqueness(const Call& call) { return to_output(converged_fit(call)->uniquenesses); }
Output fn_communality(const Call& call) { return to_output(converged_fit(call)->communalities); }
Output fn_factorcorr(const Call& call) { return to_output(converged_fit(call)->phi); }
Output fn_residuals(const Call& call) { return to_output(converged_fit(call)->residuals); }

OutCell statistic_cell(double value) {
  return std::isfinite(value) ? OutCell::of(value) : OutCell::of(std::string("not defined"));
}

Output label_value_table(const LabelRows& rows) {
  Output out = Output::table(rows.size(), 2);
  for (std::size_t r = 0; r < rows.size(); ++r) {
    out.at(r, 0) = OutCell::of(rows[r].first);
    out.at(r, 1) = rows[r].second;
  }
  return out;
}

Output error_row(const CellError& e) { return label_value_table({{"error", OutCell::of(std::string(e.what()))}}); }

Output fn_fit(const Call& call) {
  std::shared_ptr<const FitOutputs> f;
  try {
    f = fit(call);
  } catch (const CellError& e) {  // LODE.FIT says why in its cells
    return error_row(e);
  }
  LabelRows rows;
  rows.emplace_back("factors", OutCell::of(static_cast<double>(f->factors)));
  for (const auto& [label, value] : f->statistics) rows.emplace_back(label, statistic_cell(value));
  if (!f->statistics_error.empty()) rows.emplace_back("tests", OutCell::of(f->statistics_error));
  rows.emplace_back("converged", f->converged ? OutCell::of(1.0) : OutCell::of("no: " + f->convergence_note));
  rows.emplace_back("Heywood cases", OutCell::of(static_cast<double>(f->heywood)));
  return label_value_table(rows);
}

Output fn_rotate(const Call& call) {
  const Arg& a = call.args[0];
  if (a.kind != Arg::Kind::grid || a.grid.empty() || a.grid.number_cells != a.grid.rows * a.grid.cols)
    throw CellError(Failure::bad_argument, "'loadings' must be a block of numbers (items in rows, factors in columns)");
  // `rotation` left out or empty: oblimin, the default of every function that rotates.
  check_time(call.deadline, "rotation");
  const int rotation = rotation_arg(call.args[1]);
  // lode_rotation_compute reports no progress: it runs on a thread of its own, waited for until the deadline
  auto rotated = within_time<Matrix>(call.deadline, "rotation", [loadings = a.grid, rotation, parameter = call.args[2]] {
    return std::make_shared<const Matrix>(run_rotate(loadings, rotation, parameter));
  });
  return to_output(*rotated);
}

// ---------------------------------------------------------------------------------------------
// Scores, reliability, congruence
// ---------------------------------------------------------------------------------------------
namespace {

const int kScoreMethods[] = {LODE_ESTIMATOR_REGRESSION, LODE_ESTIMATOR_BARTLETT, LODE_ESTIMATOR_CORRELATION_PRESERVING};

// Scores of the rows the model was fitted to (lode_scores_compute with data = NULL), with the C ABI's rule
// for rows with missing items (LODE_GAPS_FROM_ANSWERED: a row that answered at least half of the
// items is scored from the items it answered; the others are left NaN, shown as #NUM!).
std::shared_ptr<const Matrix> run_scores(const lode_model* model, int method) {
  lode_scores_options so;
  check(lode_scores_options_init(&so, sizeof so), "score options");
  so.method = kScoreMethods[method];
  lode_scores* raw = nullptr;
  check(lode_scores_compute(model, nullptr, &so, &raw), "factor scores");
  auto s = shared_handle<lode_scores, lode_scores_free>(raw);
  return std::make_shared<const Matrix>(read_matrix(s.get(), LODE_SCORES_VALUES, lode_scores_matrix, "factor scores"));
}

// One scale's items as raw answers (ALPHA) or as answers or a correlation matrix (OMEGA).
Input read_scale(const Arg& a) {
  const Input in = read_input(a, "items");
  if (in.grid->cols < 2) throw CellError(Failure::bad_argument, "'items' must hold at least 2 items (columns)");
  return in;
}

struct AlphaOutputs {
  double alpha = 0.0, standardized = 0.0, mean_inter_item = 0.0, rows_used = 0.0;
};

std::shared_ptr<const AlphaOutputs> run_alpha(const Input& in) {
  DataHandle data = make_data(in, 0);
  lode_reliability* raw = nullptr;
  check(lode_reliability_compute_alpha(data.get(), &raw), "Cronbach's alpha");
  auto r = shared_handle<lode_reliability, lode_reliability_free>(raw);
  auto value = [&](int key) {
    double v = 0.0;
    check(lode_reliability_value(r.get(), key, &v), "Cronbach's alpha");
    return v;
  };
  auto out = std::make_shared<AlphaOutputs>();
  out->alpha = value(LODE_RELIABILITY_ALPHA);
  out->standardized = value(LODE_RELIABILITY_ALPHA_STANDARDIZED);
  out->mean_inter_item = value(LODE_RELIABILITY_ALPHA_MEAN_INTER_ITEM);
  out->rows_used = value(LODE_RELIABILITY_ALPHA_ROWS_USED);
  return out;
}

struct OmegaOutputs {
  double omega = 0.0;
  bool converged = true;
};

std::shared_ptr<const OmegaOutputs> run_omega(const lode_correlation* corr) {
  lode_reliability* raw = nullptr;
  check(lode_reliability_compute_scale_omega(corr, nullptr, &raw), "McDonald's omega");  // NULL: maximum likelihood, defaults
  auto r = shared_handle<lode_reliability, lode_reliability_free>(raw);
  auto out = std::make_shared<OmegaOutputs>();
  const Matrix omega = read_matrix(r.get(), LODE_RELIABILITY_OMEGA, lode_reliability_matrix, "McDonald's omega");
  if (omega.values.size() != 1) throw CellError(Failure::internal, "McDonald's omega: expected one scale");
  out->omega = omega.values[0];
  double converged = 0.0;
  check(lode_reliability_value(r.get(), LODE_RELIABILITY_OMEGA_CONVERGED, &converged), "McDonald's omega");
  out->converged = converged == 1.0;
  return out;
}

const Grid& loading_block(const Arg& a, const char* name) {
  if (a.kind != Arg::Kind::grid || a.grid.empty() || a.grid.number_cells != a.grid.rows * a.grid.cols)
    throw CellError(Failure::bad_argument,
                    std::string("'") + name + "' must be a block of numbers (items in rows, factors in columns)");
  if (a.grid.rows < 2)
    throw CellError(Failure::bad_argument, std::string("'") + name +
                                               "' has one item (row); congruence over a single item is always 1 "
                                               "or -1 and compares nothing");
  return a.grid;
}

}  // namespace

Output fn_scores(const Call& call) {
  // Scores need the answers themselves: refuse a correlation matrix before any fit is attempted.
  if (read_input(call.args[0], "data").is_correlation)
    throw CellError(Failure::bad_argument,
                    "factor scores need the respondents' answers (respondents in rows), not a correlation matrix");
  // "tenberge": the former word for correlation_preserving (README, "Former names")
  const int method =
      choice(call.args[4], "score_method", {"regression", "bartlett", "correlation_preserving"}, {"tenberge", 2});
  const FitRequest req = read_fit_request(call, kNoArg);
  auto f = converged_fit(call, req);
  KeyBuilder k("scores");
  k.add(req.key).add(static_cast<std::uint64_t>(method));
  auto scores = cached_in_time<Matrix>(
      call, k.take(), "factor scores", [model = f->model, method] { return run_scores(model.get(), method); },
      req.src.input.grid->rows * static_cast<std::size_t>(f->factors) * sizeof(double) + 1024);
  return to_output(*scores);
}

Output fn_alpha(const Call& call) {
  const Input in = read_scale(call.args[0]);
  if (in.is_correlation)
    throw CellError(Failure::bad_argument,
                    "Cronbach's alpha needs the respondents' answers (respondents in rows), not a correlation matrix");
  KeyBuilder k("alpha");
  add_grid(k, *in.grid);
  auto a = call.cache.get_or_compute<AlphaOutputs>(k.take(), [&] {
    check_time(call.deadline, "Cronbach's alpha");
    return run_alpha(in);
  }, sizeof(AlphaOutputs) + 256);
  Output out = Output::table(1, 4);
  out.at(0, 0) = OutCell::of(a->alpha);
  out.at(0, 1) = OutCell::of(a->standardized);
  out.at(0, 2) = OutCell::of(a->mean_inter_item);
  out.at(0, 3) = OutCell::of(a->rows_used);
  for (auto& c : out.cells)
    if (!std::isfinite(c.number)) c.error = Failure::not_computable;
  return out;
}

Output fn_omega(const Call& call) {
  const Source src{read_scale(call.args[0]), CorrelationSpec{}};
  auto corr = correlation(call, src.input, src.spec);
  KeyBuilder k("omega");
  k.add(source_key(src));
  // a one-factor fit without progress reports
  auto o = cached_in_time<OmegaOutputs>(
      call, k.take(), "McDonald's omega", [corr] { return run_omega(corr.get()); }, sizeof(OmegaOutputs) + 256);
  if (!o->converged) throw CellError(Failure::not_converged, "the one-factor fit behind omega did not converge");
  Output out = Output::number(o->omega);
  if (!std::isfinite(o->omega)) out.cells[0].error = Failure::not_computable;
  return out;
}

Output fn_congruence(const Call& call) {
  const Grid& a = loading_block(call.args[0], "loadings_a");
  const Grid& b = loading_block(call.args[1], "loadings_b");
  if (a.rows != b.rows || a.cols != b.cols)
    throw CellError(Failure::bad_argument, "'loadings_a' is " + std::to_string(a.rows) + " x " + std::to_string(a.cols) +
                                               " but 'loadings_b' is " + std::to_string(b.rows) + " x " +
                                               std::to_string(b.cols) + "; both need the same items and factors");
  const auto items = static_cast<std::int64_t>(a.rows), factors = static_cast<std::int64_t>(a.cols);
  check_time(call.deadline, "congruence");
  lode_comparison* raw = nullptr;
  check(lode_comparison_compute(a.values.data(), b.values.data(), items, factors, factors, 1, factors, 1, &raw),
        "congruence");
  auto c = shared_handle<lode_comparison, lode_comparison_free>(raw);
  const Matrix matched =
      read_matrix(c.get(), LODE_COMPARISON_MATCHED_CONGRUENCE, lode_comparison_matrix, "congruence");
  const Matrix order = read_matrix(c.get(), LODE_COMPARISON_ORDER, lode_comparison_matrix, "congruence");
  const Matrix signs = read_matrix(c.get(), LODE_COMPARISON_SIGNS, lode_comparison_matrix, "congruence");
  Matrix table;
  table.rows = factors;
  table.cols = 3;
  for (std::int64_t j = 0; j < factors; ++j) {
    const auto i = static_cast<std::size_t>(j);
    table.values.push_back(matched.values[i]);
    table.values.push_back(order.values[i] + 1.0);  // the matched column of loadings_b, counted from 1
    table.values.push_back(signs.values[i]);
  }
  return to_output(table);
}

}  // namespace lode::addin
