// Mergeable summaries: correlations from a summary against pandas and scipy run live, against the
// raw-row path, merging in any order, the byte form and its damage, and the refusals.
#include "lode/summary.hpp"

#include "lode/random.hpp"
#include "support/errors.hpp"
#include "support/external.hpp"

#include <gtest/gtest.h>

#include <cmath>
#include <limits>

using namespace lode;
using lode::testing::error_message;
using lode::testing::run_python;

namespace {

constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

// Invented ordinal answers: one latent factor, items cut into 5 (or `categories`) ordered codes, a
// share of answers missing at random.
Matrix ordinal_answers(Index rows, Index items, std::uint64_t seed, double missing = 0.1, int categories = 5) {
  RandomEngine e = random_stream(seed, 0);
  Matrix x(rows, items);
  for (Index i = 0; i < rows; ++i) {
    const double f = ziggurat_normal(e);
    for (Index j = 0; j < items; ++j) {
      const double latent = (0.4 + 0.05 * static_cast<double>(j % 5)) * f + 0.8 * ziggurat_normal(e);
      double code = std::floor(latent * 1.2 + 0.5 * categories);
      code = std::clamp(code, 0.0, static_cast<double>(categories - 1)) + 1.0;
      x(i, j) = open_uniform(e) < missing ? kNaN : code;
    }
  }
  return x;
}

Summary summary_of(const Matrix& x, SummaryOptions options = {}, Index blocks = 1) {
  Summary s = make_summary(std::vector<std::string>(static_cast<std::size_t>(x.cols())), options);
  const Index step = (x.rows() + blocks - 1) / blocks;
  for (Index start = 0; start < x.rows(); start += step) summary_add(s, x.middleRows(start, std::min(step, x.rows() - start)));
  return s;
}

CorrelationOptions with(CorrelationKind kind, MissingPolicy missing = MissingPolicy::pairwise) {
  CorrelationOptions o;
  o.kind = kind;
  o.missing = missing;
  return o;
}

}  // namespace

// Pairwise Pearson and Spearman from a summary built in parts and merged, against pandas'
// DataFrame.corr (pairwise-complete rows; Spearman ranks within each pair's rows), run live.
TEST(Summary, PairwisePearsonAndSpearmanMatchPandas) {
  const Matrix x = ordinal_answers(3000, 6, 11);
  Summary a = summary_of(x.topRows(1000), {}, 3), b = summary_of(x.bottomRows(2000), {}, 2);
  summary_merge(a, b);
  const auto pearson = correlation_from_summary(a, with(CorrelationKind::pearson));
  const auto spearman = correlation_from_summary(a, with(CorrelationKind::spearman));
  const auto ref = run_python(R"(
import pandas as pd
d = pd.DataFrame(X)
emit('p', d.corr(method='pearson').to_numpy())
emit('s', d.corr(method='spearman').to_numpy())
emit('n', d.notna().astype(float).T.dot(d.notna().astype(float)).to_numpy())
)", {{"X", x}});
  // A correlation of n = 3000 products is good to a few hundred unit roundoffs; 1e-12 is far above.
  EXPECT_LT((pearson.matrix - ref.at("p")).cwiseAbs().maxCoeff(), 1e-12);
  EXPECT_LT((spearman.matrix - ref.at("s")).cwiseAbs().maxCoeff(), 1e-12);
  EXPECT_EQ(pearson.report.pair_counts.cast<double>(), ref.at("n"));
  EXPECT_EQ(pearson.n_obs, pearson.report.pair_counts.minCoeff());
  // And what correlation() gives from the rows themselves.
  const auto raw = correlation(x, with(CorrelationKind::pearson));
  EXPECT_LT((pearson.matrix - raw.matrix).cwiseAbs().maxCoeff(), 1e-12);
  EXPECT_EQ(pearson.report.rows_used, raw.report.rows_used);
  EXPECT_EQ(pearson.report.rows_complete, raw.report.rows_complete);
  EXPECT_NEAR(pearson.report.missing_fraction, raw.report.missing_fraction, 1e-15);
}

// A listwise summary against numpy.corrcoef of the complete rows and scipy.stats.spearmanr.
TEST(Summary, ListwiseMatchesNumpyOnCompleteRows) {
  const Matrix x = ordinal_answers(2000, 5, 12, 0.05);
  SummaryOptions lw;
  lw.listwise = true;
  const Summary s = summary_of(x, lw, 4);
  const auto p = correlation_from_summary(s, with(CorrelationKind::pearson, MissingPolicy::listwise));
  const auto r = correlation_from_summary(s, with(CorrelationKind::spearman, MissingPolicy::listwise));
  const auto ref = run_python(R"(
import scipy.stats
c = X[~np.isnan(X).any(axis=1)]
emit('p', np.corrcoef(c, rowvar=False))
emit('s', scipy.stats.spearmanr(c).correlation)
emit('n', np.array([[c.shape[0]]], dtype=float))
)", {{"X", x}});
  EXPECT_LT((p.matrix - ref.at("p")).cwiseAbs().maxCoeff(), 1e-12);
  EXPECT_LT((r.matrix - ref.at("s")).cwiseAbs().maxCoeff(), 1e-12);
  EXPECT_EQ(static_cast<double>(p.n_obs), ref.at("n")(0, 0));
  EXPECT_EQ(p.report.rows_total, 2000);
  // Asking a listwise summary for pairwise correlations (and the reverse) is refused.
  EXPECT_NE(error_message([&] { correlation_from_summary(s, with(CorrelationKind::pearson)); }).find("listwise"),
            std::string::npos);
  EXPECT_NE(error_message([&] {
              correlation_from_summary(summary_of(x), with(CorrelationKind::pearson, MissingPolicy::listwise));
            }).find("built with listwise deletion"),
            std::string::npos);
}

