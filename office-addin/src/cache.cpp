#include "cache.hpp"

namespace lode::addin {

std::shared_ptr<const void> ResultCache::find(const std::string& key) {
  std::lock_guard lock(mutex_);
  auto it = index_.find(key);
  if (it == index_.end()) {
    ++misses_;
    return nullptr;
  }
  ++hits_;
  lru_.splice(lru_.begin(), lru_, it->second);
  return it->second->value;
}

void ResultCache::insert(const std::string& key, std::shared_ptr<const void> value, std::size_t bytes) {
  if (bytes > max_bytes_) return;  // too big to keep
  std::lock_guard lock(mutex_);
  if (auto it = index_.find(key); it != index_.end()) {  // computed twice by two callers at once
    lru_.splice(lru_.begin(), lru_, it->second);
    return;
  }
  lru_.push_front(Entry{key, std::move(value), bytes});
  index_.emplace(key, lru_.begin());
  bytes_ += bytes;
  while (!lru_.empty() && (lru_.size() > max_entries_ || bytes_ > max_bytes_)) {
    bytes_ -= lru_.back().bytes;
    index_.erase(lru_.back().key);
    lru_.pop_back();
  }
}

ResultCache::Stats ResultCache::stats() const {
  std::lock_guard lock(mutex_);
  return Stats{hits_, misses_, lru_.size(), bytes_};
}

void ResultCache::clear() {
  std::lock_guard lock(mutex_);
  lru_.clear();
  index_.clear();
  bytes_ = 0;
}

}  // namespace lode::addin
