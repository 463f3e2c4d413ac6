// A monotone priority queue of bound events (Ahuja-Mehlhorn-Orlin-Tarjan radix heap): every
// key pushed is >= the last minimum taken, which holds for the dual-step bounds because the
// running dual total only grows. Push is O(1); finding the minimum is amortised O(log K) for a
// key range K, with sequential memory access instead of a binary heap's scattered swaps.
// Among equal keys, lower kinds come first (kinds 0..7); an entry pushed late at the current key
// with a kind lower than the one just taken is due next (newest first). Entries of equal key and
// kind come out first in, first out, so a search at one dual level grows breadth first and finds
// short augmenting paths before long ones: a repair stays near its change. The order is a
// heuristic for speed, not a guarantee the caller may rely on; it is fixed, so runs are
// deterministic. Keys are in [0, 2^57).
#pragma once

#include <algorithm>
#include <array>
#include <bit>
#include <cstdint>
#include <vector>

#include "yoke/types.h"

namespace yoke {

class RadixHeap {
 public:
  struct Entry {
    Weight key;
    std::uint32_t id;
    std::uint32_t kind;  // 0..7
  };

  // Forgets every entry; the next keys must be >= floor >= 0.
  void reset(Weight floor) {
    for (auto& bucket : buckets_) bucket.clear();
    head_ = 0;
    late_.clear();
    last_ = floor * kKinds;
    size_ = 0;
  }

  bool empty() const { return size_ == 0; }
  std::uint64_t pushes() const { return pushes_; }

  // Preconditions: key >= the key of the last top(); key < 2^57; kind < 8.
  // Forced inline, as BlossomForest::top: the search pushes from its per-edge loop.
  [[gnu::always_inline]] void push(Weight key, std::uint32_t id, std::uint32_t kind) {
    // A kind that ranks before the one just taken, at the same key, is simply due next.
    const Weight order = key * kKinds + static_cast<Weight>(kind);
    const bool late = order < last_;
    std::vector<Slot>& to = late ? late_ : buckets_[bucket_of(order)];
    to.push_back(Slot::make(late ? last_ : order, id, kind));
    ++size_;
    ++pushes_;
  }

  // Precondition: !empty(). The entry with the smallest key; pop() removes it (call top()
  // first: it is what brings the smallest entry to the front).
  Entry top() {
    if (!late_.empty()) return late_.back().entry();
    if (head_ == buckets_[0].size()) {
      buckets_[0].clear();
      head_ = 0;
      refill();
    }
    return buckets_[0][head_].entry();
  }

  void pop() {
    if (!late_.empty()) {
      late_.pop_back();
    } else {
      ++head_;
    }
    --size_;
  }

  std::size_t size() const { return size_; }

  // Drops every entry for which keep(Entry) is false, keeping the order of the others. O(size).
  template <class Keep>
  void compact(Keep&& keep) {
    buckets_[0].erase(buckets_[0].begin(), buckets_[0].begin() + static_cast<std::ptrdiff_t>(head_));
    head_ = 0;
    auto sweep = [&](std::vector<Slot>& bucket) {
      std::size_t kept = 0;
      for (const Slot& slot : bucket) {
        if (keep(slot.entry())) bucket[kept++] = slot;
      }
      size_ -= bucket.size() - kept;
      bucket.resize(kept);
    };
    sweep(late_);
    for (auto& bucket : buckets_) sweep(bucket);
  }

 private:
  std::size_t bucket_of(Weight key) const {
    const auto bits = static_cast<std::uint64_t>(key) ^ static_cast<std::uint64_t>(last_);
    return bits == 0 ? 0 : 64 - static_cast<std::size_t>(std::countl_zero(bits));
  }

  // Moves the lowest non-empty bucket down around its minimum, which becomes the new floor.
  void refill() {
    std::size_t i = 1;
    while (buckets_[i].empty()) ++i;
    Weight least = buckets_[i].front().order();
    for (const Slot& slot : buckets_[i]) least = std::min(least, slot.order());
    last_ = least;
    std::vector<Slot>& spill = buckets_[i];
    for (const Slot& slot : spill) buckets_[bucket_of(slot.order())].push_back(slot);
    // A bucket that once held a burst would otherwise keep that capacity for good.
    if (spill.capacity() > kKeptCapacity) {
      std::vector<Slot>().swap(spill);
    } else {
      spill.clear();
    }
  }

  static constexpr Weight kKinds = 8;

  // 12 bytes an entry: the ordering key 8 * key + kind (raised to the floor when pushed late,
  // so the kind is kept apart too) in two halves, the kind in the top three bits of the high
  // half (an order is below 2^60), and the id.
  struct Slot {
    std::uint32_t order_low;
    std::uint32_t order_high;  // bits 0..28: the order's bits 32..60; bits 29..31: the kind
    std::uint32_t id;

    static Slot make(Weight order, std::uint32_t id, std::uint32_t kind) {
      const auto bits = static_cast<std::uint64_t>(order);
      return {static_cast<std::uint32_t>(bits), static_cast<std::uint32_t>(bits >> 32) | kind << 29, id};
    }
    Weight order() const {
      return static_cast<Weight>(std::uint64_t{order_high & kHighMask} << 32 | order_low);
    }
    Entry entry() const { return {order() / kKinds, id, order_high >> 29}; }
    static constexpr std::uint32_t kHighMask = (std::uint32_t{1} << 29) - 1;
  };
  static constexpr std::size_t kKeptCapacity = 4096;
  std::array<std::vector<Slot>, 65> buckets_;
  Weight last_ = 0;
  std::size_t head_ = 0;  // bucket 0 is a queue: entries before head_ were taken
  std::vector<Slot> late_;  // lower kinds pushed at the current key: a stack, due first
  std::size_t size_ = 0;
  std::uint64_t pushes_ = 0;
};

}  // namespace yoke