// Polychoric from the pair tables equals the raw-row estimate (itself checked against R's polycor in
// polychoric_test.cpp): the same tables go through the same estimation, so agreement is to rounding.
TEST(Summary, PolychoricFromTablesEqualsRawRows) {
  const Matrix x = ordinal_answers(1500, 5, 13, 0.08);
  for (auto missing : {MissingPolicy::pairwise, MissingPolicy::listwise}) {
    SummaryOptions so;
    so.listwise = missing == MissingPolicy::listwise;
    const Summary s = summary_of(x, so, 3);
    const auto from_summary = polychoric_from_summary(s, with(CorrelationKind::polychoric, missing));
    const auto raw = polychoric_correlation(x, with(CorrelationKind::polychoric, missing));
    EXPECT_LT((from_summary.estimates - raw.estimates).cwiseAbs().maxCoeff(), 1e-12);
    EXPECT_LT((from_summary.correlation.matrix - raw.correlation.matrix).cwiseAbs().maxCoeff(), 1e-12);
    EXPECT_EQ(from_summary.correlation.n_obs, raw.correlation.n_obs);
    EXPECT_EQ(from_summary.correlation.report.pair_counts, raw.correlation.report.pair_counts);
    ASSERT_EQ(from_summary.thresholds.size(), raw.thresholds.size());
    for (std::size_t j = 0; j < raw.thresholds.size(); ++j)
      EXPECT_LT((from_summary.thresholds[j] - raw.thresholds[j]).cwiseAbs().maxCoeff(), 1e-14);
    EXPECT_EQ(from_summary.correlation.notes, raw.correlation.notes);
  }
}

// Merging is commutative and associative up to rounding (Chan, Golub & LeVeque 1979), and the
// tables, counts and categories are exactly the same in every order, including categories that first
// appear in a later part.
TEST(Summary, MergeOrderDoesNotMatter) {
  Matrix x = ordinal_answers(900, 4, 14, 0.1, 7);
  x.topRows(300).col(2) = x.topRows(300).col(2).cwiseMin(3.0);  // codes 4..7 of item 3 appear later only
  const Summary a = summary_of(x.topRows(300)), b = summary_of(x.middleRows(300, 300)), c = summary_of(x.bottomRows(300));
  Summary ab_c = a, a_bc = a, cba = c, bc = b;
  summary_merge(ab_c, b);
  summary_merge(ab_c, c);
  summary_merge(bc, c);
  summary_merge(a_bc, bc);
  summary_merge(cba, b);
  summary_merge(cba, a);
  const Summary whole = summary_of(x);
  for (const Summary* s : {&ab_c, &a_bc, &cba}) {
    EXPECT_EQ(s->n, whole.n);
    EXPECT_EQ(s->tables, whole.tables);
    for (std::size_t j = 0; j < whole.categories.size(); ++j) {
      EXPECT_EQ(s->categories[j].values, whole.categories[j].values);
      EXPECT_EQ(s->categories[j].counts, whole.categories[j].counts);
    }
    // Sums of 900 squares of values below 7: good to ~900 * 49 * 2^-53 relative to the scale.
    EXPECT_LT((s->m2 - whole.m2).cwiseAbs().maxCoeff(), 1e-9);
    EXPECT_LT((s->comoment - whole.comoment).cwiseAbs().maxCoeff(), 1e-9);
    EXPECT_LT((s->mean - whole.mean).cwiseAbs().maxCoeff(), 1e-13);
    EXPECT_EQ(s->rows_total, 900);
  }
}

// A large common offset costs no accuracy (each block is centred before its products are summed).
TEST(Summary, LargeOffsetKeepsAccuracy) {
  Matrix x = ordinal_answers(2000, 4, 15, 0.0, 11);
  Matrix shifted = x.array() * 1e-3 + 1e8;
  shifted(0, 0) = kNaN;
  const auto s = correlation_from_summary(summary_of(shifted, {}, 5), with(CorrelationKind::pearson));
  const auto ref = run_python("import pandas as pd\nemit('p', pd.DataFrame(X - 1e8).corr().to_numpy())", {{"X", shifted}});
  // The data carry only ~1e-8 relative precision beside 1e8 (ulp 1.5e-8 against steps of 1e-3).
  EXPECT_LT((s.matrix - ref.at("p")).cwiseAbs().maxCoeff(), 1e-6);
}

