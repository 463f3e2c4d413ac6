// A hash map with open addressing and linear probing: one flat array of cells, no allocation
// per entry, erase by backward shift (no tombstones). A key's hash (`Hash`) is mixed again
// (the finaliser of splitmix64), so that consecutive keys and an identity hash still spread
// over the table. Never iterated, so its order cannot leak into results. FlatMap is this table
// for the pool's vertex keys and endpoint pairs; the batch checker keeps its overlay in it.
#pragma once

#include <cstddef>
#include <cstdint>
#include <functional>
#include <utility>
#include <vector>

namespace yoke {

template <class Key, class Value, class Hash = std::hash<Key>>
class OpenTable {
 public:
  std::size_t size() const { return size_; }

  // The value stored for `key`, or nullptr. Good until the next insert or erase. O(1) expected.
  const Value* find(const Key& key) const {
    if (size_ == 0) return nullptr;
    for (std::size_t i = home(key);; i = (i + 1) & mask_) {
      const Cell& cell = cells_[i];
      if (!cell.used) return nullptr;
      if (cell.key == key) return &cell.value;
    }
  }
  Value* find(const Key& key) {
    return const_cast<Value*>(static_cast<const OpenTable&>(*this).find(key));
  }

  // The value of `key`, stored as `value` first if the key was absent (then `true`). The
  // pointer is good until the next insert or erase. Amortised O(1) expected.
  std::pair<Value*, bool> try_emplace(const Key& key, const Value& value) {
    if (10 * (size_ + 1) > 7 * cells_.size()) grow();
    std::size_t i = home(key);
    for (; cells_[i].used; i = (i + 1) & mask_) {
      if (cells_[i].key == key) return {&cells_[i].value, false};
    }
    cells_[i] = Cell{key, value, true};
    ++size_;
    return {&cells_[i].value, true};
  }

  // Stores `value` for `key`, present or not. Amortised O(1) expected.
  void insert_or_assign(const Key& key, const Value& value) {
    const auto [stored, inserted] = try_emplace(key, value);
    if (!inserted) *stored = value;
  }

  // try_emplace without looking for the key. Precondition: `key` is absent.
  void insert_new(const Key& key, const Value& value) {
    if (10 * (size_ + 1) > 7 * cells_.size()) grow();
    std::size_t i = home(key);
    while (cells_[i].used) i = (i + 1) & mask_;
    cells_[i] = Cell{key, value, true};
    ++size_;
  }

  // Removes `key` if present.
  void erase(const Key& key) {
    if (size_ == 0) return;
    std::size_t hole = home(key);
    while (!(cells_[hole].used && cells_[hole].key == key)) {
      if (!cells_[hole].used) return;
      hole = (hole + 1) & mask_;
    }
    // Shift back every later cell of the run whose home does not lie between hole and it.
    for (std::size_t i = (hole + 1) & mask_; cells_[i].used; i = (i + 1) & mask_) {
      const std::size_t want = home(cells_[i].key);
      if (((i - want) & mask_) >= ((i - hole) & mask_)) {
        cells_[hole] = cells_[i];
        hole = i;
      }
    }
    cells_[hole] = Cell{};
    --size_;
  }

  // Removes every key. The cells are kept, so that the next fill does not grow them again,
  // unless they are far more than the table held: one big fill (a new pool's base graph) would
  // otherwise make every later clear() walk all of them. O(cells).
  void clear() {
    if (cells_.size() > 4 * size_ + 64) {
      cells_.clear();
      cells_.shrink_to_fit();
      mask_ = 0;
    } else {
      for (Cell& cell : cells_) cell = Cell{};
    }
    size_ = 0;
  }

 private:
  struct Cell {
    Key key{};
    Value value{};
    bool used = false;
  };

  std::size_t home(const Key& key) const {
    std::uint64_t h = static_cast<std::uint64_t>(Hash()(key));
    h ^= h >> 30;
    h *= 0xbf58476d1ce4e5b9ULL;
    h ^= h >> 27;
    h *= 0x94d049bb133111ebULL;
    h ^= h >> 31;
    return static_cast<std::size_t>(h) & mask_;
  }

  void grow() {
    std::vector<Cell> old = std::move(cells_);
    cells_.assign(old.empty() ? 64 : 2 * old.size(), Cell{});
    mask_ = cells_.size() - 1;
    size_ = 0;
    for (const Cell& cell : old) {
      if (cell.used) insert_new(cell.key, cell.value);
    }
  }

  std::vector<Cell> cells_;
  std::size_t mask_ = 0;
  std::size_t size_ = 0;
};

}  // namespace yoke
