// The add-in's UNO-free logic: the declarative table's consistency, the cache's bounds and thread
// safety, and argument reading, without a LibreOffice.
#include "arguments.hpp"
#include "cache.hpp"
#include "capi.hpp"
#include "functions.hpp"
#include "table.hpp"

#include <gtest/gtest.h>

#include <atomic>
#include <chrono>
#include <cctype>
#include <cmath>
#include <random>
#include <set>
#include <thread>
#include <vector>

namespace lode::addin {
namespace {

TEST(AddinTable, NamesAreUniqueAndWellFormed) {
  std::set<std::string_view> methods, displays;
  for (const auto& f : function_table()) {
    EXPECT_TRUE(methods.insert(f.method).second) << f.method;
    EXPECT_TRUE(displays.insert(f.display).second) << f.display;
    EXPECT_EQ(f.display.substr(0, 5), "LODE.") << f.display;
    ASSERT_FALSE(f.method.empty());
    EXPECT_TRUE(std::islower(static_cast<unsigned char>(f.method[0]))) << f.method;
    for (char c : f.method) EXPECT_TRUE(std::isalnum(static_cast<unsigned char>(c)) || c == '_') << f.method;
    EXPECT_GT(f.description.size(), 20u) << f.display;
    EXPECT_FALSE(f.result.empty()) << f.display;
    EXPECT_FALSE(f.errors.empty()) << f.display;
    EXPECT_NE(f.compute, nullptr) << f.display;
    bool optional_seen = false;
    std::set<std::string_view> arg_names;
    for (const auto& a : f.args) {
      EXPECT_TRUE(arg_names.insert(a.name).second) << f.display << " " << a.name;
      EXPECT_GT(a.help.size(), 10u) << f.display << " " << a.name;
      // Calc treats every `any` argument as optional: required ranges must come first
      if (a.kind == ArgKind::value) optional_seen = true;
      else EXPECT_FALSE(optional_seen) << f.display << ": required '" << a.name << "' after an optional one";
    }
  }
}

TEST(AddinTable, LookupByDisplayNameIgnoresCase) {
  ASSERT_NE(find_by_display("lode.corr"), nullptr);
  EXPECT_EQ(find_by_display("LODE.Corr")->method, "corr");
  EXPECT_EQ(find_by_display("LODE.NOPE"), nullptr);
  EXPECT_EQ(find_by_method("corr")->display, "LODE.CORR");
}

TEST(AddinCache, KeepsAtMostTheConfiguredEntriesAndBytes) {
  ResultCache cache(3, 1000);
  int computed = 0;
  auto get = [&](int i, std::size_t bytes) {
    return *cache.get_or_compute<int>(
        KeyBuilder("t").add(static_cast<std::uint64_t>(i)).take(),
        [&] { ++computed; return std::make_shared<const int>(i); }, bytes);
  };
  for (int i = 0; i < 5; ++i) EXPECT_EQ(get(i, 10), i);
  EXPECT_EQ(cache.stats().entries, 3u);
  EXPECT_EQ(get(4, 10), 4);  // still there
  EXPECT_EQ(computed, 5);
  EXPECT_EQ(get(0, 10), 0);  // evicted, recomputed
  EXPECT_EQ(computed, 6);
  get(9, 990);  // pushes the others out by size
  EXPECT_LE(cache.stats().bytes, 1000u);
  get(10, 5000);  // larger than the whole cache: computed, not kept
  EXPECT_LE(cache.stats().bytes, 1000u);
}

TEST(AddinCache, FailuresAreNotCached) {
  ResultCache cache;
  const std::string key = KeyBuilder("f").take();
  EXPECT_THROW(cache.get_or_compute<int>(key, []() -> std::shared_ptr<const int> { throw std::runtime_error("x"); }, 8),
               std::runtime_error);
  EXPECT_EQ(*cache.get_or_compute<int>(key, [] { return std::make_shared<const int>(7); }, 8), 7);
}

TEST(AddinCache, KeysDistinguishValuesAndShapes) {
  const double a[] = {1, 2, 3, 4};
  EXPECT_NE(KeyBuilder("k").add(a, 4).take(), KeyBuilder("k").add(a, 3).add(4.0).take());
  EXPECT_NE(KeyBuilder("k").add(std::uint64_t{2}).add(a, 4).take(), KeyBuilder("k").add(std::uint64_t{4}).add(a, 4).take());
  EXPECT_NE(KeyBuilder("a").take(), KeyBuilder("b").take());
}

TEST(AddinCache, IsSafeFromManyThreads) {
  ResultCache cache(8, 1 << 20);
  std::atomic<int> computed{0};
  std::vector<std::thread> threads;
  for (int t = 0; t < 8; ++t)
    threads.emplace_back([&, t] {
      for (int i = 0; i < 2000; ++i) {
        const int k = (i * 7 + t) % 6;  // fewer keys than entries: later calls hit
        auto v = cache.get_or_compute<int>(KeyBuilder("m").add(static_cast<std::uint64_t>(k)).take(),
                                           [&] { ++computed; return std::make_shared<const int>(k); }, 16);
        ASSERT_EQ(*v, k);
      }
    });
  for (auto& th : threads) th.join();
  EXPECT_LE(cache.stats().entries, 8u);
  EXPECT_GT(cache.stats().hits, 0u);
}

// A block of answers for the cache tests below: two groups of three items, each group driven by its own
// normal variable. Inputs only, from a seeded generator: these tests count cache hits, the numbers are
// checked against references in tests/office/test_scores_reliability.py.
Arg two_factor_answers(std::size_t rows) {
  std::mt19937_64 gen(20260107);
  std::normal_distribution<double> z;
  Arg a;
  a.kind = Arg::Kind::grid;
  a.grid.rows = rows;
  a.grid.cols = 6;
  for (std::size_t i = 0; i < rows; ++i) {
    const double f1 = z(gen), f2 = z(gen);
    for (std::size_t j = 0; j < 6; ++j) a.grid.values.push_back(0.8 * (j < 3 ? f1 : f2) + 0.6 * z(gen));
  }
  a.grid.number_cells = a.grid.values.size();
  return a;
}

Arg text_arg(const char* t) {
  Arg a;
  a.kind = Arg::Kind::text;
  a.text = t;
  return a;
}

Arg block(std::size_t rows, std::size_t cols, std::vector<double> values) {
  Arg a;
  a.kind = Arg::Kind::grid;
  a.grid.rows = rows;
  a.grid.cols = cols;
  a.grid.values = std::move(values);
  a.grid.number_cells = a.grid.values.size();
  return a;
}

std::string refusal(const std::vector<double>& square, bool& is_correlation) {
  return classify_square(block(3, 3, square).grid, is_correlation);
}

TEST(AddinArguments, SquareBlocksReadAsCorrelationsAnswersOrAreRefusedWhenAlmostCorrelations) {
  bool corr = false;
  EXPECT_EQ(refusal({1, 0.3, 0.2, 0.3, 1, 0.4, 0.2, 0.4, 1}, corr), "");
  EXPECT_TRUE(corr);
  EXPECT_EQ(refusal({1, 0.03, 0.2, 0.3, 1, 0.4, 0.2, 0.4, 1}, corr),
            "looks like a correlation matrix, but it is not symmetric: row 2, column 1 holds 0.3 but row 1, column 2 "
            "holds 0.03; correct it, or give the answers themselves (respondents in rows, more rows than items)");
  EXPECT_FALSE(corr);
  EXPECT_NE(refusal({2, 0.3, 0.2, 0.3, 2, 0.4, 0.2, 0.4, 2}, corr).find("its diagonal holds 2 in row 1, column 1"),
            std::string::npos);
  EXPECT_NE(refusal({1, 1.4, 0.2, 1.4, 1, 0.4, 0.2, 0.4, 1}, corr).find("row 1, column 2 holds 1.4"), std::string::npos);
  // answers: whole numbers (0/1, here with ones on the diagonal), a Likert block, two misses
  EXPECT_EQ(refusal({1, 0, 1, 1, 1, 0, 0, 1, 1}, corr), "");
  EXPECT_FALSE(corr);
  EXPECT_EQ(refusal({3, 4, 2, 5, 1, 2, 4, 4, 3}, corr), "");
  EXPECT_EQ(refusal({2, 0.3, 0.2, 0.5, 2, 0.4, 0.2, 0.4, 2}, corr), "");  // diagonal and symmetry both off
  EXPECT_FALSE(corr);
  try {
    read_input(block(3, 3, {1, 0.03, 0.2, 0.3, 1, 0.4, 0.2, 0.4, 1}), "items");
    FAIL() << "no error";
  } catch (const CellError& e) {
    EXPECT_EQ(e.failure(), Failure::bad_argument);
    EXPECT_EQ(std::string(e.what()).rfind("'items' looks like a correlation matrix", 0), 0u) << e.what();
  }
}

// The pattern argument of the restricted-fit cells: one column of factor numbers and the same pattern as
// 0/1 columns (empty cells 0) give the same fit, whose fixed loadings are 0; an item on no factor, a
// factor with one item, a wrong number of rows and values other than 0/1 in several columns are refused
// with the reason (invented two-factor answers: items 1-3 and 4-6).
TEST(AddinPattern, FactorNumbersAndZeroOneColumnsAgreeAndBadPatternsSayWhy) {
  ResultCache cache;
  std::vector<Arg> args(4);
  args[0] = two_factor_answers(200);
  args[1] = block(6, 1, {1, 1, 1, 2, 2, 2});
  const Output by_number = fn_patternloadings(Call{args, cache});
  args[1] = block(6, 2, {1, kMissing, 1, 0, 1, 0, 0, 1, kMissing, 1, 0, 1});
  const Output zero_one = fn_patternloadings(Call{args, cache});
  ASSERT_EQ(by_number.rows, 6u);
  ASSERT_EQ(by_number.cols, 2u);
  for (std::size_t i = 0; i < by_number.cells.size(); ++i) EXPECT_EQ(by_number.cells[i].number, zero_one.cells[i].number);
  for (std::size_t j = 0; j < 6; ++j) {
    EXPECT_EQ(by_number.cells[j * 2 + (j < 3 ? 1 : 0)].number, 0.0);  // fixed by the pattern
    EXPECT_GT(std::fabs(by_number.cells[j * 2 + (j < 3 ? 0 : 1)].number), 0.5);
  }
  const Output fit = fn_patternfit(Call{args, cache});
  EXPECT_EQ(fit.cells[0].text, "chi-square");
  EXPECT_EQ(fit.cells[1 * 2 + 1].number, 8.0);  // df: 21 moments - (6 loadings + 1 correlation + 6 uniquenesses)
  const std::pair<std::vector<double>, const char*> bad[] = {
      {{0, 1, 1, 2, 2, 2}, "on no factor"},
      {{1, 1, 1, 2, 2, 3}, "at least two items"},
      {{1, 1, 2, 2}, "one row per item"},
      {{0.5, 1, 1, 2, 2, 2}, "factor numbers"},
  };
  for (const auto& [values, words] : bad) {
    args[1] = block(values.size(), 1, values);
    const Output out = fn_patternfit(Call{args, cache});
    ASSERT_EQ(out.cells.size(), 2u);
    EXPECT_EQ(out.cells[0].text, "error");
    EXPECT_NE(out.cells[1].text.find(words), std::string::npos) << out.cells[1].text;
    EXPECT_THROW(fn_patternloadings(Call{args, cache}), CellError);
  }
  args[1] = block(6, 2, {1, 0, 2, 0, 1, 0, 0, 1, 0, 1, 0, 1});
  EXPECT_THROW(fn_patternloadings(Call{args, cache}), CellError);  // 2 in a 0/1 block
}

TEST(AddinTimeLimit, AFormulaPastItsDeadlineStartsNoFurtherStage) {
  std::vector<Arg> args(5);
  args[0] = two_factor_answers(200);
  ResultCache cache;
  Deadline gone;
  gone.until = std::chrono::steady_clock::now() - std::chrono::seconds(1);
  for (auto fn : {fn_loadings, fn_fit, fn_kmo, fn_corr}) {
    try {
      const Output out = fn(Call{args, cache, gone});
      ASSERT_EQ(out.cells.size(), 2u);  // LODE.FIT writes the failure into its cells
      EXPECT_NE(out.cells[1].text.find("time limit of a cell function"), std::string::npos) << out.cells[1].text;
    } catch (const CellError& e) {
      EXPECT_EQ(e.failure(), Failure::too_large);
      EXPECT_NE(std::string(e.what()).find("time limit of a cell function"), std::string::npos) << e.what();
    }
  }
  EXPECT_EQ(cache.stats().entries, 0u);  // nothing was computed
}

TEST(AddinTimeLimit, WorkTheCAbiCannotInterruptIsWaitedForOnlyUntilTheDeadline) {
  Deadline soon;
  soon.until = std::chrono::steady_clock::now() + std::chrono::milliseconds(200);
  const auto t0 = std::chrono::steady_clock::now();
  try {
    within_time<int>(soon, "slow stage", [] {
      std::this_thread::sleep_for(std::chrono::seconds(3));  // stands for an uninterruptible C call
      return std::make_shared<const int>(1);
    });
    FAIL() << "no error";
  } catch (const CellError& e) {
    EXPECT_EQ(e.failure(), Failure::too_large);
    EXPECT_EQ(std::string(e.what()).rfind("slow stage: stopped after 30 s", 0), 0u) << e.what();
  }
  EXPECT_LT(std::chrono::steady_clock::now() - t0, std::chrono::milliseconds(2000));
  // a result in time comes back, and so does the work's own error
  Deadline later;
  EXPECT_EQ(*within_time<int>(later, "quick", [] { return std::make_shared<const int>(7); }), 7);
  EXPECT_THROW(within_time<int>(later, "failing", []() -> std::shared_ptr<const int> {
                 throw CellError(Failure::bad_argument, "bad");
               }),
               CellError);
}

TEST(AddinTimeLimit, SlowWorkIsJoinedByALaterCallAndCollectedOnceFinished) {
  ResultCache cache;
  std::atomic<int> runs{0};
  std::atomic<bool> release{false};
  auto work = [&runs, &release]() {  // the atomics outlive every thread: the test waits for the work below
    ++runs;
    while (!release) std::this_thread::sleep_for(std::chrono::milliseconds(5));
    return std::make_shared<const int>(42);
  };
  auto soon = [] { return std::chrono::steady_clock::now() + std::chrono::milliseconds(100); };
  EXPECT_EQ(cache.get_or_compute_until<int>("k", work, 8, soon()), nullptr);  // past the deadline
  EXPECT_EQ(cache.get_or_compute_until<int>("k", work, 8, soon()), nullptr);  // joins, starts no copy
  release = true;
  auto value = cache.get_or_compute_until<int>("k", work, 8, std::chrono::steady_clock::now() + std::chrono::seconds(10));
  ASSERT_NE(value, nullptr);
  EXPECT_EQ(*value, 42);
  EXPECT_EQ(runs.load(), 1);
  EXPECT_EQ(cache.stats().entries, 1u);  // collected into the cache
  // a failing work is not cached: the next call computes again
  auto failing = []() -> std::shared_ptr<const int> { throw CellError(Failure::bad_argument, "bad"); };
  const auto later = std::chrono::steady_clock::now() + std::chrono::seconds(10);
  EXPECT_THROW(cache.get_or_compute_until<int>("f", failing, 8, later), CellError);
  EXPECT_THROW(cache.get_or_compute_until<int>("f", failing, 8, later), CellError);
}

TEST(AddinFunctions, RotateWithoutARotationIsOblimin) {
  std::vector<Arg> args(3);
  args[0] = block(6, 2, {0.7, 0.2, 0.6, 0.3, 0.65, 0.1, 0.2, 0.7, 0.3, 0.6, 0.1, 0.75});
  ResultCache cache;
  const Output left_out = fn_rotate(Call{args, cache, Deadline{}});
  args[1] = text_arg("oblimin");
  const Output named = fn_rotate(Call{args, cache, Deadline{}});
  ASSERT_EQ(left_out.cells.size(), 12u);
  for (std::size_t i = 0; i < 12; ++i) EXPECT_EQ(left_out.cells[i].number, named.cells[i].number);
}

TEST(AddinFunctions, ScoresReuseTheFitOfTheLoadings) {
  std::vector<Arg> args(5);
  args[0] = two_factor_answers(300);
  args[1].kind = Arg::Kind::number;
  args[1].number = 2;
  args[2] = text_arg("ml");
  args[3] = text_arg("varimax");
  ResultCache cache;
  const Call call{args, cache, Deadline{}};
  const Output loadings = fn_loadings(call);  // args[4] (n_obs) left out
  ASSERT_EQ(loadings.rows, 6u);
  ASSERT_EQ(loadings.cols, 2u);
  const auto before = cache.stats();
  const Output scores = fn_scores(call);  // args[4] (score_method) left out: regression
  const auto after = cache.stats();
  EXPECT_EQ(after.misses - before.misses, 1u);  // the scores themselves; the correlations and the fit were cached
  EXPECT_EQ(after.hits - before.hits, 2u);
  ASSERT_EQ(scores.rows, 300u);
  ASSERT_EQ(scores.cols, 2u);
  for (const auto& c : scores.cells) EXPECT_TRUE(std::isfinite(c.number) && !c.error);
  const Output again = fn_scores(call);
  EXPECT_EQ(cache.stats().misses, after.misses);  // all from the cache
  for (std::size_t i = 0; i < again.cells.size(); ++i) EXPECT_EQ(again.cells[i].number, scores.cells[i].number);
  args[4] = text_arg("bartlett");  // another score method: only the scores are computed anew
  fn_scores(call);
  EXPECT_EQ(cache.stats().misses, after.misses + 1);
}

TEST(AddinFunctions, ReliabilityIsComputedOncePerInput) {
  std::vector<Arg> args(1);
  args[0] = two_factor_answers(200);
  ResultCache cache;
  const Call call{args, cache, Deadline{}};
  const Output a1 = fn_alpha(call);
  const Output o1 = fn_omega(call);
  const auto s = cache.stats();
  const Output a2 = fn_alpha(call);
  const Output o2 = fn_omega(call);
  EXPECT_EQ(cache.stats().misses, s.misses);
  ASSERT_EQ(a1.rows, 1u);
  ASSERT_EQ(a1.cols, 4u);
  EXPECT_EQ(a1.cells[3].number, 200.0);  // every respondent answered every item
  EXPECT_EQ(a2.cells[0].number, a1.cells[0].number);
  EXPECT_EQ(o2.cells[0].number, o1.cells[0].number);
}

TEST(AddinFunctions, CongruenceRefusesBlocksOfDifferentShapes) {
  std::vector<Arg> args(2);
  args[0] = two_factor_answers(10);
  args[1] = two_factor_answers(9);
  ResultCache cache;
  try {
    fn_congruence(Call{args, cache, Deadline{}});
    FAIL() << "no error";
  } catch (const CellError& e) {
    EXPECT_EQ(e.failure(), Failure::bad_argument);
    EXPECT_STREQ(e.what(), "'loadings_a' is 10 x 6 but 'loadings_b' is 9 x 6; both need the same items and factors");
  }
}


Arg number_arg(double v) {
  Arg a;
  a.kind = Arg::Kind::number;
  a.number = v;
  return a;
}

// What the function itself throws for these arguments, as LODE.REASON words it.
std::string thrown(ComputeFn fn, const std::vector<Arg>& args, ResultCache& cache) {
  try {
    fn(Call{args, cache, Deadline{}});
  } catch (const CellError& e) {
    return reason_text(e.failure(), e.what());
  }
  return "no failure";
}

// LODE.REASON(function; the same arguments...) answers with the message of the failing formula:
// a typo in an option, too many factors and a constant item each give their own reason, word for
// word the one the function raised.
TEST(AddinReason, GivesTheReasonOfAFailingFormula) {
  ResultCache cache;
  auto reason = [&](const char* function, std::vector<Arg> rest) {
    std::vector<Arg> args{text_arg(function)};
    for (Arg& a : rest) args.push_back(std::move(a));
    args.resize(find_by_display("LODE.REASON")->args.size());  // the function and its arguments, the rest left out
    const Output out = fn_reason(Call{args, cache, Deadline{}});
    EXPECT_TRUE(out.scalar && out.cells.size() == 1 && out.cells[0].is_text);
    return out.cells[0].text;
  };
  const Arg data = two_factor_answers(200);
  // a typo in the extraction
  std::vector<Arg> typo{data, Arg{}, text_arg("minress")};
  typo.resize(5);
  const std::string why_typo = reason("LODE.LOADINGS", typo);
  EXPECT_EQ(why_typo.rfind("Err:502: 'method' must be one of \"ml\"", 0), 0u) << why_typo;
  EXPECT_EQ(why_typo, thrown(fn_loadings, typo, cache));
  // more factors than six items identify
  std::vector<Arg> many{data, number_arg(5)};
  many.resize(5);
  const std::string why_many = reason("loadings", many);  // the LODE. prefix may be left out
  EXPECT_EQ(why_many.rfind("Err:502: ", 0), 0u) << why_many;
  EXPECT_NE(why_many.find("factor"), std::string::npos) << why_many;
  EXPECT_EQ(why_many, thrown(fn_loadings, many, cache));
  // a constant item
  std::vector<double> v = data.grid.values;
  for (std::size_t r = 0; r < data.grid.rows; ++r) v[r * 6 + 2] = 4.0;
  std::vector<Arg> constant{block(data.grid.rows, 6, v)};
  constant.resize(5);
  const std::string why_constant = reason("LODE.LOADINGS", constant);
  EXPECT_NE(why_constant.find("constant"), std::string::npos) << why_constant;
  EXPECT_EQ(why_constant, thrown(fn_loadings, constant, cache));
  // a formula that computes says so; an unknown function is named
  std::vector<Arg> good{data, number_arg(2)};
  good.resize(5);
  EXPECT_EQ(reason("LODE.LOADINGS", good), "no failure: LODE.LOADINGS computes with these arguments");
  try {
    reason("LODE.NOSUCH", {});
    ADD_FAILURE() << "an unknown function was accepted";
  } catch (const CellError& e) {
    EXPECT_STREQ(e.what(), "'function': Lode has no function LODE.NOSUCH");
  }
}

// LODE.REASON passes on as many arguments as the widest Lode function takes, so every formula's
// reason can be read.
TEST(AddinReason, PassesOnEveryArgumentOfTheWidestFunction) {
  const FunctionSpec* reason = find_by_display("LODE.REASON");
  ASSERT_NE(reason, nullptr);
  for (const FunctionSpec& f : function_table())
    if (&f != reason) {
      EXPECT_LE(f.args.size() + 1, reason->args.size()) << f.display;
    }
}

// LODE.NFACTORS, the former name of LODE.FACTORCOUNT, stays in the table and computes the same.
TEST(AddinTable, FormerNamesComputeAsTheirNewNames) {
  const FunctionSpec* now = find_by_display("LODE.FACTORCOUNT");
  const FunctionSpec* former = find_by_display("LODE.NFACTORS");
  ASSERT_NE(now, nullptr);
  ASSERT_NE(former, nullptr);
  EXPECT_EQ(former->method, "nfactors");  // stored in saved workbooks: never renamed
  EXPECT_EQ(former->compute, now->compute);
  EXPECT_EQ(former->args.size(), now->args.size());
  EXPECT_EQ(former->description.rfind("Former name of LODE.FACTORCOUNT", 0), 0u);
}

}  // namespace
}  // namespace lode::addin
