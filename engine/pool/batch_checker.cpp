// BatchChecker and Pool::check: the first event of a batch that cannot be applied, found
// without touching the pool. What earlier events (and earlier accepted batches) changed is kept
// on the side in an overlay, with an undo log so that a refused batch leaves no trace.
#include "yoke/batch_checker.h"

#include <optional>
#include <string>
#include <type_traits>
#include <utility>
#include <vector>

#include "pool/pool_state.h"
#include "yoke/util/open_table.h"

namespace yoke {
namespace {

std::string text(VertexKey key) { return std::to_string(key); }

struct Refusal {
  EventErrorCode code;
  std::string message;
};

}  // namespace

class BatchChecker::Overlay {
 public:
  explicit Overlay(const PoolState& pool) : pool_(pool) {}

  // Limits are checked against the state at the end of the batch (a batch may pass above a
  // limit on its way, as [set 5 1, unset 1 2] at max_edges does); a batch that ends above one is
  // refused naming the event from which its count stayed above the limit to the end.
  std::optional<EventError> accept(std::span<const Event> batch) {
    const Mark mark = this->mark();
    LimitWatch vertices_over, edges_over;
    for (std::size_t i = 0; i < batch.size(); ++i) {
      if (auto refusal = check(batch[i])) {
        undo_to(mark);
        return EventError{i, refusal->code, std::move(refusal->message)};
      }
      vertices_over.see(i, vertex_count() > static_cast<std::ptrdiff_t>(pool_.limits.max_vertices));
      edges_over.see(i, edge_count() > static_cast<std::ptrdiff_t>(pool_.limits.max_edges));
    }
    if (auto refusal = limit_refusal(vertices_over, edges_over)) {
      undo_to(mark);
      return refusal;
    }
    accepted_events_ += batch.size();
    vertex_undo_.clear();  // accepted for good: nothing left to undo
    edge_undo_.clear();
    partner_undo_.clear();
    return std::nullopt;
  }

  std::size_t accepted_events() const { return accepted_events_; }
  std::size_t entries() const { return vertex_.size() + edge_override_.size() + partner_.size(); }

  BatchChecker::CountChange end_window() {
    const BatchChecker::CountChange change{alive_change_ - window_start_.alive_change,
                                           edge_change_ - window_start_.edge_change};
    window_start_ = mark();
    return change;
  }
  // The counts are read as pool + change: the pool's counts now include the window's.
  void window_staged(const BatchChecker::CountChange& change) {
    alive_change_ -= change.vertices;
    edge_change_ -= change.edges;
    window_start_.alive_change -= change.vertices;
    window_start_.edge_change -= change.edges;
  }

  // OpenTable::clear keeps the cells for the next window, unless one big window (a new pool's
  // base graph) grew them far beyond what the tables hold.
  void clear() {
    vertex_.clear();
    edge_override_.clear();
    partner_.clear();
    vertex_undo_.clear();
    edge_undo_.clear();
    partner_undo_.clear();
    alive_change_ = 0;
    edge_change_ = 0;
    window_start_ = Mark{0, 0};
    accepted_events_ = 0;
  }

 private:
  // Where a running count went above a limit and stayed there: the event that last crossed it.
  struct LimitWatch {
    bool above = false;
    std::size_t crossed_at = 0;
    void see(std::size_t index, bool now_above) {
      if (now_above && !above) crossed_at = index;
      above = now_above;
    }
  };
  std::optional<EventError> limit_refusal(const LimitWatch& vertices_over,
                                          const LimitWatch& edges_over) const {
    if (!vertices_over.above && !edges_over.above) return std::nullopt;
    // Both above: name the earlier crossing, the first event the batch cannot keep.
    const bool vertices_first =
        vertices_over.above && (!edges_over.above || vertices_over.crossed_at <= edges_over.crossed_at);
    if (vertices_first) {
      return EventError{vertices_over.crossed_at, EventErrorCode::limit_exceeded,
                        "the batch would leave the pool with " + std::to_string(vertex_count()) +
                            " vertices, above its limit of " +
                            std::to_string(pool_.limits.max_vertices)};
    }
    return EventError{edges_over.crossed_at, EventErrorCode::limit_exceeded,
                      "the batch would leave the pool with " + std::to_string(edge_count()) +
                          " edges or more, above its limit of " +
                          std::to_string(pool_.limits.max_edges)};
  }
  // Alive vertices after the events checked so far: O(1).
  std::ptrdiff_t vertex_count() const {
    return static_cast<std::ptrdiff_t>(pool_.graph.vertex_count()) + alive_change_;
  }
  // Edges after the events checked so far, an upper bound: a departure's edges are not
  // enumerated (that would cost its degree), so they keep their places until the window is
  // committed. O(1).
  std::ptrdiff_t edge_count() const {
    return static_cast<std::ptrdiff_t>(pool_.graph.edge_count() + pool_.holds.aside_count()) +
           edge_change_;
  }

