// A bounded, thread-safe cache of analyses keyed by the input values and options, so the many
// formulas that read one analysis (loadings, uniquenesses, fit, ...) compute it once.
#pragma once

#include <cstddef>
#include <cstdint>
#include <functional>
#include <list>
#include <memory>
#include <mutex>
#include <string>
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
  std::shared_ptr<const void> find(const std::string& key);
  void insert(const std::string& key, std::shared_ptr<const void> value, std::size_t bytes);

  mutable std::mutex mutex_;
  std::list<Entry> lru_;  // most recently used first
  std::unordered_map<std::string, std::list<Entry>::iterator> index_;
  std::size_t max_entries_, max_bytes_, bytes_ = 0;
  std::uint64_t hits_ = 0, misses_ = 0;
};

}  // namespace lode::addin
