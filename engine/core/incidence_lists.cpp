#include "yoke/incidence_lists.h"

#include <algorithm>
#include <bit>
#include <utility>

#include "yoke/util/dcheck.h"

namespace yoke {

namespace {

// Room given to a list of `size` entries by a rebuild: a quarter more, at least two, so that a
// few new edges (a stream's common case) fit without moving the list.
std::uint32_t rebuilt_room(std::uint32_t size) { return size + std::max<std::uint32_t>(2, size / 4); }

}  // namespace

IncidenceLists IncidenceLists::with_room(std::span<const std::uint32_t> room) {
  IncidenceLists lists(room.size());
  std::size_t next = 0;
  for (std::size_t v = 0; v < room.size(); ++v) {
    lists.lists_[v] = {next, 0, room[v]};
    next += room[v];
  }
  lists.arena_.resize(next);
  return lists;
}

void IncidenceLists::grow_vertices(std::size_t vertex_count) {
  if (vertex_count > lists_.size()) lists_.resize(vertex_count);
}

std::uint32_t IncidenceLists::room_class(std::uint32_t room) {
  return static_cast<std::uint32_t>(std::bit_width(room) - 1);
}

std::uint32_t IncidenceLists::push(Vertex v, const Incidence& entry) {
  List* list = &lists_[v];
  if (list->size == list->room) {
    move_list(v, std::max(kFirstRoom, std::bit_ceil(list->room + 1)));
    list = &lists_[v];
  }
  arena_[list->begin + list->size] = entry;
  ++entries_;
  return list->size++;
}

const Incidence* IncidenceLists::remove(Vertex v, std::uint32_t at) {
  List& list = lists_[v];
  YOKE_DCHECK(at < list.size, "IncidenceLists::remove: no entry at that position");
  --list.size;
  --entries_;
  if (at == list.size) return nullptr;
  Incidence& hole = arena_[list.begin + at];
  hole = arena_[list.begin + list.size];
  return &hole;
}

void IncidenceLists::move_list(Vertex v, std::uint32_t room) {
  const std::uint32_t cls = room_class(room);
  Block block{0, 0};
  if (cls < free_blocks_.size() && !free_blocks_[cls].empty()) {
    block = free_blocks_[cls].back();
    free_blocks_[cls].pop_back();
  } else {
    if (arena_.size() + room > arena_.capacity()) {
      // No room left at the end: rebuilding is the arena's growth step (it copies every entry,
      // as a vector's reallocation would), and it leaves every list with slack.
      rebuild(room);
      if (lists_[v].size < lists_[v].room) return;
    }
    block = {arena_.size(), room};
    arena_.resize(arena_.size() + room);  // within capacity: no reallocation
  }
  List& list = lists_[v];
  moved_ += list.size;
  std::copy_n(arena_.begin() + static_cast<std::ptrdiff_t>(list.begin), list.size,
              arena_.begin() + static_cast<std::ptrdiff_t>(block.begin));
  if (list.room != 0) {
    const std::uint32_t old_class = room_class(list.room);
    if (old_class >= free_blocks_.size()) free_blocks_.resize(old_class + 1);
    free_blocks_[old_class].push_back({list.begin, list.room});
  }
  list.begin = block.begin;
  list.room = block.room;
}

void IncidenceLists::compact() {
  rebuild(0);
  Arena().swap(spare_.arena);
}

void IncidenceLists::tidy() {
  if (4 * moved_ >= lists_.size() + entries_ && moved_ > 0) rebuild(0);
}

void IncidenceLists::rebuild(std::size_t extra) {
  std::size_t total = 0;
  for (const List& list : lists_) total += rebuilt_room(list.size);
  // Room at the end for the lists that will outgrow their slack: a quarter of the arena (at
  // least `extra`), so the next rebuild comes only after that much has moved.
  const std::size_t wanted = total + std::max(extra, total / 4);
  Arena arena = std::move(spare_.arena);  // its pages are mapped already (Spare)
  arena.clear();
  if (arena.capacity() < wanted || arena.capacity() / 2 > wanted) {
    // A sixteenth more than wanted, so that a graph that grows a little between rebuilds
    // still finds room in the spare next time; one that shrank to less than half does not
    // keep the bigger block.
    Arena().swap(arena);
    arena.reserve(wanted + wanted / 16);
  }
  // Not zeroed (HugePageAllocator::construct): the copies below fill each list's entries, and
  // its slack is written by a push before anything reads it.
  arena.resize(total);
  std::size_t next = 0;
  for (List& list : lists_) {
    std::copy_n(arena_.begin() + static_cast<std::ptrdiff_t>(list.begin), list.size,
                arena.begin() + static_cast<std::ptrdiff_t>(next));
    list.begin = next;
    list.room = rebuilt_room(list.size);
    next += list.room;
  }
  spare_.arena = std::move(arena_);
  arena_ = std::move(arena);
  free_blocks_.clear();
  moved_ = 0;
}

}  // namespace yoke
