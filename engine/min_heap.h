// A binary min-heap of (key, id) pairs with lazy deletion left to the caller: entries that went
// stale are recognised and dropped when they reach the top. Ties break on id, so the order of
// events is deterministic.
#pragma once

#include <algorithm>
#include <cstdint>
#include <vector>

#include "types.h"

namespace yoke {

class MinHeap {
 public:
  struct Entry {
    Weight key;
    std::uint32_t id;
  };

  bool empty() const { return entries_.empty(); }
  std::size_t size() const { return entries_.size(); }
  const Entry& top() const { return entries_.front(); }

  void push(Weight key, std::uint32_t id) {
    ++pushes_;
    entries_.push_back({key, id});
    std::push_heap(entries_.begin(), entries_.end(), later);
  }
  void pop() {
    std::pop_heap(entries_.begin(), entries_.end(), later);
    entries_.pop_back();
  }
  void clear() { entries_.clear(); }
  std::uint64_t pushes() const { return pushes_; }
  std::size_t memory_bytes() const { return entries_.capacity() * sizeof(Entry); }

 private:
  static bool later(const Entry& x, const Entry& y) {
    return x.key != y.key ? x.key > y.key : x.id > y.id;
  }
  std::vector<Entry> entries_;
  std::uint64_t pushes_ = 0;
};

}  // namespace yoke
