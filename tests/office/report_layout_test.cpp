// The report's sheet layouts without an office: one real analysis of R's datasets::attitude (30
// departments' ratings of their employer, Chatterjee and Price 1977; read live from R), laid out by
// each layout function, checked for structure and for numbers equal to the C ABI's own results for
// the same options (lode.h called directly here). "complaints" enters reversed (100 - rating), so
// its scale holds a reverse-keyed item.
#include "capi.hpp"
#include "report_analysis.hpp"
#include "option_table.hpp"
#include "report_layout.hpp"
#include "report_run.hpp"
#include "report_text.hpp"

#include "support/external.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <set>

namespace lode::addin::report {
namespace {

const std::vector<std::string> kNames{"rating", "complaints", "privileges", "learning", "raises", "critical", "advance"};

SourceTable attitude_table() {
  const auto r = lode::testing::run_r(R"( emit("x", as.matrix(datasets::attitude)) )", {});
  const auto& x = r.at("x");
  SourceTable t;
  t.rows = static_cast<std::size_t>(x.rows()) + 1;
  t.cols = 1 + kNames.size();  // a department code first (text), then the items
  t.address = "$Ratings.$A$1:$H$31";
  t.sheet_name = "Ratings";
  t.free_columns_right = 5;
  for (std::size_t c = 0; c < t.cols; ++c) t.column_letters.push_back(column_name(c));
  auto text = [](std::string s) { return SourceCell{SourceCell::Kind::text, 0.0, std::move(s)}; };
  t.cells.push_back(text("department"));
  for (const std::string& n : kNames) t.cells.push_back(text(n));
  for (Index i = 0; i < x.rows(); ++i) {
    t.cells.push_back(text("D" + std::to_string(i + 1)));
    for (Index j = 0; j < x.cols(); ++j)
      t.cells.push_back({SourceCell::Kind::number, j == 1 ? 100.0 - x(i, j) : x(i, j), {}});
  }
  return t;
}

Options run_options() {
  Options o;
  o.factors = 2;
  o.extraction = "ml";
  o.rotation = "oblimin";
  o.scores = "regression";
  o.scores_place = "sheet";
  o.bootstrap = 40;
  return o;
}

// The C ABI's results for the same data and options, computed here directly.
struct Reference {
  DataHandle data;
  CorrelationHandle corr;
  Handle<lode_model, lode_model_free> model;
  Matrix R, eig, smc, L, phi, residuals, communalities, uniquenesses;
};

Reference reference(const Analysis& a) {
  Reference ref;
  const auto p = static_cast<std::int64_t>(a.p());
  lode_data* d = nullptr;
  check(lode_data_from_raw(a.items.values.data(), static_cast<std::int64_t>(a.items.rows), p, p, 1, &d), "data");
  ref.data.reset(d);
  lode_correlation* c = nullptr;
  check(lode_correlation_compute(d, nullptr, &c), "correlations");
  ref.corr.reset(c);
  lode_model_options fo;
  lode_model_options_init(&fo, sizeof fo);
  fo.factors = 2;
  fo.method = LODE_EXTRACTION_ML;
  lode_rotation_options ro;
  lode_rotation_options_init(&ro, sizeof ro);
  ro.method = LODE_CRITERION_OBLIMIN;
  ro.seed = a.options.seed;
  fo.rotation = &ro;
  lode_model* m = nullptr;
  check(lode_model_compute(c, &fo, &m), "fit");
  ref.model.reset(m);
  ref.R = read_matrix(c, LODE_CORRELATION_MATRIX, lode_correlation_matrix, "R");
  ref.eig = read_matrix(c, LODE_CORRELATION_EIGENVALUES, lode_correlation_matrix, "eigenvalues");
  ref.smc = read_matrix(c, LODE_CORRELATION_SMC, lode_correlation_matrix, "smc");
  ref.L = read_matrix(m, LODE_MODEL_LOADINGS, lode_model_matrix, "loadings");
  ref.phi = read_matrix(m, LODE_MODEL_FACTOR_CORRELATIONS, lode_model_matrix, "phi");
  ref.residuals = read_matrix(m, LODE_MODEL_RESIDUALS, lode_model_matrix, "residuals");
  ref.communalities = read_matrix(m, LODE_MODEL_COMMUNALITIES, lode_model_matrix, "communalities");
  ref.uniquenesses = read_matrix(m, LODE_MODEL_UNIQUENESSES, lode_model_matrix, "uniquenesses");
  return ref;
}

// One analysis of R's attitude per suite, with the options `make` gives, shared by the suite's tests.
template <Options (*make)()>
class AttitudeAnalysis : public ::testing::Test {
 protected:
  static void SetUpTestSuite() {
    source_ = new SourceTable(attitude_table());
    analysis_ = new Analysis(analyse(*source_, make(), "2026-01-02 03:04", {}));
  }
  static void TearDownTestSuite() {
    delete analysis_;
    delete source_;
  }
  static const Analysis& a() { return *analysis_; }
  static inline SourceTable* source_ = nullptr;
  static inline Analysis* analysis_ = nullptr;
};
using ReportLayout = AttitudeAnalysis<run_options>;

// The first row whose first cell reads `text` (at or after row `from`); -1 when none.
long find_row(const Sheet& s, const std::string& text, std::size_t from = 0) {
  for (std::size_t r = from; r < s.rows.size(); ++r)
    if (!s.rows[r].empty() && s.rows[r][0].kind == Cell::Kind::text && s.rows[r][0].text == text) return static_cast<long>(r);
  return -1;
}
double num(const Sheet& s, long row, std::size_t col) {
  const Cell& c = s.rows.at(static_cast<std::size_t>(row)).at(col);
  EXPECT_EQ(c.kind, Cell::Kind::number) << "row " << row << " col " << col;
  return c.number;
}

// Both sides read the same doubles out of the same C library: equal exactly, except where the
// analysis ran with one thread and the reference with the default (sums in another order): the
// rotation and fit are deterministic given the seed, so the difference is rounding of sums over a
// few hundred products of numbers below 1 in size.
constexpr double kSame = 1e-12;

TEST_F(ReportLayout, AnalysisReadsTheItemsAndMatchesTheCApi) {
  ASSERT_EQ(a().items.names, kNames);
  EXPECT_EQ(a().items.rows, 30u);
  EXPECT_TRUE(a().items.header);
  ASSERT_TRUE(a().model.available) << a().model.reason;
  const Reference ref = reference(a());
  for (std::size_t i = 0; i < ref.L.values.size(); ++i) EXPECT_NEAR(a().model.loadings[i], ref.L.values[i], kSame);
  EXPECT_EQ(a().values_hash, hash_values(a().items.values, a().items.names));
  // complaints is reversed in the source, so it loads negatively and its scale reverse-scores it
  ASSERT_TRUE(a().reliability.available) << a().reliability.reason;
  EXPECT_EQ(a().reliability.reversed_names, std::vector<std::string>{"complaints"});
}

TEST_F(ReportLayout, OverviewShowsTheDataFactorabilityAndDecision) {
  const Sheet s = layout_overview(a());
  EXPECT_EQ(s.base_name, names::overview);
  EXPECT_EQ(s.rows[0][0].text, "Lode factor analysis report");
  EXPECT_EQ(s.rows[0][0].style, styles::title);
  for (const char* h : {"Data used", "Can these items be factored?", "How many factors", "How well the model fits",
                        "Items to look at", "Before using factor scores about people", "Factor scores",
                        "Bootstrap intervals"}) {
    const long r = find_row(s, h);
    ASSERT_GE(r, 0) << h;
    EXPECT_EQ(s.rows[static_cast<std::size_t>(r)][0].style, styles::heading) << h;
  }
  EXPECT_EQ(num(s, find_row(s, "Items analysed"), 1), 7.0);
  EXPECT_EQ(num(s, find_row(s, "Respondents used"), 1), 30.0);
  EXPECT_EQ(num(s, find_row(s, "Decision"), 1), 2.0);
  const Reference ref = reference(a());
  lode_factorability* f = nullptr;
  check(lode_factorability_compute(ref.corr.get(), &f), "factorability");
  const Handle<lode_factorability, lode_factorability_free> fact(f);
  EXPECT_EQ(num(s, find_row(s, "KMO sampling adequacy"), 1),
            read_value(fact.get(), LODE_FACTORABILITY_KMO, lode_factorability_value, "KMO"));
  // the verdict comes first in its block, then the figures; Bartlett's p first, then chi-square and df
  const long verdict = find_row(s, "Verdict");
  ASSERT_GE(verdict, 0);
  EXPECT_EQ(verdict, find_row(s, "Can these items be factored?") + 1);
  EXPECT_EQ(s.rows[static_cast<std::size_t>(verdict)][1].text, "yes: the items share enough to be factored");
  const long chi = find_row(s, "Bartlett's chi-square, degrees of freedom");
  EXPECT_EQ(num(s, chi, 1), read_value(fact.get(), LODE_FACTORABILITY_BARTLETT_CHI_SQUARE, lode_factorability_value, "chi"));
  EXPECT_EQ(num(s, chi, 2), read_value(fact.get(), LODE_FACTORABILITY_BARTLETT_DF, lode_factorability_value, "df"));
  const double bp = read_value(fact.get(), LODE_FACTORABILITY_BARTLETT_P_VALUE, lode_factorability_value, "p");
  const Cell& pc = s.rows.at(static_cast<std::size_t>(find_row(s, "Are the items unrelated? Bartlett's p")))[1];
  if (bp < 0.001) EXPECT_EQ(pc.text, "< 0.001");
  else EXPECT_EQ(pc.number, bp);
  // the eigenvalue table: one row per item; the reduced-matrix eigenvalues and their random-data
  // percentile the count compares first, then the eigenvalues of the correlations
  ASSERT_TRUE(a().count.available) << a().count.reason;
  const long top = find_row(s, "Factor", static_cast<std::size_t>(find_row(s, "How many factors")));
  EXPECT_EQ(s.rows[static_cast<std::size_t>(top)][1].text, "Reduced-matrix eigenvalue");
  lode_factor_count_options co;
  lode_factor_count_options_init(&co, sizeof co);
  co.seed = a().options.seed;
  lode_factor_count* cnt = nullptr;
  check(lode_factor_count_compute(ref.corr.get(), &co, &cnt), "count");
  const Handle<lode_factor_count, lode_factor_count_free> count(cnt);
  const Matrix reduced = read_matrix(count.get(), LODE_FACTOR_COUNT_OBSERVED_FACTOR, lode_factor_count_matrix, "reduced");
  const Matrix random = read_matrix(count.get(), LODE_FACTOR_COUNT_RANDOM_FACTOR_PERCENTILE, lode_factor_count_matrix, "r");
  for (std::size_t j = 0; j < 7; ++j) {
    EXPECT_EQ(num(s, top + 1 + static_cast<long>(j), 0), static_cast<double>(j + 1));
    EXPECT_EQ(num(s, top + 1 + static_cast<long>(j), 1), reduced.values[j]);
    // replicate i always draws from stream i of the seed: the thread count does not change it
    EXPECT_EQ(num(s, top + 1 + static_cast<long>(j), 2), random.values[j]);
    EXPECT_EQ(num(s, top + 1 + static_cast<long>(j), 3), ref.eig.values[j]);
  }
  EXPECT_EQ(num(s, find_row(s, "Root mean square residual (RMSR)"), 1),
            read_value(ref.model.get(), LODE_MODEL_RMSR, lode_model_value, "RMSR"));
}

TEST_F(ReportLayout, LoadingsAreGroupedAndMatchTheModel) {
  const Sheet s = layout_loadings(a());
  const Reference ref = reference(a());
  const long hdr = find_row(s, "Item");
  ASSERT_GE(hdr, 1);
  const auto& h = s.rows[static_cast<std::size_t>(hdr)];
  // item, where it belongs, communality, uniqueness, 2 factors, 2 intervals of 2 ends
  ASSERT_EQ(h.size(), 1u + 3 + 2 + 4);
  EXPECT_EQ(h[1].text, "Belongs to");
  EXPECT_EQ(h[2].text, "Explained by the factors (communality)");
  EXPECT_EQ(h[4].text, "Factor 1");
  EXPECT_EQ(h[6].text, "Factor 1 95% from");
  // the band above the factors: each factor's squared loadings over the number of items
  const auto& band = s.rows[static_cast<std::size_t>(hdr) - 1];
  EXPECT_EQ(band[0].text, "Share of all the items' variance");
  for (std::size_t f = 0; f < 2; ++f) {
    double ss = 0.0;
    for (std::size_t j = 0; j < 7; ++j) {
      const double l = ref.L.at(static_cast<std::int64_t>(j), static_cast<std::int64_t>(f));
      ss += l * l;
    }
    EXPECT_NEAR(band[4 + f].number, ss / 7.0, 1e-12);  // 7 products of numbers under 1: rounding only
  }
  const std::vector<std::size_t> order = loading_order(ref.L.values, 7, 2);
  for (std::size_t r = 0; r < 7; ++r) {
    const auto& row = s.rows[static_cast<std::size_t>(hdr) + 1 + r];
    const std::size_t j = order[r];
    EXPECT_EQ(row[0].text, kNames[j]);
    std::string belongs;
    for (std::size_t f = 0; f < 2; ++f) {
      const double l = ref.L.at(static_cast<std::int64_t>(j), static_cast<std::int64_t>(f));
      EXPECT_NEAR(row[4 + f].number, l, kSame);
      EXPECT_EQ(row[4 + f].style, std::fabs(row[4 + f].number) >= a().options.salient ? styles::salient : styles::faint);
      if (std::fabs(l) >= a().options.salient) belongs += (belongs.empty() ? "" : " and ") + std::to_string(f + 1);
    }
    EXPECT_EQ(row[1].text, belongs.empty() ? "none clearly"
                                           : (belongs.size() > 1 ? "factors " : "factor ") + belongs);
    EXPECT_NEAR(row[2].number, ref.communalities.values[j], kSame);
    EXPECT_NEAR(row[3].number, ref.uniquenesses.values[j], kSame);
    EXPECT_LE(row[6].number, row[7].number);  // an interval's ends in order
  }
  for (const auto& row : s.rows)  // no row of sums of squares below the items
    if (!row.empty()) {
      EXPECT_EQ(row[0].text.find("Sum of squared"), std::string::npos);
    }
  const long smc = find_row(s, "Item", static_cast<std::size_t>(hdr) + 1);
  ASSERT_GE(smc, 0);
  for (std::size_t j = 0; j < 7; ++j) EXPECT_EQ(num(s, smc + 1 + static_cast<long>(j), 1), ref.smc.values[j]);
}

TEST_F(ReportLayout, FactorsSheetMatchesCorrelationsResidualsAndKeyedOmega) {
  const Sheet s = layout_factors(a());
  const Reference ref = reference(a());
  const long phi = find_row(s, "Factor correlations");
  ASSERT_GE(phi, 0);
  EXPECT_NEAR(num(s, phi + 3, 1), ref.phi.at(1, 0), kSame);
  const long res = find_row(s, "Residual correlations (observed minus model); above 0.10 in size is flagged (common practice)");
  ASSERT_GE(res, 0);
  // in the loadings sheet's item order, after a line that says so
  const std::vector<std::size_t> order = loading_order(ref.L.values, 7, 2);
  for (std::size_t i = 0; i < 7; ++i) {
    EXPECT_EQ(s.rows[static_cast<std::size_t>(res) + 3 + i][0].text, kNames[order[i]]);
    for (std::size_t j = 0; j < 7; ++j)
      EXPECT_NEAR(num(s, res + 3 + static_cast<long>(i), 1 + j), ref.residuals.values[order[i] * 7 + order[j]], kSame);
  }
  const long structure = find_row(s, "Structure: correlations of items with factors");
  ASSERT_GE(structure, 0);
  for (std::size_t i = 0; i < 7; ++i)
    EXPECT_EQ(s.rows[static_cast<std::size_t>(structure) + 2 + i][0].text, kNames[order[i]]);
  // omega from the C ABI's keyed omega of the same model (reverse-keying items loading negatively)
  lode_reliability_options ro;
  lode_reliability_options_init(&ro, sizeof ro);
  ro.keying = LODE_KEYING_REVERSE_NEGATIVE;
  lode_reliability* r = nullptr;
  check(lode_reliability_compute_keyed_omega(ref.model.get(), &ro, &r), "omega");
  const Handle<lode_reliability, lode_reliability_free> om(r);
  const Matrix omega = read_matrix(om.get(), LODE_RELIABILITY_OMEGA, lode_reliability_matrix, "omega");
  const Matrix share = read_matrix(om.get(), LODE_RELIABILITY_OMEGA_FACTOR_SHARE, lode_reliability_matrix, "share");
  const long scales = find_row(s, "Scale");
  ASSERT_GE(scales, 0);
  for (std::size_t f = 0; f < 2; ++f) {
    EXPECT_EQ(s.rows[static_cast<std::size_t>(scales) + 1 + f][0].text, "Factor " + std::to_string(f + 1));
    EXPECT_NEAR(num(s, scales + 1 + static_cast<long>(f), 2), omega.values[f], kSame);
    EXPECT_NEAR(num(s, scales + 1 + static_cast<long>(f), 3), share.values[f], kSame);
    EXPECT_EQ(s.rows[static_cast<std::size_t>(scales) + 1 + f][1].text, reliability_words(omega.values[f]));
  }
  // the reverse-scored item is marked in its scale's item table
  bool marked = false;
  for (const auto& row : s.rows)
    if (row.size() > 2 && row[0].text == "complaints" && row[1].kind == Cell::Kind::text) marked = row[1].text == "yes";
  EXPECT_TRUE(marked);
  const long used = find_row(s, "Item correlations used");
  ASSERT_GE(used, 0);
  for (std::size_t i = 0; i < 7; ++i)
    for (std::size_t j = 0; j < 7; ++j) EXPECT_EQ(num(s, used + 2 + static_cast<long>(i), 1 + j), ref.R.values[i * 7 + j]);
}

TEST_F(ReportLayout, ScreeTableAndChartCoverTheEigenvalues) {
  const Sheet s = layout_scree(a());
  const Reference ref = reference(a());
  ASSERT_EQ(s.charts.size(), 1u);
  const Chart& ch = s.charts[0];
  EXPECT_EQ(ch.rows, 8u);
  ASSERT_TRUE(a().count.available);
  EXPECT_EQ(ch.cols, 5u);  // both versions: the count's reduced-matrix lines and the correlations' lines
  EXPECT_EQ(s.rows[ch.top][0].text, "Factor");
  EXPECT_EQ(s.rows[ch.top][1].text, "Reduced eigenvalue");
  for (std::size_t j = 0; j < 7; ++j) {
    EXPECT_EQ(s.rows[ch.top + 1 + j][1].number, a().count.observed_factor[j]);
    EXPECT_EQ(s.rows[ch.top + 1 + j][3].number, ref.eig.values[j]);
  }
}

TEST_F(ReportLayout, RunRecordStatesTheOptionsAndHash) {
  const Sheet s = layout_record(a());
  auto value = [&](const char* key) { return s.rows.at(static_cast<std::size_t>(find_row(s, key)))[1]; };
  EXPECT_EQ(value("Extraction").text, "Maximum likelihood (fit tests)");
  EXPECT_EQ(value("Rotation").text, "Oblimin (factors may correlate)");
  EXPECT_EQ(value("Number of factors").number, 2.0);
  EXPECT_EQ(value("Bootstrap resamples").number, 40.0);
  char hash[32];
  std::snprintf(hash, sizeof hash, "%016llx", static_cast<unsigned long long>(a().values_hash));
  EXPECT_EQ(value("Values hash (FNV-1a 64)").text, hash);
  EXPECT_EQ(value("Items").text, "rating, complaints, privileges, learning, raises, critical, advance");
}

TEST_F(ReportLayout, ScoresSheetAndColumnsMatchTheCApiScores) {
  const Reference ref = reference(a());
  lode_scores* raw = nullptr;
  check(lode_scores_compute(ref.model.get(), ref.data.get(), nullptr, &raw), "scores");
  const Handle<lode_scores, lode_scores_free> sc(raw);
  const Matrix values = read_matrix(sc.get(), LODE_SCORES_VALUES, lode_scores_matrix, "scores");
  ASSERT_TRUE(a().scores.sheet);
  const Sheet s = layout_scores(a());
  const long hdr = find_row(s, "Row in Ratings");
  ASSERT_GE(hdr, 0);
  EXPECT_EQ(s.rows[static_cast<std::size_t>(hdr)][1].text, "department");  // the code column comes along
  EXPECT_EQ(s.rows[static_cast<std::size_t>(hdr)][2].text, "Factor 1 score (regression)");
  for (std::size_t r = 0; r < 30; ++r) {
    const auto& row = s.rows[static_cast<std::size_t>(hdr) + 1 + r];
    EXPECT_EQ(row[0].number, static_cast<double>(r + 2));  // sheet row of the respondent, below the header
    EXPECT_EQ(row[1].text, "D" + std::to_string(r + 1));
    for (std::size_t f = 0; f < 2; ++f) EXPECT_NEAR(row[2 + f].number, values.values[r * 2 + f], kSame);
  }
  // beside the data: the same values in new columns right of the range
  Options o = run_options();
  o.scores_place = "beside";
  o.bootstrap = 0;
  const Analysis b = analyse(*source_, o, "t", {});
  ASSERT_TRUE(b.scores.beside) << b.scores.moved;
  EXPECT_EQ(b.scores.where, "columns I to J of Ratings, beside the data");
  const Beside cols = layout_scores_beside(b);
  ASSERT_EQ(cols.rows.size(), 31u);
  EXPECT_EQ(cols.header_comments.size(), 2u);
  for (std::size_t r = 0; r < 30; ++r)
    for (std::size_t f = 0; f < 2; ++f) EXPECT_NEAR(cols.rows[1 + r][f].number, values.values[r * 2 + f], kSame);
}

TEST_F(ReportLayout, BuildReportWritesEverySheetInOrder) {
  const Report rep = build_report(*source_, run_options(), "t", {});
  std::vector<std::string> order;
  for (const Sheet& s : rep.sheets) order.push_back(s.base_name);
  EXPECT_EQ(order, (std::vector<std::string>{names::overview, names::loadings, names::factors, names::scree,
                                             names::record, names::scores}));
  EXPECT_FALSE(rep.beside.has_value());
  EXPECT_EQ(rep.summary, "Lode analysed 7 items of 30 respondents");
  // a document whose cells show a decimal comma: the thresholds in the notes follow it
  Options comma = run_options();
  comma.decimal_separator = ',';
  comma.bootstrap = 0;
  const Report local = build_report(*source_, comma, "t", {});
  const Sheet& ld = local.sheets[1];
  bool seen = false;
  for (const auto& row : ld.rows)
    for (const Cell& c : row) {
      if (c.style == styles::note && c.text.find("(at least 0,40") != std::string::npos) seen = true;
      if (c.style == styles::note) {
        EXPECT_EQ(c.text.find("0.40"), std::string::npos) << c.text;
      }
    }
  EXPECT_TRUE(seen);
  EXPECT_EQ(local.sheets[4].base_name, names::record);  // the run record keeps its words as written
}

// ---------------------------------------------------------------------------------------------
// Replication in random halves and the confirmatory check on held-out respondents
// ---------------------------------------------------------------------------------------------

Options confirm_options() {
  Options o;
  o.factors = 2;
  o.halves = 30;
  o.holdout = 0.5;
  return o;
}

// The run's fit options as the report sets them (ML, oblimin with the run's seed), written out here.
struct ReferenceFit {
  lode_model_options fo;
  lode_rotation_options ro;
  explicit ReferenceFit(const Options& o) {
    lode_model_options_init(&fo, sizeof fo);
    fo.factors = o.factors;
    fo.method = LODE_EXTRACTION_ML;
    lode_rotation_options_init(&ro, sizeof ro);
    ro.method = LODE_CRITERION_OBLIMIN;
    ro.seed = o.seed;
    fo.rotation = &ro;
  }
};

CorrelationHandle attitude_correlation(const Analysis& a, DataHandle& data) {
  const auto p = static_cast<std::int64_t>(a.p());
  lode_data* d = nullptr;
  check(lode_data_from_raw(a.items.values.data(), static_cast<std::int64_t>(a.items.rows), p, p, 1, &d), "data");
  data.reset(d);
  lode_correlation* c = nullptr;
  check(lode_correlation_compute(d, nullptr, &c), "correlations");
  return CorrelationHandle(c);
}

using ConfirmSheets = AttitudeAnalysis<confirm_options>;

bool sheet_has_text(const Sheet& s, const std::string& text) {
  for (const auto& row : s.rows)
    for (const Cell& c : row)
      if (c.kind == Cell::Kind::text && c.text.find(text) != std::string::npos) return true;
  return false;
}

TEST_F(ConfirmSheets, ReplicationSheetMatchesTheCApi) {
  ASSERT_TRUE(a().model.available) << a().model.reason;
  ASSERT_TRUE(a().halves.available) << a().halves.reason;
  DataHandle data;
  const CorrelationHandle corr = attitude_correlation(a(), data);
  ReferenceFit fit(a().options);
  lode_replication_options ro;
  lode_replication_options_init(&ro, sizeof ro);
  ro.splits = 30;
  ro.seed = a().options.seed;
  lode_replication* raw = nullptr;
  check(lode_replication_compute(corr.get(), &fit.fo, &ro, &raw), "replication");
  const Handle<lode_replication, lode_replication_free> rep(raw);
  const auto mat = [&](int key) { return read_matrix(rep.get(), key, lode_replication_matrix, "replication").values; };
  const std::vector<double> median = mat(LODE_REPLICATION_CONGRUENCE_MEDIAN), p5 = mat(LODE_REPLICATION_CONGRUENCE_P5),
                            fair = mat(LODE_REPLICATION_SHARE_FAIR), equal = mat(LODE_REPLICATION_SHARE_EQUAL),
                            stability = mat(LODE_REPLICATION_ITEM_STABILITY);

  const Sheet s = layout_replication(a());
  EXPECT_EQ(s.base_name, names::replication);
  const long hdr = find_row(s, "Factor");
  ASSERT_GE(hdr, 0);
  for (std::size_t f = 0; f < 2; ++f) {
    const long r = hdr + 1 + static_cast<long>(f);
    EXPECT_EQ(s.rows[static_cast<std::size_t>(r)][0].text, "Factor " + std::to_string(f + 1));
    EXPECT_NEAR(num(s, r, 1), median[f], kSame);
    EXPECT_NEAR(num(s, r, 2), p5[f], kSame);
    EXPECT_NEAR(num(s, r, 3), fair[f], kSame);
    EXPECT_NEAR(num(s, r, 4), equal[f], kSame);
    // the reading against 0.85 and 0.95 (Lorenzo-Seva & ten Berge 2006), decided here from the C ABI's median
    const std::string want = median[f] >= 0.95 ? "replicates: " : median[f] >= 0.85 ? "replicates fairly" : "does not replicate";
    EXPECT_EQ(s.rows[static_cast<std::size_t>(r)][5].text.rfind(want, 0), 0u) << s.rows[static_cast<std::size_t>(r)][5].text;
  }
  EXPECT_TRUE(sheet_has_text(s, "Lorenzo-Seva & ten Berge 2006"));
  // per item: the share of splits on the same factor, by item name
  const long items = find_row(s, "Item");
  ASSERT_GE(items, 0);
  for (std::size_t i = 0; i < a().p(); ++i) {
    const auto& row = s.rows[static_cast<std::size_t>(items) + 1 + i];
    const auto j = static_cast<std::size_t>(std::find(kNames.begin(), kNames.end(), row[0].text) - kNames.begin());
    ASSERT_LT(j, kNames.size()) << row[0].text;
    EXPECT_NEAR(row[1].number, stability[j], kSame) << row[0].text;
  }
  // items salient nowhere, decided here from the C ABI's full-sample loadings
  const std::vector<double> L = mat(LODE_REPLICATION_LOADINGS);
  for (std::size_t j = 0; j < kNames.size(); ++j) {
    const bool nowhere = std::max(std::fabs(L[j * 2]), std::fabs(L[j * 2 + 1])) < a().options.salient;
    const long listed = find_row(s, kNames[j], static_cast<std::size_t>(find_row(s, "Items salient nowhere")));
    EXPECT_EQ(listed >= 0, nowhere) << kNames[j];
  }
  EXPECT_TRUE(sheet_has_text(s, "not evidence that the scales are valid for decisions about people"));
  EXPECT_TRUE(sheet_has_text(s, "local law and professional testing standards"));
}

TEST_F(ConfirmSheets, HoldoutSheetMatchesTheCApi) {
  ASSERT_TRUE(a().holdout.available) << a().holdout.reason;
  DataHandle data;
  const CorrelationHandle corr = attitude_correlation(a(), data);
  ReferenceFit fit(a().options);
  lode_holdout_options ho;
  lode_holdout_options_init(&ho, sizeof ho);
  ho.share = 0.5;
  ho.seed = a().options.seed;
  ho.salient = a().options.salient;
  lode_holdout* raw = nullptr;
  check(lode_holdout_compute(corr.get(), &fit.fo, &ho, &raw), "hold-out check");
  const Handle<lode_holdout, lode_holdout_free> h(raw);
  lode_restricted_fit* rf = nullptr;
  check(lode_restricted_fit_from_holdout(h.get(), &rf), "confirmatory fit");
  const Handle<lode_restricted_fit, lode_restricted_fit_free> f(rf);
  const auto value = [&](int key) { return read_value(f.get(), key, lode_restricted_fit_value, "fit"); };
  const std::vector<double> fitted = read_matrix(h.get(), LODE_HOLDOUT_ITEMS_FITTED, lode_holdout_matrix, "fitted").values;
  const std::vector<double> left = read_matrix(h.get(), LODE_HOLDOUT_ITEMS_LEFT_OUT, lode_holdout_matrix, "left").values;
  const std::vector<double> L = read_matrix(f.get(), LODE_RESTRICTED_FIT_LOADINGS, lode_restricted_fit_matrix, "L").values;
  const std::vector<double> se = read_matrix(f.get(), LODE_RESTRICTED_FIT_LOADINGS_SE, lode_restricted_fit_matrix, "se").values;

  const Sheet s = layout_holdout(a());
  EXPECT_EQ(s.base_name, names::holdout);
  // the four indices against the cut-offs of Hu & Bentler (1999): CFI, TLI at least 0.95; RMSEA at most
  // 0.06; SRMR at most 0.08
  const struct { const char* name; int key; double cut; bool at_most; } cuts[] = {
      {"CFI", LODE_RESTRICTED_FIT_CFI, 0.95, false}, {"TLI", LODE_RESTRICTED_FIT_TLI, 0.95, false},
      {"RMSEA", LODE_RESTRICTED_FIT_RMSEA, 0.06, true}, {"SRMR", LODE_RESTRICTED_FIT_SRMR, 0.08, true}};
  std::size_t met = 0, defined = 0;
  for (const auto& c : cuts) {
    const long r = find_row(s, c.name);
    ASSERT_GE(r, 0) << c.name;
    const double v = value(c.key);
    if (!std::isfinite(v)) continue;
    ++defined;
    const bool ok = c.at_most ? v <= c.cut : v >= c.cut;
    met += ok;
    EXPECT_NEAR(num(s, r, 1), v, kSame) << c.name;
    EXPECT_EQ(s.rows[static_cast<std::size_t>(r)][3].text, ok ? "yes" : "no") << c.name;
  }
  EXPECT_EQ(s.rows.at(static_cast<std::size_t>(find_row(s, "Reading")))[1].text, holdout_words(met, defined));
  EXPECT_TRUE(sheet_has_text(s, "Hu & Bentler (1999)"));
  EXPECT_NEAR(num(s, find_row(s, "Chi-square"), 1), value(LODE_RESTRICTED_FIT_CHI_SQUARE), kSame);
  EXPECT_EQ(num(s, find_row(s, "Degrees of freedom"), 1), value(LODE_RESTRICTED_FIT_DF));
  EXPECT_NEAR(num(s, find_row(s, "BIC"), 1), value(LODE_RESTRICTED_FIT_BIC), kSame);
  // each fitted item: its factor, loading and standard error
  const long hdr = find_row(s, "Item");
  ASSERT_GE(hdr, 0);
  for (std::size_t i = 0; i < fitted.size(); ++i) {
    const auto& row = s.rows[static_cast<std::size_t>(hdr) + 1 + i];
    EXPECT_EQ(row[0].text, kNames[static_cast<std::size_t>(fitted[i])]);
    const auto f0 = static_cast<std::size_t>(row[1].number) - 1;
    EXPECT_NE(L[i * 2 + f0], 0.0);
    EXPECT_EQ(L[i * 2 + (1 - f0)], 0.0);  // two factors: the other loading is fixed
    EXPECT_NEAR(row[2].number, L[i * 2 + f0], kSame);
    EXPECT_NEAR(row[3].number, se[i * 2 + f0], kSame);
  }
  const long gone = find_row(s, "Items left out (salient nowhere)");
  ASSERT_GE(gone, 0);
  for (double j : left) EXPECT_GE(find_row(s, kNames[static_cast<std::size_t>(j)], static_cast<std::size_t>(gone)), 0);
  EXPECT_EQ(fitted.size() + left.size(), kNames.size());
  EXPECT_TRUE(sheet_has_text(s, "not evidence that the scales are valid for decisions about people"));
}

TEST_F(ConfirmSheets, BothSheetsComeBeforeTheRunRecord) {
  const Report rep = build_report(*source_, confirm_options(), "t", {});
  std::vector<std::string> order;
  for (const Sheet& s : rep.sheets) order.push_back(s.base_name);
  EXPECT_EQ(order, (std::vector<std::string>{names::overview, names::loadings, names::factors, names::scree,
                                             names::replication, names::holdout, names::record}));
  const Sheet ov = layout_overview(a());  // the overview lists both sheets
  EXPECT_GE(find_row(ov, names::replication), 0);
  EXPECT_GE(find_row(ov, names::holdout), 0);
  const Sheet rec = layout_record(a());
  EXPECT_EQ(num(rec, find_row(rec, "Random splits into halves"), 1), 30.0);
  EXPECT_EQ(num(rec, find_row(rec, "Share held out (confirmatory check)"), 1), 0.5);
  EXPECT_EQ(num(rec, find_row(rec, "Respondents held out"), 1), a().holdout.n_holdout);
}

TEST_F(ConfirmSheets, ATooSmallHoldoutIsRefusedWithTheWorkableShares) {
  Options o = confirm_options();
  o.halves = 0;
  o.holdout = 0.1;  // 3 of 30 respondents for 7 items
  try {
    analyse(*source_, o, "t", {});
    ADD_FAILURE() << "a hold-out of 3 respondents for 7 items was accepted";
  } catch (const std::invalid_argument& e) {
    EXPECT_EQ(std::string(e.what()).rfind("option Holdout is 0.10: ", 0), 0u) << e.what();
  }
  for (double bad : {-0.2, 1.0, 1.5}) {
    Options v;
    v.holdout = bad;
    EXPECT_THROW(validate(v), std::invalid_argument) << bad;
  }
  Options v;
  v.halves = 1;
  EXPECT_THROW(validate(v), std::invalid_argument);
  // the service's named values reach the options (0 = off)
  std::vector<OptionValue> values(2);
  values[0].kind = OptionValue::Kind::number;
  values[0].name = "Holdout";
  values[0].number = 0.4;
  values[1].kind = OptionValue::Kind::integer;
  values[1].name = "Halves";
  values[1].integer = 50;
  values[1].number = 50;
  const Options parsed = options_from(values);
  EXPECT_EQ(parsed.holdout, 0.4);
  EXPECT_EQ(parsed.halves, 50);
  for (const CheckOption& c : check_options()) EXPECT_GT(std::string(c.help).size(), 20u) << c.property;
}

}  // namespace
}  // namespace lode::addin::report

