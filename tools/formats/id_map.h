// External 64-bit vertex ids -> dense yoke::Vertex indices, numbered in order of first
// appearance.
//
// The loader looks up two ids per edge (2x10^6 lookups on the largest graphs), so this is on
// its hot path. Small ids (below `direct_limit`, the common case of ids 0..n-1) live in a flat
// array indexed by id: a few MB that stay in cache. Other ids go to an open-addressing table
// with linear probing: one allocation, no node per id, several times faster than
// std::unordered_map. Iteration order never decides anything: the numbering comes from the
// order of intern() calls alone.
#pragma once

#include <cstdint>
#include <vector>

#include "yoke/types.h"

namespace yoke::formats {

class IdMap {
 public:
  // Ids below `direct_limit` use the flat array; it grows with the largest such id seen, so
  // it costs at most 4 x direct_limit bytes.
  explicit IdMap(std::uint64_t direct_limit = kDefaultDirectLimit);
  // Builds the map of an existing numbering: ids[v] is the external id of dense vertex v.
  // Precondition: the ids are distinct.
  explicit IdMap(const std::vector<std::uint64_t>& ids);

  // The dense index of `id`, giving it the next index if it is new. Returns kNoVertex when
  // `id` is new and every dense index is taken (2^32 - 1 vertices).
  Vertex intern(std::uint64_t id);

  // The dense index of `id`, or kNoVertex if it was never interned. O(1) expected.
  Vertex find(std::uint64_t id) const;

  std::size_t size() const { return ids_.size(); }
  // ids()[v] is the external id of dense vertex v.
  const std::vector<std::uint64_t>& ids() const { return ids_; }
  std::vector<std::uint64_t> release_ids() { return std::move(ids_); }

  static constexpr std::uint64_t kDefaultDirectLimit = std::uint64_t{1} << 20;

 private:
  struct Slot {
    std::uint64_t id = 0;
    Vertex vertex = kNoVertex;  // kNoVertex marks an empty slot
  };

  Vertex next_vertex(std::uint64_t id);
  Vertex intern_direct(std::uint64_t id);
  Vertex intern_hashed(std::uint64_t id);
  std::size_t home_slot(std::uint64_t id) const;
  void grow_slots();

  std::uint64_t direct_limit_;
  std::vector<Vertex> direct_;  // direct_[id] for id < direct_limit_, kNoVertex if unseen
  std::vector<Slot> slots_;     // size is 0 or a power of two, at most half full
  std::size_t hashed_count_ = 0;
  std::vector<std::uint64_t> ids_;
};

}  // namespace yoke::formats
