// A hash map from 64-bit keys to 32-bit values (slots, edge indices): an OpenTable (one flat
// array, 16-byte cells, no allocation per entry) with the answer "absent" as a value. The pool
// looks up a vertex key or an endpoint pair for every event it applies.
#pragma once

#include <cstdint>

#include "yoke/util/open_table.h"

namespace yoke {

class FlatMap {
 public:
  static constexpr std::uint32_t kAbsent = 0xffffffffu;

  std::size_t size() const { return table_.size(); }

  // The value stored for `key`, or kAbsent. O(1) expected.
  std::uint32_t find(std::uint64_t key) const {
    const std::uint32_t* value = table_.find(key);
    return value != nullptr ? *value : kAbsent;
  }

  // Precondition: `key` is absent and value != kAbsent.
  void insert(std::uint64_t key, std::uint32_t value) { table_.insert_new(key, value); }

  // Removes `key` if present.
  void erase(std::uint64_t key) { table_.erase(key); }

 private:
  // The keys are mixed by the table: they need no hash of their own.
  struct SameKey {
    std::uint64_t operator()(std::uint64_t key) const { return key; }
  };
  OpenTable<std::uint64_t, std::uint32_t, SameKey> table_;
};

}  // namespace yoke