namespace lode::addin::report {
namespace {

TEST(ReportOptions, TableDrivesDefaultsAndValidation) {
  const Options o;  // the defaults
  std::set<std::string> properties;
  for (const WordOption& w : word_options()) {
    EXPECT_TRUE(properties.insert(w.property).second) << w.property;
    EXPECT_EQ(find_word_option(w.property), &w);
    // the default is an accepted word, and Options starts with it
    EXPECT_EQ(o.*(w.field), w.fallback) << w.property;
    EXPECT_EQ(std::string(w.words[word_index(w, w.fallback)].word), w.fallback);
    EXPECT_GT(std::string(w.help).size(), 20u) << w.property;
    Options bad;
    bad.*(w.field) = "nonsense";
    try {
      validate(bad);
      ADD_FAILURE() << w.property << " accepted a word it does not list";
    } catch (const std::invalid_argument& e) {
      EXPECT_NE(std::string(e.what()).find(std::string("option ") + w.property + " is \"nonsense\""), std::string::npos)
          << e.what();
    }
  }
  EXPECT_NO_THROW(validate(o));
  EXPECT_EQ(find_word_option("Seed"), nullptr);
  // the one set of defaults (README, "Defaults")
  EXPECT_EQ(o.extraction, "ml");
  EXPECT_EQ(o.rotation, "oblimin");
  EXPECT_EQ(o.salient, 0.40);
  // the run record lists every word option under its record key
  Analysis a;
  a.options = o;
  const Sheet rec = layout_record(a);
  for (const WordOption& w : word_options()) {
    const long r = find_row(rec, w.record);
    ASSERT_GE(r, 0) << w.record;
    EXPECT_EQ(rec.rows[static_cast<std::size_t>(r)][1].text, w.words[word_index(w, o.*(w.field))].label);
  }
}

}  // namespace
}  // namespace lode::addin::report

