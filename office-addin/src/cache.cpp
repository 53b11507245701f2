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

ResultCache::Work ResultCache::start_or_join(const std::string& key,
                                             std::function<std::shared_ptr<const void>()> compute) {
  std::lock_guard lock(mutex_);
  if (auto it = running_.find(key); it != running_.end()) return it->second;
  auto task = std::make_shared<std::packaged_task<std::shared_ptr<const void>()>>(std::move(compute));
  Work work = task->get_future().share();
  std::thread([task] { (*task)(); }).detach();  // the task owns what it computes from
  running_.emplace(key, work);
  return work;
}

void ResultCache::finished(const std::string& key) {
  std::lock_guard lock(mutex_);
  // Work for a key starts only when none is listed, so a listed work that has finished is this one
  // (or one whose result its own waiter collects): either way it is done and leaves the list.
  auto it = running_.find(key);
  if (it != running_.end() && it->second.wait_for(std::chrono::seconds(0)) == std::future_status::ready)
    running_.erase(it);
}

ResultCache::Stats ResultCache::stats() const {
  std::lock_guard lock(mutex_);
  return Stats{hits_, misses_, lru_.size(), bytes_};
}

void ResultCache::clear() {
  std::lock_guard lock(mutex_);
  running_.clear();  // work still running finishes on its own; its result is not collected
  lru_.clear();
  index_.clear();
  bytes_ = 0;
}

}  // namespace lode::addin
