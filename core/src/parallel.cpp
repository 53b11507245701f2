#include "lode/parallel.hpp"

#include <atomic>
#include <chrono>
#include <condition_variable>
#include <exception>
#include <mutex>
#include <thread>
#include <vector>

namespace lode {

int default_thread_count() noexcept {
  const unsigned n = std::thread::hardware_concurrency();
  return n == 0 ? 1 : static_cast<int>(n);
}

void parallel_for(Index count, int threads, const std::function<void(Index)>& body, const ProgressFn& progress) {
  if (count <= 0) {
    if (progress) progress(0, 0);
    return;
  }
  // A first report before any work, so a caller who has already asked to stop is honoured at once,
  // however quickly the work would have finished.
  if (progress && !progress(0, count)) throw Error(ErrorCode::cancelled, "cancelled by the caller");
  if (threads <= 0) threads = default_thread_count();
  if (threads > count) threads = static_cast<int>(count);

  if (threads == 1) {
    // One thread: the units run here, in order, with no thread to start (which costs more than many a
    // small unit). Progress and cancellation are checked between units, about every 50 ms.
    using Clock = std::chrono::steady_clock;
    auto last = Clock::now();
    for (Index i = 0; i < count; ++i) {
      body(i);
      if (progress && i + 1 < count && Clock::now() - last >= std::chrono::milliseconds(50)) {
        if (!progress(i + 1, count)) throw Error(ErrorCode::cancelled, "cancelled by the caller");
        last = Clock::now();
      }
    }
    if (progress) progress(count, count);  // the final report; the work is done, so no cancel here
    return;
  }

  std::atomic<Index> next{0};
  std::atomic<Index> done{0};
  std::atomic<bool> stop{false};
  std::mutex mutex;
  std::condition_variable finished;
  std::exception_ptr failure;
  int running = threads;

  auto worker = [&] {
    for (;;) {
      if (stop.load(std::memory_order_relaxed)) break;
      const Index i = next.fetch_add(1);
      if (i >= count) break;
      try {
        body(i);
      } catch (...) {
        std::lock_guard<std::mutex> lock(mutex);
        if (!failure) failure = std::current_exception();
        stop = true;
        break;
      }
      done.fetch_add(1);
    }
    std::lock_guard<std::mutex> lock(mutex);
    if (--running == 0) finished.notify_all();
  };

  std::vector<std::thread> pool;
  pool.reserve(static_cast<std::size_t>(threads));
  try {
    for (int t = 0; t < threads; ++t) pool.emplace_back(worker);
  } catch (...) {
    // Could not start a thread: the ones started finish the work.
    std::lock_guard<std::mutex> lock(mutex);
    running -= threads - static_cast<int>(pool.size());
    if (pool.empty()) throw Error(ErrorCode::internal, "could not start a worker thread");
  }

  bool cancelled = false;
  {
    std::unique_lock<std::mutex> lock(mutex);
    while (running > 0) {
      finished.wait_for(lock, std::chrono::milliseconds(50));
      if (progress && running > 0 && !stop) {
        lock.unlock();
        const bool go_on = progress(done.load(), count);
        lock.lock();
        if (!go_on) {
          cancelled = true;
          stop = true;
        }
      }
    }
  }
  for (auto& t : pool) t.join();
  if (failure) std::rethrow_exception(failure);
  if (cancelled) throw Error(ErrorCode::cancelled, "cancelled by the caller");
  if (progress) progress(done.load(), count);  // the final report; the work is done, so no cancel here
}

}  // namespace lode
