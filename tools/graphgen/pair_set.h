// A set of unordered vertex pairs {a, b}, for rejecting duplicate edges while generating.
// Open addressing with linear probing: millions of inserts in well under a second, where
// std::unordered_set would allocate a node per pair.
#pragma once

#include <cstdint>
#include <utility>
#include <vector>

#include "yoke/types.h"

namespace yoke::gen {

class PairSet {
 public:
  explicit PairSet(std::size_t expected = 16) { rehash(capacity_for(expected)); }

  // Adds {a, b} (either orientation); false when it was already there.
  bool insert(Vertex a, Vertex b) {
    if (2 * (size_ + 1) > slots_.size()) rehash(2 * slots_.size());
    if (!place(key(a, b))) return false;
    ++size_;
    return true;
  }

  bool contains(Vertex a, Vertex b) const {
    const std::uint64_t k = key(a, b);
    for (std::size_t i = slot(k);; i = (i + 1) & mask_) {
      if (slots_[i] == k) return true;
      if (slots_[i] == 0) return false;
    }
  }

  std::size_t size() const { return size_; }

 private:
  std::vector<std::uint64_t> slots_;  // key + 1 never collides with 0, the empty marker
  std::size_t mask_ = 0;
  int shift_ = 0;  // 64 - log2(capacity): the slot is the top bits of a multiplicative hash
  std::size_t size_ = 0;

  static std::uint64_t key(Vertex a, Vertex b) {
    if (a > b) std::swap(a, b);
    return ((static_cast<std::uint64_t>(a) << 32) | b) + 1;
  }
  static std::size_t capacity_for(std::size_t expected) {
    std::size_t capacity = 16;
    while (capacity < 2 * expected) capacity *= 2;
    return capacity;
  }
  std::size_t slot(std::uint64_t k) const {
    return static_cast<std::size_t>((k * 0x9E3779B97F4A7C15ULL) >> shift_);
  }
  bool place(std::uint64_t k) {
    for (std::size_t i = slot(k);; i = (i + 1) & mask_) {
      if (slots_[i] == k) return false;
      if (slots_[i] == 0) {
        slots_[i] = k;
        return true;
      }
    }
  }
  void rehash(std::size_t capacity) {
    std::vector<std::uint64_t> old = std::move(slots_);
    slots_.assign(capacity, 0);
    mask_ = capacity - 1;
    shift_ = 64;
    for (std::size_t c = capacity; c > 1; c /= 2) --shift_;
    for (std::uint64_t k : old) {
      if (k != 0) place(k);
    }
  }
};

}  // namespace yoke::gen