namespace lode::addin::report {
namespace {

TEST(ReportText, DecimalsInSentencesFollowTheDocumentsSeparator) {
  EXPECT_EQ(with_decimal_separator("under 0.50 (Kaiser 1974); -1.5 or 12.25.", ','), "under 0,50 (Kaiser 1974); -1,5 or 12,25.");
  // names, versions and addresses keep their points
  EXPECT_EQ(with_decimal_separator("q1.2 and Lode 0.1.0 at $Sheet1.$A$1, 3.5x", ','), "q1.2 and Lode 0.1.0 at $Sheet1.$A$1, 3.5x");
  EXPECT_EQ(with_decimal_separator("0.05 or less", '.'), "0.05 or less");
  Sheet s;
  s.line({Cell::txt("item.3.5", styles::label), Cell::txt("under 0.50", styles::note), Cell::num(0.5)});
  localise_decimals(s, ',');
  EXPECT_EQ(s.rows[0][0].text, "item.3.5");  // a label (item names) is left alone
  EXPECT_EQ(s.rows[0][1].text, "under 0,50");
}

TEST(ReportText, RangeAddressesRoundTrip) {
  EXPECT_EQ(range_address("Ratings", 0, 0, 7, 30), "$Ratings.$A$1:$H$31");
  EXPECT_EQ(range_address("Jo's answers", 26, 4, 27, 9), "$'Jo''s answers'.$AA$5:$AB$10");
  std::string sheet, cells;
  split_range_text("$'Jo''s answers'.$AA$5:$AB$10", sheet, cells);
  EXPECT_EQ(sheet, "Jo's answers");
  EXPECT_EQ(cells, "$AA$5:$AB$10");
  split_range_text("A1:B9", sheet, cells);
  EXPECT_EQ(sheet, "");
  EXPECT_EQ(cells, "A1:B9");
}

TEST(ReportRun, CancelStopsOnlyARunInProgressAndNamesAreUnique) {
  RunControl c;
  c.cancel();  // nothing running: no effect on the next run
  c.begin_call();
  EXPECT_FALSE(c.cancelled());
  c.cancel();
  EXPECT_TRUE(c.cancelled());
  c.end_call("stopped: the analysis was cancelled; the workbook is as it was");
  EXPECT_TRUE(c.begin_background());
  EXPECT_FALSE(c.cancelled());
  EXPECT_FALSE(c.begin_background());  // one background run at a time
  EXPECT_TRUE(c.running());
  c.end_background("done");
  EXPECT_FALSE(c.running());
  EXPECT_EQ(c.last_outcome(), "done");
  EXPECT_EQ(stopped_outcome(std::make_exception_ptr(std::invalid_argument("option X"))), "stopped: option X");
  EXPECT_EQ(stopped_outcome(std::make_exception_ptr(Cancelled{})),
            "stopped: the analysis was cancelled; the workbook is as it was");
  // what a dialog run shows in a message box: the reason and what to do; nothing for a cancel or a success
  const std::string failed = failed_run_message(stopped_outcome(std::make_exception_ptr(std::invalid_argument(
      "only 2 columns with numbers in $Answers.$A$1:$B$9; a factor analysis needs at least 3 items"))));
  EXPECT_EQ(failed.rfind("The analysis stopped: only 2 columns with numbers in $Answers.$A$1:$B$9; a factor analysis "
                         "needs at least 3 items.",
                         0),
            0u)
      << failed;
  EXPECT_NE(failed.find("the workbook is as it was"), std::string::npos);
  EXPECT_EQ(failed_run_message(stopped_outcome(std::make_exception_ptr(Cancelled{}))), "");
  EXPECT_EQ(failed_run_message("Lode analysed 7 items of 30 respondents; the report is on the sheets X."), "");
  EXPECT_NE(already_running_message().find("Stop the running analysis"), std::string::npos);
  EXPECT_NE(unreadable_range_message("Shet1.A1:B").find("\"Shet1.A1:B\""), std::string::npos);
  const std::vector<std::string> names = unique_sheet_names(
      {"Lode overview", "Lode loadings", "Lode overview"}, [](const std::string& n) { return n == "Lode overview"; });
  EXPECT_EQ(names, (std::vector<std::string>{"Lode overview 2", "Lode loadings", "Lode overview 3"}));
}

}  // namespace
}  // namespace lode::addin::report