  struct VertexState {
    bool alive;
    std::uint32_t generation;  // removals so far: edge overrides of older ones are void
  };
  struct EdgeKey {
    VertexKey low, high;
    std::uint32_t low_generation, high_generation;
    bool operator==(const EdgeKey&) const = default;
  };
  struct EdgeKeyHash {
    std::size_t operator()(const EdgeKey& k) const {
      return std::hash<VertexKey>()(k.low * 0x9e3779b97f4a7c15ULL ^ k.high) ^
             (std::size_t{k.low_generation} << 7) ^ k.high_generation;
    }
  };
  // What a key held in the overlay before a change: nothing, or its earlier value.
  template <typename Key, typename Value>
  struct Undo {
    Key key;
    std::optional<Value> before;
  };
  // The undo entry of a write to `value`: the overlay's value before, or nothing if the write
  // `inserted` the key. Spelled out because for an optional Value (a hold's partner) the
  // shorter `inserted ? std::nullopt : std::optional(*value)` has the Value's own type, so
  // "no entry before" became "an entry saying: not held", and undoing a refused release hid
  // the pool's committed hold from the batches after it.
  template <typename Key, typename Value>
  static Undo<Key, Value> undo_entry(const Key& key, bool inserted, const Value* value) {
    if (inserted) return {key, std::nullopt};
    return {key, std::optional<Value>(std::in_place, *value)};
  }
  // Stores `value` for `key` in one probe of `table`, with its undo entry. Returns what the
  // overlay held before (nothing: the key was not in it).
  template <typename Table, typename Key, typename Value>
  static std::optional<Value> write(Table& table, std::vector<Undo<Key, Value>>& undo,
                                    const Key& key, const std::type_identity_t<Value>& value) {
    const auto [stored, inserted] = table.try_emplace(key, value);
    undo.push_back(undo_entry<Key, Value>(key, inserted, stored));
    *stored = value;
    return undo.back().before;
  }
  struct Mark {
    std::ptrdiff_t alive_change;
    std::ptrdiff_t edge_change;
  };

  std::optional<Refusal> check(const Event& event) {
    switch (event.kind) {
      case EventKind::add_vertex:
        if (exists(event.u)) {
          return Refusal{EventErrorCode::vertex_exists,
                         "vertex " + text(event.u) + " already exists"};
        }
        return arrive(event.u);
      case EventKind::set_edge:
        return check_set(event);
      case EventKind::unset_edge:
        if (event.u == event.v) {
          return Refusal{EventErrorCode::self_loop, "self loop at vertex " + text(event.u)};
        }
        // protocol.proto: UNKNOWN_EDGE is "UNSET_EDGE ... of an edge that does not exist", and
        // an edge with an end that is not alive does not exist; the message says which end.
        for (const VertexKey end : {event.u, event.v}) {
          if (!exists(end)) {
            return Refusal{EventErrorCode::unknown_edge,
                           "there is no edge {" + text(event.u) + ", " + text(event.v) +
                               "} to unset: vertex " + text(end) + " is not alive"};
          }
        }
        if (!edge_exists(event.u, event.v)) {
          return Refusal{EventErrorCode::unknown_edge, "there is no edge {" + text(event.u) +
                                                           ", " + text(event.v) + "} to unset"};
        }
        write_edge(edge_key(event.u, event.v), false);
        --edge_change_;
        if (partner_of(event.u) == event.v) release(event.u, event.v);  // the hold ends with its edge
        return std::nullopt;
      case EventKind::hold_pair:
      case EventKind::release_pair:
        return check_hold(event);
      case EventKind::remove_vertex: {
        if (!exists(event.u)) {
          return Refusal{EventErrorCode::unknown_vertex,
                         "remove names unknown vertex " + text(event.u)};
        }
        if (const auto partner = partner_of(event.u)) release(event.u, *partner);
        const std::uint32_t generation = this->generation(event.u);
        write_vertex(event.u, {false, generation + 1});  // its edges go with it
        --alive_change_;
        return std::nullopt;
      }
    }
    return Refusal{EventErrorCode::unknown_vertex, "unknown event kind"};
  }

