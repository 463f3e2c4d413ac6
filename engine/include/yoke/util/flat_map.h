// A hash map from 64-bit keys to 32-bit values (slots, edge indices) with open addressing and
// linear probing: one flat array, no allocation per entry, erase by backward shift (no
// tombstones). The pool looks up a vertex key or an endpoint pair for every event it applies.
// Never iterated, so its order cannot leak into results.
#pragma once

#include <cstdint>
#include <vector>

namespace yoke {

class FlatMap {
 public:
  static constexpr std::uint32_t kAbsent = 0xffffffffu;  // also marks an empty cell

  std::size_t size() const { return size_; }

  // The value stored for `key`, or kAbsent. O(1) expected.
  std::uint32_t find(std::uint64_t key) const {
    if (size_ == 0) return kAbsent;
    for (std::size_t i = home(key);; i = (i + 1) & mask_) {
      const Cell& cell = cells_[i];
      if (cell.value == kAbsent) return kAbsent;
      if (cell.key == key) return cell.value;
    }
  }

  // Starts loading the cell where find(key) begins, so that several look-ups' cache misses
  // overlap instead of following one another. Changes nothing.
  void prefetch(std::uint64_t key) const {
    if (!cells_.empty()) __builtin_prefetch(&cells_[home(key)]);
  }

  // Precondition: `key` is absent and value != kAbsent.
  void insert(std::uint64_t key, std::uint32_t value) {
    if (10 * (size_ + 1) > 7 * cells_.size()) grow();
    std::size_t i = home(key);
    while (cells_[i].value != kAbsent) i = (i + 1) & mask_;
    cells_[i] = {key, value};
    ++size_;
  }

  // Removes `key` if present.
  void erase(std::uint64_t key) {
    if (size_ == 0) return;
    std::size_t hole = home(key);
    while (cells_[hole].key != key || cells_[hole].value == kAbsent) {
      if (cells_[hole].value == kAbsent) return;
      hole = (hole + 1) & mask_;
    }
    // Shift back every later cell of the run whose home does not lie between hole and it.
    for (std::size_t i = (hole + 1) & mask_; cells_[i].value != kAbsent; i = (i + 1) & mask_) {
      const std::size_t want = home(cells_[i].key);
      if (((i - want) & mask_) >= ((i - hole) & mask_)) {
        cells_[hole] = cells_[i];
        hole = i;
      }
    }
    cells_[hole].value = kAbsent;
    --size_;
  }

 private:
  struct Cell {
    std::uint64_t key = 0;
    std::uint32_t value = kAbsent;
  };

  std::size_t home(std::uint64_t key) const {
    // The finaliser of splitmix64: consecutive keys and slot pairs spread over the table.
    key ^= key >> 30;
    key *= 0xbf58476d1ce4e5b9ULL;
    key ^= key >> 27;
    key *= 0x94d049bb133111ebULL;
    key ^= key >> 31;
    return static_cast<std::size_t>(key) & mask_;
  }

  void grow() {
    std::vector<Cell> old = std::move(cells_);
    cells_.assign(old.empty() ? 64 : 2 * old.size(), Cell{});
    mask_ = cells_.size() - 1;
    size_ = 0;
    for (const Cell& cell : old) {
      if (cell.value != kAbsent) insert(cell.key, cell.value);
    }
  }

  std::vector<Cell> cells_;
  std::size_t mask_ = 0;
  std::size_t size_ = 0;
};

}  // namespace yoke
