// parallel_for: every unit runs once whatever the thread count, one thread means the calling thread,
// progress and cancellation, and the first failure is rethrown.
#include "lode/parallel.hpp"

#include <gtest/gtest.h>

#include <atomic>
#include <chrono>
#include <stdexcept>
#include <thread>
#include <vector>

using namespace lode;

TEST(ParallelFor, EveryUnitRunsOnceWhateverTheThreadCount) {
  for (int threads : {1, 2, 3, 0}) {
    std::vector<std::atomic<int>> hits(1000);
    parallel_for(1000, threads, [&](Index i) { hits[static_cast<std::size_t>(i)]++; });
    for (const auto& h : hits) ASSERT_EQ(h.load(), 1) << threads << " threads";
  }
  parallel_for(0, 2, [](Index) { FAIL() << "no unit to run"; });
}

TEST(ParallelFor, OneThreadIsTheCallingThreadInOrder) {
  const auto caller = std::this_thread::get_id();
  std::vector<Index> order;
  parallel_for(50, 1, [&](Index i) {
    EXPECT_EQ(std::this_thread::get_id(), caller);
    order.push_back(i);
  });
  ASSERT_EQ(order.size(), 50u);
  for (Index i = 0; i < 50; ++i) EXPECT_EQ(order[static_cast<std::size_t>(i)], i);
  // A single unit, however many threads are allowed, also runs here.
  parallel_for(1, 4, [&](Index) { EXPECT_EQ(std::this_thread::get_id(), caller); });
}

TEST(ParallelFor, ProgressCancelAndFailuresWithOneThreadAndWithSeveral) {
  for (int threads : {1, 2}) {
    SCOPED_TRACE(::testing::Message() << threads << " threads");
    // Progress: once before any work (0 done) and once at the end (all done), always from the caller.
    const auto caller = std::this_thread::get_id();
    std::vector<std::int64_t> reports;
    parallel_for(
        20, threads, [](Index) {},
        [&](std::int64_t done, std::int64_t total) {
          EXPECT_EQ(std::this_thread::get_id(), caller);
          EXPECT_EQ(total, 20);
          reports.push_back(done);
          return true;
        });
    ASSERT_GE(reports.size(), 2u);
    EXPECT_EQ(reports.front(), 0);
    EXPECT_EQ(reports.back(), 20);
    // Cancel: the second report (after about 50 ms of 1 ms units) says stop; most units never run.
    std::atomic<int> ran{0};
    int calls = 0;
    try {
      parallel_for(
          100000, threads,
          [&](Index) {
            ++ran;
            std::this_thread::sleep_for(std::chrono::milliseconds(1));
          },
          [&](std::int64_t, std::int64_t) { return ++calls < 2; });
      ADD_FAILURE() << "no cancellation";
    } catch (const Error& e) {
      EXPECT_EQ(e.code(), ErrorCode::cancelled);
    }
    EXPECT_EQ(calls, 2);
    EXPECT_LT(ran.load(), 5000);
    // The first failure is rethrown in the calling thread; later units are skipped.
    std::atomic<int> after{0};
    EXPECT_THROW(parallel_for(1000, threads,
                              [&](Index i) {
                                if (i == 3) throw std::runtime_error("unit 4 failed");
                                if (i > 500) ++after;
                              }),
                 std::runtime_error);
    if (threads == 1) {
      EXPECT_EQ(after.load(), 0);
    }
  }
}