  std::optional<Refusal> check_hold(const Event& event) {
    const bool hold = event.kind == EventKind::hold_pair;
    const char* verb = hold ? "hold" : "release";
    if (event.u == event.v) {
      return Refusal{EventErrorCode::self_loop, std::string(verb) + " names vertex " +
                                                    text(event.u) + " twice"};
    }
    for (const VertexKey end : {event.u, event.v}) {
      if (!exists(end)) {
        return Refusal{EventErrorCode::unknown_vertex,
                       std::string(verb) + " names unknown vertex " + text(end)};
      }
    }
    std::string pair = text(event.u);  // appended, not '"{" + ...': GCC 12 warns on that
    pair.insert(0, 1, '{');
    pair += ", " + text(event.v) + "}";
    if (!hold) {
      if (partner_of(event.u) != event.v) {
        return Refusal{EventErrorCode::not_held, "the pair " + pair + " is not held"};
      }
      release(event.u, event.v);
      return std::nullopt;
    }
    if (!edge_exists(event.u, event.v)) {
      return Refusal{EventErrorCode::unknown_edge, "there is no edge " + pair + " to hold"};
    }
    for (const VertexKey end : {event.u, event.v}) {
      if (const auto partner = partner_of(end)) {
        return Refusal{EventErrorCode::already_held, "vertex " + text(end) +
                                                           " is held with " + text(*partner)};
      }
    }
    write_partner(event.u, event.v);
    write_partner(event.v, event.u);
    return std::nullopt;
  }

  std::optional<VertexKey> partner_of(VertexKey key) const {
    const std::optional<VertexKey>* changed = partner_.find(key);
    return changed != nullptr ? *changed : pool_.holds.partner(key);
  }
  void release(VertexKey a, VertexKey b) {
    write_partner(a, std::nullopt);
    write_partner(b, std::nullopt);
  }
  void write_partner(VertexKey key, std::optional<VertexKey> partner) {
    write(partner_, partner_undo_, key, partner);
  }

  std::optional<Refusal> check_set(const Event& event) {
    if (event.u == event.v) {
      return Refusal{EventErrorCode::self_loop, "self loop at vertex " + text(event.u)};
    }
    const Weight bound = pool_.limits.max_abs_weight;
    if (event.w > bound || event.w < -bound) {
      return Refusal{EventErrorCode::weight_out_of_range,
                     "weight " + std::to_string(event.w) + " of edge {" + text(event.u) + ", " +
                         text(event.v) + "} is out of range: |w| must be at most " +
                         std::to_string(bound)};
    }
    // Each end looked up once (the most frequent event: the overlay's and the pool's maps
    // would otherwise be asked several times for the same key).
    End a = end_of(event.u);
    End b = end_of(event.v);
    for (End* end : {&a, &b}) {
      if (end->alive) continue;
      if (auto refusal = arrive(end->key)) return refusal;
      end->alive = true;  // with its generation, and in no slot of the pool (it was not alive)
    }
    // One probe of the overlay for the look-up and the write (the most frequent event).
    const std::optional<bool> before = write(edge_override_, edge_undo_, edge_key(a, b), true);
    const bool existed = before ? *before : pool_edge_exists(a, b);
    if (!existed) ++edge_change_;  // the limit is checked after the batch
    return std::nullopt;
  }

  // A vertex as the batches so far leave it, and its slot in the pool when the overlay says
  // nothing of it (kNoVertex otherwise: a vertex the overlay names is in no slot its edges may
  // be read from, or its generation voids them).
  struct End {
    VertexKey key;
    bool alive;
    std::uint32_t generation;
    Vertex slot;
  };
  End end_of(VertexKey key) const {
    if (const VertexState* changed = vertex_.find(key)) {
      return {key, changed->alive, changed->generation, kNoVertex};
    }
    const Vertex slot = pool_.graph.find(key);
    return {key, slot != kNoVertex, 0, slot};
  }
  static EdgeKey edge_key(const End& a, const End& b) {
    return a.key < b.key ? EdgeKey{a.key, b.key, a.generation, b.generation}
                         : EdgeKey{b.key, a.key, b.generation, a.generation};
  }
  bool edge_exists(const End& a, const End& b) const {
    if (const bool* changed = edge_override_.find(edge_key(a, b))) return *changed;
    return pool_edge_exists(a, b);
  }
  // Whether the pool holds the edge, for one the overlay says nothing of.
  bool pool_edge_exists(const End& a, const End& b) const {
    if (a.generation != 0 || b.generation != 0) return false;  // an end left earlier
    if (pool_.holds.aside_count() != 0 && pool_.holds.aside_weight(a.key, b.key)) return true;
    return a.slot != kNoVertex && b.slot != kNoVertex &&
           pool_.graph.find_edge(a.slot, b.slot) != kNoEdge;
  }