TEST(Summary, BytesRoundTripExactly) {
  const Matrix x = ordinal_answers(500, 4, 16, 0.1);
  Summary s = make_summary({"q1", "q2", "q3", "q4"});
  summary_add(s, x);
  const auto bytes = summary_to_bytes(s);
  const Summary back = summary_from_bytes(bytes.data(), bytes.size());
  EXPECT_EQ(back.item_names, s.item_names);
  EXPECT_EQ(back.n, s.n);
  EXPECT_EQ(back.mean, s.mean);
  EXPECT_EQ(back.m2, s.m2);
  EXPECT_EQ(back.comoment, s.comoment);
  EXPECT_EQ(back.tables, s.tables);
  EXPECT_EQ(summary_to_bytes(back), bytes);
}

TEST(Summary, DamagedBytesGiveClearErrors) {
  Summary s = make_summary({"q1", "q2", "q3"});
  summary_add(s, ordinal_answers(200, 3, 17));
  const auto bytes = summary_to_bytes(s);
  for (std::size_t cut = 0; cut < bytes.size(); ++cut) {
    const std::string m = error_message([&] { summary_from_bytes(bytes.data(), cut); });
    EXPECT_NE(m.find("not a readable Lode summary"), std::string::npos) << cut << ": " << m;
  }
  for (std::size_t at = 0; at < bytes.size(); at += 7) {
    auto damaged = bytes;
    damaged[at] ^= 0x5a;
    const std::string m = error_message([&] { summary_from_bytes(damaged.data(), damaged.size()); });
    EXPECT_NE(m.find("summary"), std::string::npos) << at << ": " << m;
  }
  auto later = bytes;
  later[8] = 2;
  EXPECT_NE(error_message([&] { summary_from_bytes(later.data(), later.size()); }).find("format version 2"),
            std::string::npos);
}

TEST(Summary, RefusesToMergeDifferentSummariesNamingTheDifference) {
  Summary a = make_summary({"q1", "q2", "q3"});
  EXPECT_NE(error_message([&] { summary_merge(a, make_summary({"q1", "q2", "q4"})); })
                .find("item 3 is 'q3' in one and 'q4' in the other"),
            std::string::npos);
  EXPECT_NE(error_message([&] { summary_merge(a, make_summary({"q1", "q2"})); }).find("one has 3 items, the other 2"),
            std::string::npos);
  SummaryOptions other;
  other.max_categories = 7;
  EXPECT_NE(error_message([&] { summary_merge(a, make_summary({"q1", "q2", "q3"}, other)); }).find("up to 11 values"),
            std::string::npos);
  other = {};
  other.listwise = true;
  EXPECT_NE(error_message([&] { summary_merge(a, make_summary({"q1", "q2", "q3"}, other)); }).find("listwise"),
            std::string::npos);
}

// An item with more distinct values than the limit keeps its moments: Pearson works, Spearman and
// polychoric say that they need the tables.
TEST(Summary, ItemOverTheLimitFallsBackToMoments) {
  Matrix x = ordinal_answers(400, 4, 18, 0.05);
  RandomEngine e = random_stream(18, 1);
  for (Index i = 0; i < x.rows(); ++i) x(i, 3) = ziggurat_normal(e) + x(i, 0);
  Summary s = make_summary({"q1", "q2", "q3", "hours"});
  summary_add(s, x);
  EXPECT_TRUE(s.categories[3].over_limit);
  const auto p = correlation_from_summary(s, with(CorrelationKind::pearson));
  EXPECT_LT((p.matrix - correlation(x, with(CorrelationKind::pearson)).matrix).cwiseAbs().maxCoeff(), 1e-12);
  for (auto kind : {CorrelationKind::spearman, CorrelationKind::polychoric}) {
    const std::string m = error_message([&] { correlation_from_summary(s, with(kind)); });
    EXPECT_NE(m.find("item 'hours' has more than 11 distinct values"), std::string::npos) << m;
    EXPECT_NE(m.find("need its category counts and pair tables"), std::string::npos) << m;
  }
}

TEST(Summary, BadRowsAndDataAreNamed) {
  Summary s = make_summary({"q1", "q2", "q3"});
  Matrix x = ordinal_answers(10, 3, 19, 0.0);
  x(4, 1) = std::numeric_limits<double>::infinity();
  EXPECT_EQ(error_message([&] { summary_add(s, x); }), "item 'q2' holds an infinite value in row 5 of the rows added");
  EXPECT_NE(error_message([&] { summary_add(s, Matrix::Zero(2, 4)); }).find("4 columns but the summary has 3 items"),
            std::string::npos);
  Matrix constant = ordinal_answers(50, 3, 20, 0.0);
  constant.col(2).setConstant(4.0);
  summary_add(s, constant);
  EXPECT_EQ(error_message([&] { correlation_from_summary(s); }),
            "item 'q3' is constant (every answer is 4); remove it, it carries no information");
  EXPECT_NE(error_message([&] { make_summary({"a"}, SummaryOptions{101, false}); }).find("max_categories"),
            std::string::npos);
}
