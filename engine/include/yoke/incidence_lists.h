// Every vertex's incidence list in one flat arena: a vertex's entries sit next to each other
// (the far end, the edge and its weight together, 16 bytes), and lists follow each other in
// the order of the last compaction, so a scan reads one contiguous run after one index look-up.
//
// Each list owns a block of the arena with room to spare. A list that outgrows its block moves
// to a block of the next power-of-two class (a freed block of that class, or fresh room at the
// arena's end); its old block goes to the free blocks of its class. When the arena has no room
// left, it is rebuilt compacted (every list in vertex order, with slack): that rebuild is the
// arena's growth step, so push() is amortised O(1) like a vector's.
#pragma once

#include <cstddef>
#include <cstdint>
#include <span>
#include <vector>

#include "yoke/types.h"
#include "yoke/util/huge_page_allocator.h"

namespace yoke {

// One end of an edge as seen from a vertex: the vertex at the far end, the edge's index and a
// copy of its weight (the search reads it for every edge it scans).
struct Incidence {
  Vertex other;
  EdgeIndex edge;
  Weight w;
};

class IncidenceLists {
 public:
  IncidenceLists() = default;
  explicit IncidenceLists(std::size_t vertex_count) : lists_(vertex_count) {}

  // Lists laid out in vertex order, list v with room for exactly room[v] entries (a graph built
  // in one pass knows its degrees). O(n + sum of room).
  static IncidenceLists with_room(std::span<const std::uint32_t> room);

  std::size_t vertex_count() const { return lists_.size(); }
  // Adds empty lists up to `vertex_count`. Amortised O(1) per list added.
  void grow_vertices(std::size_t vertex_count);

  // O(1). The span stays valid until the next push(), remove() or compact() on any list (a
  // push may move lists, and the arena with them).
  std::span<const Incidence> of(Vertex v) const {
    const List& list = lists_[v];
    return {arena_.data() + list.begin, list.size};
  }
  // The entry at position `at` of v's list (at < size), to change its weight in place. O(1).
  Incidence& at(Vertex v, std::uint32_t at) { return arena_[lists_[v].begin + at]; }

  // Appends to v's list and returns the entry's position in it. Amortised O(1); O(size of v's
  // list) when the list moves to a bigger block, O(n + entries) when the arena is rebuilt.
  std::uint32_t push(Vertex v, const Incidence& entry);
  // Swap-remove: the last entry of v's list fills the hole at `at`. Returns the entry that moved
  // (now at `at`), or nullptr when `at` was the last position. O(1); the block keeps its room.
  const Incidence* remove(Vertex v, std::uint32_t at);

  // Rebuilds the arena with every list in vertex order and modest slack, so that lists moved
  // by growth sit in order again and freed blocks are given back. Positions within each list
  // do not change. O(n + entries). Keeps no spare block (a graph built in one go, then solved).
  void compact();
  // compact() when the entries moved to new blocks since the last rebuild reach a quarter of
  // (lists + entries): then O(n + entries), paid for by those moves; otherwise O(1). A graph
  // edited by a stream (the pool's) rebuilds this way: the block it leaves is kept (Spare).
  void tidy();

  std::size_t entries() const { return entries_; }
  // Room of v's block (size <= room): for tests and memory accounting.
  std::uint32_t room(Vertex v) const { return lists_[v].room; }
  // Slots of the block kept for the next rebuild (Spare), 0 when none: for tests.
  std::size_t spare_capacity() const { return spare_.arena.capacity(); }
  // Arena slots in use by blocks, free blocks included.
  std::size_t arena_size() const { return arena_.size(); }

 private:
  struct List {
    std::size_t begin = 0;   // first slot of the block in arena_
    std::uint32_t size = 0;  // entries in use
    std::uint32_t room = 0;  // slots of the block
  };
  static constexpr std::uint32_t kFirstRoom = 4;

  // Moves v's list to a block with room >= `room` (a power of two).
  void move_list(Vertex v, std::uint32_t room);
  // Rebuilds the arena (as compact()) with at least `extra` free slots at its end.
  void rebuild(std::size_t extra);
  static std::uint32_t room_class(std::uint32_t room);  // floor(log2(room)), room >= 1

  using Arena = std::vector<Incidence, HugePageAllocator<Incidence>>;
  // The arena a rebuild by growth or tidy() left, kept as the next rebuild's target: a pool's
  // stream rebuilds its arena every few commits, and a fresh block of that size is fresh pages
  // the kernel zeroes (huge pages for 4 MiB and more): with the daemon's window-sized commits
  // that zeroing was ~6% of a replay's CPU samples, <1% with the spare. Costs one more arena
  // per pool. A copy of the lists starts without one; compact() frees it.
  struct Spare {
    Spare() = default;
    Spare(const Spare&) {}
    Spare(Spare&&) = default;
    Spare& operator=(const Spare&) {
      arena = Arena();
      return *this;
    }
    Spare& operator=(Spare&&) = default;
    Arena arena;
  };
  Arena arena_;
  Spare spare_;
  std::vector<List> lists_;
  struct Block {
    std::size_t begin;
    std::uint32_t room;
  };
  // Freed blocks by room_class: a block of class k has room >= 2^k.
  std::vector<std::vector<Block>> free_blocks_;
  std::size_t entries_ = 0;
  std::size_t moved_ = 0;  // entries copied by move_list since the last rebuild
};

}  // namespace yoke