  bool exists(VertexKey key) const { return end_of(key).alive; }
  std::uint32_t generation(VertexKey key) const {
    const VertexState* changed = vertex_.find(key);
    return changed == nullptr ? 0 : changed->generation;
  }
  // The vertex limit is checked after the batch (accept).
  std::optional<Refusal> arrive(VertexKey key) {
    ++alive_change_;
    write_vertex(key, {true, generation(key)});
    return std::nullopt;
  }
  EdgeKey edge_key(VertexKey a, VertexKey b) const {
    if (a > b) std::swap(a, b);
    return {a, b, generation(a), generation(b)};
  }
  bool edge_exists(VertexKey a, VertexKey b) const { return edge_exists(end_of(a), end_of(b)); }

  void write_vertex(VertexKey key, VertexState state) { write(vertex_, vertex_undo_, key, state); }
  void write_edge(const EdgeKey& key, bool present) {
    write(edge_override_, edge_undo_, key, present);
  }

  Mark mark() const { return {alive_change_, edge_change_}; }
  // Puts back what `undo` says each key held, newest write first.
  template <typename Table, typename Key, typename Value>
  static void roll_back(Table& table, std::vector<Undo<Key, Value>>& undo) {
    for (auto it = undo.rbegin(); it != undo.rend(); ++it) {
      if (it->before) {
        table.insert_or_assign(it->key, *it->before);
      } else {
        table.erase(it->key);
      }
    }
    undo.clear();
  }
  void undo_to(const Mark& mark) {
    roll_back(vertex_, vertex_undo_);
    roll_back(edge_override_, edge_undo_);
    roll_back(partner_, partner_undo_);
    alive_change_ = mark.alive_change;
    edge_change_ = mark.edge_change;
  }

  const PoolState& pool_;
  OpenTable<VertexKey, VertexState> vertex_;
  OpenTable<EdgeKey, bool, EdgeKeyHash> edge_override_;
  std::vector<Undo<VertexKey, VertexState>> vertex_undo_;  // this batch's writes, in order
  std::vector<Undo<EdgeKey, bool>> edge_undo_;
  // The holds the batches changed: the partner, or nothing for a vertex no longer held.
  OpenTable<VertexKey, std::optional<VertexKey>> partner_;
  std::vector<Undo<VertexKey, std::optional<VertexKey>>> partner_undo_;
  std::ptrdiff_t alive_change_ = 0;  // arrivals minus departures so far
  // Edges inserted minus edges unset so far; a departure's edges are not enumerated, so the
  // edge limit is checked conservatively (edge_count()).
  std::ptrdiff_t edge_change_ = 0;
  std::size_t accepted_events_ = 0;
  Mark window_start_{0, 0};  // the counts' changes when the current window began (end_window)
};

BatchChecker::BatchChecker(const Pool& pool) : overlay_(std::make_unique<Overlay>(*pool.state_)) {}
BatchChecker::~BatchChecker() = default;
BatchChecker::BatchChecker(BatchChecker&&) noexcept = default;
BatchChecker& BatchChecker::operator=(BatchChecker&&) noexcept = default;

std::optional<EventError> BatchChecker::accept(std::span<const Event> batch) {
  return overlay_->accept(batch);
}

void BatchChecker::clear() { overlay_->clear(); }

std::size_t BatchChecker::accepted_events() const { return overlay_->accepted_events(); }

std::size_t BatchChecker::entries() const { return overlay_->entries(); }

BatchChecker::CountChange BatchChecker::end_window() { return overlay_->end_window(); }

void BatchChecker::window_staged(CountChange change) { overlay_->window_staged(change); }

std::optional<EventError> Pool::check(std::span<const Event> batch) const {
  return BatchChecker(*this).accept(batch);
}

}  // namespace yoke
