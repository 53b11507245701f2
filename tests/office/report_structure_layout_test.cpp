// The report's general-factor and groups sheets without an office, on outside data read live from R:
// datasets::USJudgeRatings (12 lawyers' ratings of 43 judges) with 3 oblique factors for the general
// factor, and datasets::iris (4 measurements of 150 flowers, 50 of each of 3 species; the species a
// text column) for the comparison across groups. The sheets' numbers are checked against the C ABI's own
// results for the same data and options (lode.h called directly here) and against identities of the
// method: the general and group loadings are the pattern transformed by the second-order loadings as
// Schmid & Leiman (1957) define it, recomputed here.
#include "capi.hpp"
#include "option_table.hpp"
#include "report_analysis.hpp"
#include "report_layout.hpp"
#include "report_text.hpp"

#include "support/external.hpp"

#include <gtest/gtest.h>

#include <algorithm>
#include <cmath>
#include <stdexcept>
#include <string>

namespace lode::addin::report {
namespace {

SourceCell text_cell(std::string s) { return SourceCell{SourceCell::Kind::text, 0.0, std::move(s)}; }
SourceCell number_cell(double v) { return SourceCell{SourceCell::Kind::number, v, {}}; }

// A table of R's numbers with a header row; `labels` (one per row, may be empty) as a first text column.
SourceTable table_of(const lode::Matrix& x, const std::vector<std::string>& names, const std::vector<std::string>& labels) {
  SourceTable t;
  const bool grouped = !labels.empty();
  t.rows = static_cast<std::size_t>(x.rows()) + 1;
  t.cols = names.size() + (grouped ? 1 : 0);
  t.address = "$Data.$A$1";
  t.sheet_name = "Data";
  for (std::size_t c = 0; c < t.cols; ++c) t.column_letters.push_back(column_name(c));
  if (grouped) t.cells.push_back(text_cell("group"));
  for (const std::string& n : names) t.cells.push_back(text_cell(n));
  for (Index i = 0; i < x.rows(); ++i) {
    if (grouped) t.cells.push_back(text_cell(labels[static_cast<std::size_t>(i)]));
    for (Index j = 0; j < x.cols(); ++j) t.cells.push_back(number_cell(x(i, j)));
  }
  return t;
}

long find_row(const Sheet& s, const std::string& text) {
  for (std::size_t r = 0; r < s.rows.size(); ++r)
    if (!s.rows[r].empty() && s.rows[r][0].kind == Cell::Kind::text && s.rows[r][0].text == text) return static_cast<long>(r);
  return -1;
}
bool has_text(const Sheet& s, const std::string& part) {
  for (const auto& row : s.rows)
    for (const Cell& c : row)
      if (c.kind == Cell::Kind::text && c.text.find(part) != std::string::npos) return true;
  return false;
}

// Same library, same doubles, one thread against the default: rounding of sums of a few hundred
// products of numbers below 1 in size.
constexpr double kSame = 1e-12;

TEST(ReportGeneralFactor, JudgeRatingsGiveTheSheetOfTheCApisTransformation) {
  const auto r = lode::testing::run_r(R"( emit("x", as.matrix(datasets::USJudgeRatings)) )", {});
  std::vector<std::string> names;
  for (int j = 0; j < 12; ++j) names.push_back("rating " + std::to_string(j + 1));
  const SourceTable src = table_of(r.at("x"), names, {});
  Options o;
  o.factors = 3;
  const Analysis a = analyse(src, o, "2026-01-02 03:04", {});
  ASSERT_TRUE(a.model.available) << a.model.reason;
  ASSERT_TRUE(a.general.available) << a.general.reason;

  // The C ABI directly: the same fit and its Schmid-Leiman transformation.
  const auto p = static_cast<std::int64_t>(a.p());
  lode_data* d = nullptr;
  check(lode_data_from_raw(a.items.values.data(), static_cast<std::int64_t>(a.items.rows), p, p, 1, &d), "data");
  const DataHandle data(d);
  lode_correlation* c = nullptr;
  check(lode_correlation_compute(d, nullptr, &c), "correlations");
  const CorrelationHandle corr(c);
  lode_model_options fo;
  lode_model_options_init(&fo, sizeof fo);
  fo.factors = 3;
  lode_rotation_options ro;
  lode_rotation_options_init(&ro, sizeof ro);
  ro.method = LODE_CRITERION_OBLIMIN;
  ro.seed = o.seed;
  fo.rotation = &ro;
  lode_model* m = nullptr;
  check(lode_model_compute(c, &fo, &m), "fit");
  const Handle<lode_model, lode_model_free> model(m);
  lode_schmid_leiman* raw = nullptr;
  check(lode_schmid_leiman_compute(m, nullptr, nullptr, 0, &raw), "Schmid-Leiman");
  const Handle<lode_schmid_leiman, lode_schmid_leiman_free> sl(raw);
  const double omega_h = read_value(sl.get(), LODE_SCHMID_LEIMAN_OMEGA_HIERARCHICAL, lode_schmid_leiman_value, "omega h");
  const Matrix general = read_matrix(sl.get(), LODE_SCHMID_LEIMAN_GENERAL, lode_schmid_leiman_matrix, "general");

  const Sheet s = layout_general(a);
  EXPECT_EQ(s.base_name, names::general);
  EXPECT_NEAR(s.rows.at(static_cast<std::size_t>(find_row(s, "Omega hierarchical"))).at(1).number, omega_h, kSame);
  EXPECT_NEAR(s.rows.at(static_cast<std::size_t>(find_row(s, "Omega total"))).at(1).number,
              read_value(sl.get(), LODE_SCHMID_LEIMAN_OMEGA_TOTAL, lode_schmid_leiman_value, "omega t"), kSame);
  EXPECT_NEAR(s.rows.at(static_cast<std::size_t>(find_row(s, "Explained common variance"))).at(1).number,
              read_value(sl.get(), LODE_SCHMID_LEIMAN_ECV, lode_schmid_leiman_value, "ecv"), kSame);
  EXPECT_TRUE(has_text(s, "common practice"));
  // The second-order loadings gamma (the subscale table), and the loadings table: one row per item,
  // general then 3 group loadings, which are the transformation of the pattern L written out here:
  // general = L gamma, group = L diag(sqrt(1 - gamma^2)) (Schmid & Leiman 1957).
  const long sub = find_row(s, "Factor 1");
  ASSERT_GE(sub, 0);
  std::vector<double> gamma;
  for (std::size_t f = 0; f < 3; ++f) gamma.push_back(s.rows.at(static_cast<std::size_t>(sub) + f).at(1).number);
  const long top = find_row(s, "Item");
  ASSERT_GE(top, 0);
  const std::vector<double>& L = a.model.loadings;
  for (std::size_t i = 0; i < a.p(); ++i) {
    const auto& row = s.rows.at(static_cast<std::size_t>(top) + 1 + i);
    EXPECT_EQ(row.at(0).text, a.items.names[i]);
    EXPECT_NEAR(row.at(1).number, general.values[i], kSame);
    double g = 0.0;
    for (std::size_t f = 0; f < 3; ++f) {
      g += L[i * 3 + f] * gamma[f];
      // one product and a square root of numbers below 1; a second-order loading above 1 (a Heywood case,
      // which these highly correlated ratings give) leaves its factor no second-order uniqueness
      EXPECT_NEAR(row.at(2 + f).number, L[i * 3 + f] * std::sqrt(std::max(0.0, 1.0 - gamma[f] * gamma[f])), 1e-14)
          << a.items.names[i];
    }
    EXPECT_NEAR(row.at(1).number, g, 1e-14) << a.items.names[i];  // three products
  }
  // the C ABI's remarks (here the Heywood case) are on the sheet
  for (const std::string& n : a.general.notes) EXPECT_TRUE(has_text(s, n)) << n;

  // Orthogonal or two factors: no general factor, and the reason says which.
  Options orth = o;
  orth.rotation = "varimax";
  const Analysis b = analyse(src, orth, "", {});
  EXPECT_FALSE(b.general.available);
  EXPECT_NE(b.general.reason.find("orthogonal"), std::string::npos) << b.general.reason;
  Options two = o;
  two.factors = 2;
  const Analysis t = analyse(src, two, "", {});
  EXPECT_FALSE(t.general.available);
  EXPECT_NE(t.general.reason.find("at least 3 factors"), std::string::npos) << t.general.reason;
}

class ReportGroups : public ::testing::Test {
 protected:
  static void SetUpTestSuite() {
    const auto r = lode::testing::run_r(
        R"( emit("x", as.matrix(iris[, 1:4])); emit("s", matrix(as.numeric(iris$Species), ncol = 1)) )", {});
    x_ = new lode::Matrix(r.at("x"));
    const char* species[] = {"setosa", "versicolor", "virginica"};
    for (Index i = 0; i < r.at("s").rows(); ++i) labels_.push_back(species[static_cast<int>(r.at("s")(i, 0)) - 1]);
  }
  static void TearDownTestSuite() { delete x_; }
  static SourceTable source() {
    return table_of(*x_, {"Sepal.Length", "Sepal.Width", "Petal.Length", "Petal.Width"}, labels_);
  }
  static Options options(int min_group) {
    Options o;
    o.factors = 1;
    o.group_column = "group";
    o.min_group = min_group;
    return o;
  }
  static lode::Matrix* x_;
  static std::vector<std::string> labels_;
};
lode::Matrix* ReportGroups::x_ = nullptr;
std::vector<std::string> ReportGroups::labels_;

TEST_F(ReportGroups, SpeciesAreComparedAsTheCApiComparesThem) {
  const Analysis a = analyse(source(), options(20), "", {});
  EXPECT_EQ(a.p(), 4u);  // the text column of species is the grouping column, not an item
  ASSERT_TRUE(a.groups.available) << a.groups.reason;
  ASSERT_EQ(a.groups.labels, (std::vector<std::string>{"setosa", "versicolor", "virginica"}));
  EXPECT_EQ(a.groups.rows, (std::vector<double>{50, 50, 50}));

  // The C ABI directly, species coded 0, 1, 2 in sorted order as the report codes them.
  const auto p = static_cast<std::int64_t>(a.p());
  lode_data* d = nullptr;
  check(lode_data_from_raw(a.items.values.data(), 150, p, p, 1, &d), "data");
  const DataHandle data(d);
  std::vector<std::int64_t> codes;
  for (const std::string& l : labels_) codes.push_back(l == "setosa" ? 0 : l == "versicolor" ? 1 : 2);
  lode_group_comparison_options go;
  lode_group_comparison_options_init(&go, sizeof go);
  go.factors = 1;
  go.min_group = 20;
  lode_group_comparison* raw = nullptr;
  check(lode_group_comparison_compute(d, codes.data(), 150, &go, &raw), "groups");
  const Handle<lode_group_comparison, lode_group_comparison_free> gc(raw);
  const Matrix congruence = read_matrix(gc.get(), LODE_GROUP_COMPARISON_CONGRUENCE, lode_group_comparison_matrix, "c");

  const Sheet s = layout_groups(a);
  EXPECT_EQ(s.base_name, names::groups);
  EXPECT_TRUE(has_text(s, "not a formal test of measurement invariance"));
  EXPECT_TRUE(has_text(s, "local law and professional"));
  const long top = find_row(s, "Group");
  ASSERT_GE(top, 0);
  for (std::size_t g = 0; g < 3; ++g) {
    const auto& row = s.rows.at(static_cast<std::size_t>(top) + 1 + g);
    EXPECT_EQ(row.at(0).text, a.groups.labels[g]);
    EXPECT_EQ(row.at(1).number, 50.0);
    EXPECT_NEAR(row.at(2).number, congruence.values[g], kSame);
    // the reading follows the published bands
    const std::string words = congruence_words(congruence.values[g]);
    if (words == "the same factor") EXPECT_NE(row.at(3).text.find("the same factor"), std::string::npos);
    else EXPECT_NE(row.at(3).text.find(words == "differs" ? "differs" : "fair similarity"), std::string::npos);
  }
  EXPECT_EQ(congruence_words(0.95), "the same factor");
  EXPECT_EQ(congruence_words(0.9499), "fair similarity");
  EXPECT_EQ(congruence_words(0.85), "fair similarity");
  EXPECT_EQ(congruence_words(0.8499), "differs");
  EXPECT_EQ(congruence_words(-0.97), "the same factor");
  // Every differing loading in plain words, as many as the C ABI flags.
  const Matrix shifts = read_matrix(gc.get(), LODE_GROUP_COMPARISON_DIFFERENCES, lode_group_comparison_matrix, "d");
  EXPECT_EQ(a.groups.shifts.size(), static_cast<std::size_t>(shifts.rows));
  for (const auto& sh : a.groups.shifts)
    EXPECT_TRUE(has_text(s, "In group " + sh.group + ", item " + a.items.names[sh.item] + " loads")) << sh.group;
}

TEST_F(ReportGroups, AllGroupsTooSmallIsStatedWithTheGroupsAndTheRunGoesOn) {
  const Analysis a = analyse(source(), options(60), "", {});
  ASSERT_TRUE(a.model.available);
  EXPECT_FALSE(a.groups.available);
  EXPECT_NE(a.groups.reason.find("fewer than 2 groups have at least 60"), std::string::npos) << a.groups.reason;
  EXPECT_EQ(a.groups.skipped.size(), 3u);
  const Sheet s = layout_groups(a);
  EXPECT_TRUE(has_text(s, "The groups were not compared"));
  EXPECT_GE(find_row(s, "virginica"), 0);
  // A grouping column that is not in the range stops the run before anything is written.
  Options bad = options(20);
  bad.group_column = "site";
  EXPECT_THROW(analyse(source(), bad, "", {}), std::invalid_argument);
}

}  // namespace
}  // namespace lode::addin::report

namespace lode::addin::report {
namespace {

TEST(ReportGroupOptions, ServiceNamesAreParsedCheckedAndRecorded) {
  OptionValue column;
  column.kind = OptionValue::Kind::text;
  column.name = kGroupColumnOption.property;
  column.text = " site ";
  OptionValue smallest;
  smallest.kind = OptionValue::Kind::integer;
  smallest.name = kMinGroupOption.property;
  smallest.integer = 50;
  smallest.number = 50;
  const Options o = options_from({column, smallest});
  EXPECT_EQ(o.group_column, "site");  // trimmed, as every option word
  EXPECT_EQ(o.min_group, 50);
  EXPECT_EQ(Options{}.min_group, kDefaultMinGroup);
  EXPECT_EQ(Options{}.group_column, "");
  smallest.integer = 1;
  smallest.number = 1;
  try {
    options_from({smallest});
    ADD_FAILURE() << "a smallest group of 1 was accepted";
  } catch (const std::invalid_argument& e) {
    EXPECT_NE(std::string(e.what()).find("MinGroup"), std::string::npos) << e.what();
  }
  Options bad;
  bad.min_group = 0;
  EXPECT_THROW(validate(bad), std::invalid_argument);
}

}  // namespace
}  // namespace lode::addin::report
