// A bounded, thread-safe cache of analyses keyed by the input values and options, so the many
// formulas that read one analysis (loadings, uniquenesses, fit, ...) compute it once.
#pragma once

#include <chrono>
#include <cstddef>
#include <cstdint>
#include <functional>
#include <future>
#include <list>
#include <memory>
#include <mutex>
#include <string>
#include <thread>
#include <unordered_map>

namespace lode::addin {

// Builds a cache key: a byte string of everything the result depends on. Equal keys mean equal
// inputs (the whole key is compared, the hash only picks the bucket).
class KeyBuilder {
 public:
  explicit KeyBuilder(std::string_view tag) { add(tag); }
  KeyBuilder& add(std::string_view s) {
    add(static_cast<std::uint64_t>(s.size()));
    bytes_.append(s.data(), s.size());
    return *this;
  }
  KeyBuilder& add(std::uint64_t v) {
    bytes_.append(reinterpret_cast<const char*>(&v), sizeof v);
    return *this;
  }
  KeyBuilder& add(double v) {
    bytes_.append(reinterpret_cast<const char*>(&v), sizeof v);
    return *this;
  }
  KeyBuilder& add(const double* v, std::size_t n) {
    add(static_cast<std::uint64_t>(n));
    bytes_.append(reinterpret_cast<const char*>(v), n * sizeof(double));
    return *this;
  }
  std::string take() { return std::move(bytes_); }

 private:
  std::string bytes_;
};

class ResultCache {
 public:
  explicit ResultCache(std::size_t max_entries = 64, std::size_t max_bytes = std::size_t{256} << 20)
      : max_entries_(max_entries), max_bytes_(max_bytes) {}

  // The cached value for `key`, or the value `compute()` returns (then cached). `compute` runs
  // outside the lock; a failure (exception) is not cached. `bytes` estimates the value's size.
  template <class T>
  std::shared_ptr<const T> get_or_compute(const std::string& key, const std::function<std::shared_ptr<const T>()>& compute,
                                          std::size_t bytes) {
    if (auto hit = find(key)) return std::static_pointer_cast<const T>(hit);
    std::shared_ptr<const T> value = compute();
    insert(key, value, bytes + key.size());
    return value;
  }

  // As get_or_compute, but `compute` runs on a thread of its own and the caller waits for it only
  // until `until`: then nullptr, while the work goes on. A later call with the same key joins that
  // work instead of starting a second copy, and once it has finished takes its result into the cache
  // (a failure is not cached: the call after it computes again). `compute` must own everything it
  // reads (the caller may be gone when it runs); it never touches the cache.
  template <class T>
  std::shared_ptr<const T> get_or_compute_until(const std::string& key, std::function<std::shared_ptr<const T>()> compute,
                                                std::size_t bytes, std::chrono::steady_clock::time_point until) {
    if (auto hit = find(key)) return std::static_pointer_cast<const T>(hit);
    if (std::chrono::steady_clock::now() > until) return nullptr;  // no time left to start anything
    Work work = start_or_join(key, [compute = std::move(compute)]() -> std::shared_ptr<const void> { return compute(); });
    if (work.wait_until(until) != std::future_status::ready) return nullptr;
    finished(key);
    std::shared_ptr<const void> value = work.get();  // the work's own error, if any
    insert(key, value, bytes + key.size());
    return std::static_pointer_cast<const T>(value);
  }

  struct Stats {
    std::uint64_t hits = 0, misses = 0;
    std::size_t entries = 0, bytes = 0;
  };
  Stats stats() const;
  void clear();

 private:
  struct Entry {
    std::string key;
    std::shared_ptr<const void> value;
    std::size_t bytes;
  };
  using Work = std::shared_future<std::shared_ptr<const void>>;
  std::shared_ptr<const void> find(const std::string& key);
  Work start_or_join(const std::string& key, std::function<std::shared_ptr<const void>()> compute);
  void finished(const std::string& key);
  void insert(const std::string& key, std::shared_ptr<const void> value, std::size_t bytes);

  mutable std::mutex mutex_;
  std::list<Entry> lru_;  // most recently used first
  std::unordered_map<std::string, std::list<Entry>::iterator> index_;
  std::unordered_map<std::string, Work> running_;  // work started by get_or_compute_until, not yet collected
  std::size_t max_entries_, max_bytes_, bytes_ = 0;
  std::uint64_t hits_ = 0, misses_ = 0;
};

}  // namespace lode::addin
