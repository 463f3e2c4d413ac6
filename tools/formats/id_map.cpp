#include "id_map.h"

#include <algorithm>

namespace yoke::formats {
namespace {

// The finaliser of SplitMix64: spreads sequential and clustered ids over all bits, so that
// ids like 1000, 2000, 3000 do not collide in the low bits used as the slot index.
std::uint64_t mix(std::uint64_t x) {
  x ^= x >> 30;
  x *= 0xbf58476d1ce4e5b9ULL;
  x ^= x >> 27;
  x *= 0x94d049bb133111ebULL;
  x ^= x >> 31;
  return x;
}

constexpr std::size_t kInitialSlots = 1024;

}  // namespace

IdMap::IdMap(std::uint64_t direct_limit) : direct_limit_(direct_limit) {}

IdMap::IdMap(const std::vector<std::uint64_t>& ids) : IdMap() {
  ids_.reserve(ids.size());
  for (const std::uint64_t id : ids) intern(id);
}

Vertex IdMap::find(std::uint64_t id) const {
  if (id < direct_limit_) return id < direct_.size() ? direct_[id] : kNoVertex;
  if (slots_.empty()) return kNoVertex;
  for (std::size_t i = home_slot(id);; i = (i + 1) & (slots_.size() - 1)) {
    const Slot& slot = slots_[i];
    if (slot.vertex == kNoVertex) return kNoVertex;
    if (slot.id == id) return slot.vertex;
  }
}

Vertex IdMap::intern(std::uint64_t id) {
  return id < direct_limit_ ? intern_direct(id) : intern_hashed(id);
}

Vertex IdMap::next_vertex(std::uint64_t id) {
  if (ids_.size() >= kNoVertex) return kNoVertex;  // no dense index left
  ids_.push_back(id);
  return static_cast<Vertex>(ids_.size() - 1);
}

Vertex IdMap::intern_direct(std::uint64_t id) {
  if (id >= direct_.size()) {
    // Doubling keeps the total copying linear in the final size.
    const std::uint64_t wanted = std::max<std::uint64_t>(id + 1, 2 * direct_.size());
    direct_.resize(static_cast<std::size_t>(std::min(wanted, direct_limit_)), kNoVertex);
  }
  Vertex& vertex = direct_[id];
  if (vertex == kNoVertex) vertex = next_vertex(id);
  return vertex;
}

Vertex IdMap::intern_hashed(std::uint64_t id) {
  if (2 * (hashed_count_ + 1) > slots_.size()) grow_slots();
  for (std::size_t i = home_slot(id);; i = (i + 1) & (slots_.size() - 1)) {
    Slot& slot = slots_[i];
    if (slot.id == id && slot.vertex != kNoVertex) return slot.vertex;
    if (slot.vertex == kNoVertex) {
      const Vertex vertex = next_vertex(id);
      if (vertex != kNoVertex) {
        slot = {id, vertex};
        ++hashed_count_;
      }
      return vertex;
    }
  }
}

std::size_t IdMap::home_slot(std::uint64_t id) const {
  return static_cast<std::size_t>(mix(id)) & (slots_.size() - 1);
}

void IdMap::grow_slots() {
  std::vector<Slot> old = std::move(slots_);
  slots_.assign(old.empty() ? kInitialSlots : 2 * old.size(), Slot{});
  for (const Slot& slot : old) {
    if (slot.vertex == kNoVertex) continue;
    std::size_t i = home_slot(slot.id);
    while (slots_[i].vertex != kNoVertex) i = (i + 1) & (slots_.size() - 1);
    slots_[i] = slot;
  }
}

}  // namespace yoke::formats
