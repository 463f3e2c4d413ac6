// Held pairs (EventKind::hold_pair): pairs the outside world has fixed, kept out of the
// optimisation. A held vertex stays in the pool's graph with no edges there; every edge at a
// held vertex, the held edge included, waits aside here by keys with its own weight until
// the hold ends and the edge goes back to the graph. Everything is ordered by key, so that the
// edges come back in the same order on every replay.
#pragma once

#include <cstddef>
#include <cstdint>
#include <map>
#include <optional>
#include <set>
#include <unordered_map>
#include <utility>
#include <vector>

#include "yoke/events.h"
#include "yoke/types.h"
#include "yoke/util/byte_io.h"

namespace yoke {

class HeldPairs {
 public:
  using KeyPair = std::pair<VertexKey, VertexKey>;  // (smaller, larger)
  static KeyPair ordered(VertexKey a, VertexKey b) { return a < b ? KeyPair{a, b} : KeyPair{b, a}; }

  bool empty() const { return partner_.empty(); }
  std::size_t size() const { return partner_.size() / 2; }
  bool held(VertexKey key) const { return partner_.contains(key); }
  std::optional<VertexKey> partner(VertexKey key) const;
  bool is_pair(VertexKey a, VertexKey b) const;
  Weight weight() const { return weight_; }  // sum over the held pairs
  // The held pairs, sorted, with their weights.
  std::vector<std::pair<KeyPair, Weight>> pairs() const;

  // Edges aside (those with a held end, or that had one when it was held).
  std::size_t aside_count() const { return aside_.size(); }
  std::optional<Weight> aside_weight(VertexKey a, VertexKey b) const;
  // The other ends of the edges aside at `key`, sorted.
  std::vector<VertexKey> aside_at(VertexKey key) const;
  // Inserts or re-weighs an edge aside (the held pair's weight follows its edge).
  void put_aside(VertexKey a, VertexKey b, Weight w);
  void erase_aside(VertexKey a, VertexKey b);

  // Precondition: the edge {a, b} is aside and neither end is held.
  void hold(VertexKey a, VertexKey b);
  // Precondition: {a, b} is held. Its edge stays aside.
  void release(VertexKey a, VertexKey b);

  // Every weight aside within [-bound, bound].
  bool weights_within(Weight bound) const;

  void save(ByteWriter& out) const;
  // Throws InputError on bytes that do not describe holds: a vertex held twice, a held pair
  // without its edge, an edge aside with no held end.
  static HeldPairs load(ByteReader& in);

 private:
  std::unordered_map<VertexKey, VertexKey> partner_;
  std::map<KeyPair, Weight> aside_;
  std::unordered_map<VertexKey, std::set<VertexKey>> aside_of_;
  Weight weight_ = 0;
};

}  // namespace yoke
