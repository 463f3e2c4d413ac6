// The least price among the phantom vertex's neighbours (docs/mathematics.md §9, "one phantom
// vertex"). φ is joined to every vertex of the pool by an implicit edge of one weight, so its
// next tight edge to a vertex outside the trees, and its own price when it enters, are read
// from the least settled price: a min-heap with lazy deletion, so that no step visits all n.
//
// Invariant kept by the callers: every joined vertex has an entry whose key is at most its
// effective price, except while a search has labelled it (the search offers it again when it
// leaves its tree). So a price that falls is offered; one that rises needs nothing: the entry
// goes stale low and is replaced when it surfaces. Entries of left vertices, and entries above
// the vertex's price, are dropped when they surface.
#pragma once

#include <algorithm>
#include <cstdint>
#include <functional>
#include <vector>

#include "yoke/types.h"

namespace yoke {

class PhantomPrices {
 public:
  struct Least {
    Vertex vertex = kNoVertex;  // kNoVertex when no joined vertex qualifies
    Weight price2 = 0;          // its doubled effective price
  };

  // Room for vertices 0 .. vertex_count-1; new ones are not joined. O(growth).
  void resize(std::size_t vertex_count) { joined_.resize(vertex_count, 0); }

  // v becomes (stops being) a neighbour of φ. O(log entries).
  void join(Vertex v, Weight price2) {
    if (joined_[v] == 0) ++joined_count_;
    joined_[v] = 1;
    offer(v, price2);
  }
  void leave(Vertex v) {
    if (joined_[v] != 0) --joined_count_;
    joined_[v] = 0;
  }

  // v's price may have fallen to `price2`. O(log entries).
  void offer(Vertex v, Weight price2) {
    if (joined_[v] == 0) return;
    heap_.push_back({price2, v});
    std::push_heap(heap_.begin(), heap_.end(), std::greater<>{});
  }

  // The joined vertex of least effective price `price2_of(v)` among those `skip(v)` does not
  // reject. A skipped vertex's entries are dropped: the caller offers it again later. Amortised
  // O(log entries) per entry dropped; a heap bloated by stale entries is rebuilt from the joined
  // vertices, which the pushes since the last rebuild pay for.
  template <class PriceOf, class Skip>
  Least least(PriceOf&& price2_of, Skip&& skip) {
    if (heap_.size() > 2 * joined_count_ + kSlack) rebuild(price2_of, skip);
    while (!heap_.empty()) {
      const Entry top = heap_.front();
      if (joined_[top.vertex] != 0 && !skip(top.vertex)) {
        const Weight price2 = price2_of(top.vertex);
        if (price2 == top.price2) return {top.vertex, price2};
        pop();
        if (price2 > top.price2) offer(top.vertex, price2);  // it rose since: requeue
        continue;  // below: stale high, a lower entry exists
      }
      pop();
    }
    return {};
  }

 private:
  struct Entry {
    Weight price2;
    Vertex vertex;
    auto operator<=>(const Entry&) const = default;
  };
  static constexpr std::size_t kSlack = 1024;

  void pop() {
    std::pop_heap(heap_.begin(), heap_.end(), std::greater<>{});
    heap_.pop_back();
  }
  template <class PriceOf, class Skip>
  void rebuild(PriceOf& price2_of, Skip& skip) {
    heap_.clear();
    for (Vertex v = 0; v < joined_.size(); ++v) {
      if (joined_[v] != 0 && !skip(v)) heap_.push_back({price2_of(v), v});
    }
    std::make_heap(heap_.begin(), heap_.end(), std::greater<>{});
  }

  std::vector<Entry> heap_;
  std::vector<std::uint8_t> joined_;
  std::size_t joined_count_ = 0;
};

}  // namespace yoke
