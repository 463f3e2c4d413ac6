#include "tools/graphgen/event_stream.h"

#include <algorithm>
#include <array>
#include <charconv>
#include <deque>
#include <limits>
#include <optional>
#include <stdexcept>
#include <unordered_map>
#include <unordered_set>

#include "yoke/pool.h"
#include "tools/graphgen/generators.h"
#include "tools/graphgen/rng.h"

namespace yoke::gen {
namespace {

// Independent streams from one seed: batch sizes never move the events, keys never move either.
enum EventStreamRng : std::uint64_t { kActions = 11, kBatchSizes, kKeys, kTestSpecs };

using Slot = std::uint32_t;    // the generator's vertex index; one per key, never reused
using EdgeId = std::uint32_t;  // reused once the edge is gone
constexpr std::uint32_t kAbsent = std::numeric_limits<std::uint32_t>::max();
constexpr VertexKey kTopKey = std::numeric_limits<VertexKey>::max();

// In the order of kMixEntries, which draw_action walks: the order fixes the streams' events.
enum class Action {
  nudge_weight, random_weight, add, remove, unset, link, vertex_burst, add_remove, set_unset,
  tricky_weight, re_add, rise, rise_tight, rise_cycle, fall_matched, remove_matched
};

struct MixEntry {
  const char* name;
  int EventMix::*share;
  Action action;
};

constexpr std::array<MixEntry, 16> kMixEntries = {{
    {"nudge-weight", &EventMix::nudge_weight, Action::nudge_weight},
    {"random-weight", &EventMix::random_weight, Action::random_weight},
    {"add", &EventMix::add, Action::add},
    {"remove", &EventMix::remove, Action::remove},
    {"unset", &EventMix::unset, Action::unset},
    {"link", &EventMix::link, Action::link},
    {"vertex-burst", &EventMix::vertex_burst, Action::vertex_burst},
    {"add-remove", &EventMix::add_remove, Action::add_remove},
    {"set-unset", &EventMix::set_unset, Action::set_unset},
    {"tricky-weight", &EventMix::tricky_weight, Action::tricky_weight},
    {"re-add", &EventMix::re_add, Action::re_add},
    {"rise", &EventMix::rise, Action::rise},
    {"rise-tight", &EventMix::rise_tight, Action::rise_tight},
    {"rise-cycle", &EventMix::rise_cycle, Action::rise_cycle},
    {"fall-matched", &EventMix::fall_matched, Action::fall_matched},
    {"remove-matched", &EventMix::remove_matched, Action::remove_matched},
}};

const char* action_name(Action action) { return kMixEntries[static_cast<std::size_t>(action)].name; }

constexpr const char* kFamilyNames[] = {"city", "random", "dispatch", "complete", "stress"};

// Dense ids with O(1) insert, erase and uniform draw: erase moves the last id into the hole.
class IdSet {
 public:
  bool contains(std::uint32_t id) const { return id < position_.size() && position_[id] != kAbsent; }
  bool empty() const { return items_.empty(); }
  std::size_t size() const { return items_.size(); }

  void insert(std::uint32_t id) {
    if (id >= position_.size()) position_.resize(id + 1, kAbsent);
    position_[id] = static_cast<std::uint32_t>(items_.size());
    items_.push_back(id);
  }
  void erase(std::uint32_t id) {
    const std::uint32_t at = position_[id];
    const std::uint32_t last = items_.back();
    items_[at] = last;
    position_[last] = at;
    items_.pop_back();
    position_[id] = kAbsent;
  }
  std::uint32_t draw(Rng& rng) const { return items_[rng.below(items_.size())]; }

 private:
  std::vector<std::uint32_t> items_;
  std::vector<std::uint32_t> position_;  // by id: index in items_, or kAbsent
};

struct EdgeRecord {
  Slot a = 0;
  Slot b = 0;
  Weight w = 0;
  std::uint32_t at_a = 0;  // position in incident_[a]
  std::uint32_t at_b = 0;  // position in incident_[b]

  Slot other(Slot v) const { return v == a ? b : a; }
};

std::uint64_t pair_key(Slot a, Slot b) {
  if (a > b) std::swap(a, b);
  return (std::uint64_t{a} << 32) | b;
}

std::size_t couriers_of(std::size_t vertices) {
  return vertices < 2 ? vertices : std::clamp<std::size_t>(vertices * 4 / 9, 1, vertices - 1);
}

GeneratedGraph base_graph(const StreamSpec& spec) {
  const std::size_t n = spec.vertices;
  switch (spec.family) {
    case StreamFamily::city: return city(n, spec.degree, spec.seed);
    case StreamFamily::random: {
      const std::uint64_t pairs = n < 2 ? 0 : std::uint64_t{n} * (n - 1) / 2;
      const std::uint64_t wanted = std::uint64_t{n} * static_cast<std::uint64_t>(spec.degree) / 2;
      return sparse_random(n, std::min(pairs, wanted), spec.min_weight, spec.max_weight, spec.seed);
    }
    case StreamFamily::dispatch: {
      const std::size_t couriers = couriers_of(n);
      return dispatch_bipartite(couriers, n - couriers, spec.degree, spec.seed);
    }
    case StreamFamily::complete:
      return complete(n, spec.min_weight, spec.max_weight, spec.seed);
    case StreamFamily::stress: return blossom_stress(n, spec.seed);
  }
  throw std::invalid_argument("event stream: unknown family");
}

void check_spec(const StreamSpec& spec) {
  auto fail = [](const std::string& what) { throw std::invalid_argument("event stream: " + what); };
  if (spec.vertices >= kNoVertex) fail("too many vertices");
  if (spec.family == StreamFamily::complete && spec.vertices > 60000) {
    fail("a complete graph on " + std::to_string(spec.vertices) + " vertices has too many edges");
  }
  if (spec.degree < 0) fail("degree must not be negative");
  if (spec.batch_min == 0) fail("batches hold at least one event");
  if (spec.batch_min > spec.batch_max) {
    fail("batch_min " + std::to_string(spec.batch_min) + " is above batch_max " +
         std::to_string(spec.batch_max));
  }
  if (spec.arrival_edges < 0) fail("arrival_edges must not be negative");
  if (spec.explicit_add_percent < 0 || spec.explicit_add_percent > 100) {
    fail("explicit_add_percent must lie in 0..100");
  }
  if (spec.extreme_weight < 0) fail("extreme_weight must not be negative");
  if (spec.weight_grain < 1) fail("weight_grain must be at least 1");
  std::int64_t total = 0;
  for (const MixEntry& entry : kMixEntries) {
    if (spec.mix.*entry.share < 0) fail(std::string("mix share ") + entry.name + " is negative");
    total += spec.mix.*entry.share;
  }
  if (spec.events > 0 && total == 0) fail("the mix has no positive share");
}

}  // namespace

// The generator's picture of the pool: alive vertices, edges and their weights, kept in step
// with every event it emits. Nothing here is ever scanned in full after the base graph.
class EventStream::Builder {
 public:
  explicit Builder(const StreamSpec& spec)
      : spec_(spec), actions_(spec.seed, kActions), sizes_(spec.seed, kBatchSizes),
        key_rng_(spec.seed, kKeys) {
    for (const MixEntry& entry : kMixEntries) mix_total_ += spec.mix.*entry.share;
    load_base(base_graph(spec));
  }

  std::size_t base_vertices() const { return base_vertices_; }
  std::size_t base_edges() const { return base_edges_; }

  void take_base(std::vector<Event>& batch) { take(base_events_, batch); }

  // The events of one action (the pending ones first, if an earlier cut left any).
  void take_action(std::vector<Event>& batch) {
    if (pending_.empty()) draw_action();
    take(pending_.size(), batch);
  }

  void aim_at(const Pool* pool) { aim_ = pool; }
  const char* last_action() const { return action_name(ran_); }

  std::size_t draw_batch_size() {
    return static_cast<std::size_t>(sizes_.between(static_cast<std::int64_t>(spec_.batch_min),
                                                   static_cast<std::int64_t>(spec_.batch_max)));
  }

  // Moves the next `count` events into `batch`, drawing actions as needed. An action that
  // emits several events may leave some for the next batch.
  void take(std::size_t count, std::vector<Event>& batch) {
    while (pending_.size() < count) draw_action();
    const auto end = pending_.begin() + static_cast<std::ptrdiff_t>(count);
    batch.assign(pending_.begin(), end);
    pending_.erase(pending_.begin(), end);
  }

 private:
  StreamSpec spec_;
  Rng actions_;
  Rng sizes_;
  Rng key_rng_;
  std::int64_t mix_total_ = 0;
  std::deque<Event> pending_;
  std::size_t base_vertices_ = 0;
  std::size_t base_edges_ = 0;
  std::size_t base_events_ = 0;

  // Weights of new edges and weight changes stay in the base graph's range.
  Weight low_ = 1;
  Weight high_ = 1000;
  Weight small_step_ = 1;  // largest nudge-weight step: 5% of the range
  Weight big_step_ = 1;    // smallest large rise or fall: 25% of the range
  bool local_ = false;     // city and dispatch: partners come from the graph neighbourhood
  bool bipartite_ = false;  // dispatch: couriers (side 0) link only to orders (side 1)
  std::size_t base_couriers_ = 0;

  // By slot.
  std::vector<VertexKey> keys_;
  std::vector<std::uint8_t> side_;
  std::vector<std::vector<EdgeId>> incident_;
  std::vector<std::uint32_t> seen_;  // search stamps
  std::uint32_t stamp_ = 0;
  IdSet alive_;
  IdSet removed_;
  std::unordered_set<VertexKey> used_keys_;  // scrambled keys only; looked up, never iterated

  std::vector<EdgeRecord> edges_;
  std::vector<EdgeId> free_edges_;
  IdSet live_edges_;
  std::unordered_map<std::uint64_t, EdgeId> edge_at_;  // by pair_key; never iterated

  const Pool* aim_ = nullptr;       // the pool aimed actions look at
  Action ran_ = Action::add;        // the action that drew the last event
  std::unordered_map<VertexKey, Slot> slot_of_;  // by key; looked up, never iterated

  std::vector<Slot> found_;  // scratch of the neighbourhood searches
  std::vector<Slot> queue_;

  // ---- the base graph -------------------------------------------------------------------

  void load_base(const GeneratedGraph& graph) {
    base_vertices_ = graph.vertex_count;
    base_edges_ = graph.edges.size();
    local_ = spec_.family == StreamFamily::city || spec_.family == StreamFamily::dispatch;
    bipartite_ = spec_.family == StreamFamily::dispatch;
    base_couriers_ = bipartite_ ? couriers_of(graph.vertex_count) : 0;
    if (graph.edges.empty()) {
      low_ = std::min(spec_.min_weight, spec_.max_weight);
      high_ = std::max(spec_.min_weight, spec_.max_weight);
    } else {
      low_ = high_ = graph.edges.front().w;
      for (const Edge& e : graph.edges) {
        low_ = std::min(low_, e.w);
        high_ = std::max(high_, e.w);
      }
    }
    if (high_ == low_) ++high_;
    small_step_ = std::max<Weight>(1, (high_ - low_) / 20);
    big_step_ = std::max<Weight>(1, (high_ - low_) / 4);

    std::vector<bool> has_edge(graph.vertex_count, false);
    for (const Edge& e : graph.edges) has_edge[e.a] = has_edge[e.b] = true;
    for (std::size_t v = 0; v < graph.vertex_count; ++v) {
      const Slot slot = new_slot(v < base_couriers_ ? 0 : 1);
      if (!has_edge[v]) emit_add(slot);  // an isolated vertex exists only by `add`
    }
    for (const Edge& e : graph.edges) emit_new_edge(e.a, e.b, e.w);
    base_events_ = pending_.size();
  }

  // ---- vertices and keys ----------------------------------------------------------------

  Slot new_slot(std::uint8_t side) {
    const auto slot = static_cast<Slot>(keys_.size());
    keys_.push_back(fresh_key(slot));
    slot_of_.emplace(keys_.back(), slot);
    side_.push_back(side);
    incident_.emplace_back();
    seen_.push_back(0);
    return slot;
  }

  VertexKey fresh_key(Slot slot) {
    if (!spec_.scrambled_keys) return slot;  // dense: base ids 0..n-1, then n, n+1, ...
    for (;;) {
      VertexKey key;
      if (slot < 2) {
        key = kTopKey - slot;
      } else if (key_rng_.below(4) == 0) {
        key = kTopKey - 2 - key_rng_.below(std::uint64_t{1} << 32);
      } else {
        key = key_rng_.next();
      }
      if (used_keys_.insert(key).second) return key;
    }
  }

  std::uint8_t side_for_arrival() {
    if (!bipartite_) return 0;
    return actions_.below(std::max<std::size_t>(base_vertices_, 1)) < base_couriers_ ? 0 : 1;
  }

  bool may_link(Slot a, Slot b) const {
    return a != b && (!bipartite_ || side_[a] != side_[b]) && !edge_at_.contains(pair_key(a, b));
  }

  std::uint32_t next_stamp() {
    if (++stamp_ == 0) {
      std::fill(seen_.begin(), seen_.end(), 0);
      stamp_ = 1;
    }
    return stamp_;
  }

  // found_ = alive vertices reached breadth first from `start` (itself included; at most
  // `limit` reached) that `v` may link to.
  void search_near(Slot start, Slot v, std::size_t limit) {
    found_.clear();
    queue_.clear();
    const std::uint32_t stamp = next_stamp();
    queue_.push_back(start);
    seen_[start] = stamp;
    for (std::size_t head = 0; head < queue_.size(); ++head) {
      const Slot at = queue_[head];
      if (may_link(v, at)) found_.push_back(at);
      for (const EdgeId e : incident_[at]) {
        if (queue_.size() >= limit) break;
        const Slot next = edges_[e].other(at);
        if (seen_[next] == stamp) continue;
        seen_[next] = stamp;
        queue_.push_back(next);
      }
    }
  }

  // found_ = up to `count` distinct alive vertices, drawn uniformly, that `v` may link to.
  void search_anywhere(Slot v, std::size_t count) {
    found_.clear();
    const std::uint32_t stamp = next_stamp();
    for (std::size_t tries = 0; found_.size() < count && tries < 4 * count + 8; ++tries) {
      const Slot c = alive_.draw(actions_);
      if (seen_[c] == stamp) continue;
      seen_[c] = stamp;
      if (may_link(v, c)) found_.push_back(c);
    }
  }

  // Keeps a uniform choice of `count` of found_.
  void keep_some(std::size_t count) {
    const std::size_t keep = std::min(count, found_.size());
    for (std::size_t i = 0; i < keep; ++i) {
      std::swap(found_[i], found_[i + actions_.below(found_.size() - i)]);
    }
    found_.resize(keep);
  }

  // found_ = up to `count` partners for vertex v (alive or about to be), near a random anchor.
  void partners_for(Slot v, std::size_t count) {
    found_.clear();
    if (alive_.empty() || count == 0) return;
    if (local_) {
      search_near(alive_.draw(actions_), v, 4 * count + 8);
    } else {
      search_anywhere(v, count);
    }
    keep_some(count);
  }

  std::optional<Slot> link_partner(Slot u) {
    if (local_) {
      search_near(u, u, 64);
    } else {
      search_anywhere(u, 1);
    }
    if (found_.empty()) return std::nullopt;
    return found_[actions_.below(found_.size())];
  }

  // A weight for a new edge at c: near the weight of one of c's edges on the geometric
  // families (nearby places are worth about the same), uniform over the range otherwise.
  Weight new_edge_weight(Slot c) {
    const auto& at_c = incident_[c];
    if (!local_ || at_c.empty()) return actions_.between(low_, high_);
    const Weight reference = edges_[at_c[actions_.below(at_c.size())]].w;
    return std::clamp(reference + actions_.between(-small_step_, small_step_), low_, high_);
  }

  // ---- emitting (each keeps the picture in step with the event) ---------------------------

  void make_alive(Slot v) {
    if (alive_.contains(v)) return;
    alive_.insert(v);
    if (removed_.contains(v)) removed_.erase(v);
  }

  // Edges are named in a random orientation: {u, v} is unordered.
  Event edge_event(EventKind kind, const EdgeRecord& r, Weight w) {
    const bool flip = actions_.chance(0.5);
    return {kind, keys_[flip ? r.b : r.a], keys_[flip ? r.a : r.b], w};
  }

  void emit_add(Slot v) {
    make_alive(v);
    pending_.push_back({EventKind::add_vertex, keys_[v], 0, 0});
  }

  // Coarse weights (weight_grain): rounded towards zero, so |w| never grows.
  Weight snapped(Weight w) const { return spec_.weight_grain > 1 ? w / spec_.weight_grain * spec_.weight_grain : w; }

  EdgeId emit_new_edge(Slot a, Slot b, Weight w) {
    w = snapped(w);
    make_alive(a);
    make_alive(b);
    EdgeId e;
    if (free_edges_.empty()) {
      e = static_cast<EdgeId>(edges_.size());
      edges_.emplace_back();
    } else {
      e = free_edges_.back();
      free_edges_.pop_back();
    }
    edges_[e] = {a, b, w, static_cast<std::uint32_t>(incident_[a].size()),
                 static_cast<std::uint32_t>(incident_[b].size())};
    incident_[a].push_back(e);
    incident_[b].push_back(e);
    edge_at_.emplace(pair_key(a, b), e);
    live_edges_.insert(e);
    pending_.push_back({EventKind::set_edge, keys_[a], keys_[b], w});
    return e;
  }

  void emit_weight(EdgeId e, Weight w) {
    w = snapped(w);
    edges_[e].w = w;
    pending_.push_back(edge_event(EventKind::set_edge, edges_[e], w));
  }

  void emit_unset(EdgeId e) {
    pending_.push_back(edge_event(EventKind::unset_edge, edges_[e], 0));
    drop_edge(e);
  }

  void emit_remove(Slot v) {
    while (!incident_[v].empty()) drop_edge(incident_[v].back());
    alive_.erase(v);
    removed_.insert(v);
    pending_.push_back({EventKind::remove_vertex, keys_[v], 0, 0});
  }

  void drop_edge(EdgeId e) {
    const EdgeRecord r = edges_[e];
    detach(r.a, r.at_a);
    detach(r.b, r.at_b);
    edge_at_.erase(pair_key(r.a, r.b));
    live_edges_.erase(e);
    free_edges_.push_back(e);
  }

  // Removes the entry at `at` of v's incidence list; the last entry moves into its place.
  void detach(Slot v, std::uint32_t at) {
    auto& list = incident_[v];
    const EdgeId moved = list.back();
    list[at] = moved;
    list.pop_back();
    if (at == list.size()) return;
    EdgeRecord& m = edges_[moved];
    (m.a == v ? m.at_a : m.at_b) = at;
  }

  // ---- actions ----------------------------------------------------------------------------

  void draw_action() {
    std::int64_t pick = static_cast<std::int64_t>(
        actions_.below(static_cast<std::uint64_t>(mix_total_)));
    for (const MixEntry& entry : kMixEntries) {
      pick -= spec_.mix.*entry.share;
      if (pick < 0) return run(entry.action);
    }
  }

  void run(Action action) {
    ran_ = action;
    switch (action) {
      case Action::nudge_weight: return nudge_weight();
      case Action::random_weight: return random_weight();
      case Action::add: return add();
      case Action::remove: return remove();
      case Action::unset: return unset();
      case Action::link: return link();
      case Action::vertex_burst: return vertex_burst();
      case Action::add_remove: return add_remove();
      case Action::set_unset: return set_unset();
      case Action::tricky_weight: return tricky_weight();
      case Action::re_add: return re_add();
      case Action::rise: return rise();
      case Action::rise_tight: return rise_tight();
      case Action::rise_cycle: return rise_cycle();
      case Action::fall_matched: return fall_matched();
      case Action::remove_matched: return remove_matched();
    }
  }

  std::size_t arrival_edges() const { return static_cast<std::size_t>(spec_.arrival_edges); }
  bool explicit_add() { return actions_.below(100) < static_cast<std::uint64_t>(spec_.explicit_add_percent); }

  Weight nudged(Weight w) {
    const Weight delta = actions_.between(1, small_step_);
    return std::clamp(actions_.chance(0.5) ? w + delta : w - delta, low_, high_);
  }

  // Every action falls back to `add` when the pool is too empty for it.
  void nudge_weight() {
    if (live_edges_.empty()) return add();
    const EdgeId e = live_edges_.draw(actions_);
    emit_weight(e, nudged(edges_[e].w));
  }

  void random_weight() {
    if (live_edges_.empty()) return add();
    emit_weight(live_edges_.draw(actions_), actions_.between(low_, high_));
  }

  void add() { add_with_edges(new_slot(side_for_arrival()), arrival_edges(), explicit_add()); }

  // Vertex v (new, or removed earlier) comes into the pool with up to `count` edges, announced
  // by `add` first when with_add (or when it finds no partner).
  void add_with_edges(Slot v, std::size_t count, bool with_add) {
    partners_for(v, count);
    const std::vector<Slot> partners = found_;
    if (with_add || partners.empty()) emit_add(v);
    for (const Slot c : partners) emit_new_edge(v, c, new_edge_weight(c));
  }

  void remove() {
    if (alive_.size() <= 2) return add();
    emit_remove(alive_.draw(actions_));
  }

  void unset() {
    if (live_edges_.empty()) return add();
    emit_unset(live_edges_.draw(actions_));
  }

  void link() {
    if (alive_.size() < 2) return add();
    const Slot u = alive_.draw(actions_);
    const std::optional<Slot> v = link_partner(u);
    if (!v) return nudge_weight();
    emit_new_edge(u, *v, new_edge_weight(*v));
  }

  // The same vertex several times in a row: weight changes, unsets and new edges at one vertex.
  void vertex_burst() {
    if (live_edges_.empty()) return add();
    const EdgeRecord& picked = edges_[live_edges_.draw(actions_)];
    const Slot u = actions_.chance(0.5) ? picked.a : picked.b;
    const auto changes = 2 + actions_.below(3);
    for (std::uint64_t i = 0; i < changes; ++i) {
      const auto& at_u = incident_[u];
      const std::uint64_t kind = at_u.empty() ? 3 : actions_.below(4);
      if (kind == 3) {
        const std::optional<Slot> v = link_partner(u);
        if (!v) return;
        emit_new_edge(u, *v, new_edge_weight(*v));
        continue;
      }
      const EdgeId e = at_u[actions_.below(at_u.size())];
      if (kind == 0) emit_weight(e, nudged(edges_[e].w));
      if (kind == 1) emit_weight(e, actions_.between(low_, high_));
      if (kind == 2) emit_unset(e);
    }
  }

  // A vertex added and removed in the same batch (when the cut between batches allows).
  void add_remove() {
    const Slot v = new_slot(side_for_arrival());
    add_with_edges(v, 1 + actions_.below(3), actions_.chance(0.5));
    emit_remove(v);
  }

  // An edge set and then unset right away: a new edge, or an existing one given a new weight.
  void set_unset() {
    if (alive_.size() >= 2 && actions_.chance(0.5)) {
      const Slot u = alive_.draw(actions_);
      if (const std::optional<Slot> v = link_partner(u)) {
        emit_unset(emit_new_edge(u, *v, new_edge_weight(*v)));
        return;
      }
    }
    if (live_edges_.empty()) return add();
    const EdgeId e = live_edges_.draw(actions_);
    emit_weight(e, actions_.between(low_, high_));
    emit_unset(e);
  }

  // Weights that are easy to get wrong: zero, negative, ties, no change, the largest allowed.
  void tricky_weight() {
    if (live_edges_.empty()) return add();
    const EdgeId e = live_edges_.draw(actions_);
    const EdgeRecord& r = edges_[e];
    switch (actions_.below(spec_.extreme_weight > 0 ? 5 : 4)) {
      case 0: return emit_weight(e, 0);
      case 1: return emit_weight(e, -actions_.between(1, high_ - low_));
      case 2: {  // tie with an edge at the same vertex: equal slack candidates in one search
        const auto& at = incident_[actions_.chance(0.5) ? r.a : r.b];
        return emit_weight(e, edges_[at[actions_.below(at.size())]].w);
      }
      case 3: return emit_weight(e, r.w);
      default:
        return emit_weight(e, actions_.chance(0.5) ? spec_.extreme_weight : -spec_.extreme_weight);
    }
  }

  // ---- large changes, aimed at the pool when there is one --------------------------------

  // Rises stop at the top of the range plus the range again, so repeated rises stay bounded.
  Weight risen(Weight w) {
    return std::min(w + actions_.between(big_step_, 4 * big_step_), high_ + (high_ - low_));
  }
  Weight fallen(Weight w) { return w - actions_.between(big_step_, 4 * big_step_); }

  void rise() {
    if (live_edges_.empty()) return run(Action::add);
    const EdgeId e = live_edges_.draw(actions_);
    emit_weight(e, risen(edges_[e].w));
  }

  // The slot of a pool vertex the stream also has alive, or nothing.
  std::optional<Slot> alive_slot(VertexKey key) const {
    const auto it = slot_of_.find(key);
    if (it == slot_of_.end() || !alive_.contains(it->second)) return std::nullopt;
    return it->second;
  }

  // The stream's edge between two pool vertices, or nothing (the pool may lag the stream within
  // a batch, so its answers are checked against the stream's own picture).
  std::optional<EdgeId> edge_between(VertexKey u, VertexKey v) const {
    const auto a = alive_slot(u);
    const auto b = alive_slot(v);
    if (!a || !b) return std::nullopt;
    const auto it = edge_at_.find(pair_key(*a, *b));
    if (it == edge_at_.end()) return std::nullopt;
    return it->second;
  }

  static constexpr int kAimTries = 32;  // vertices looked at before an aimed action gives up

  std::optional<EdgeId> matched_edge() {
    if (aim_ == nullptr || alive_.empty()) return std::nullopt;
    for (int tries = 0; tries < kAimTries; ++tries) {
      const VertexKey u = keys_[alive_.draw(actions_)];
      if (const auto m = aim_->mate_of(u)) {
        if (const auto e = edge_between(u, *m)) return e;
      }
    }
    return std::nullopt;
  }

  void rise_tight() {
    if (aim_ == nullptr || alive_.empty()) return run(Action::rise);
    for (int tries = 0; tries < kAimTries; ++tries) {
      const VertexKey u = keys_[alive_.draw(actions_)];
      const auto why = aim_->explain(u, 4);
      if (!why) continue;
      for (const Alternative& other : why->alternatives) {
        if (other.slack2 != 0) break;  // least slack first
        if (const auto e = edge_between(u, other.other)) return emit_weight(*e, risen(edges_[*e].w));
      }
      if (why->mate) {
        if (const auto e = edge_between(u, *why->mate)) return emit_weight(*e, risen(edges_[*e].w));
      }
    }
    run(Action::rise);
  }

  void rise_cycle() {
    if (aim_ == nullptr || alive_.empty()) return run(Action::rise);
    for (int tries = 0; tries < kAimTries; ++tries) {
      const auto cycle = aim_->blossom_cycle_at(keys_[alive_.draw(actions_)]);
      if (cycle.empty()) continue;
      const auto& [u, v] = cycle[actions_.below(cycle.size())];
      if (const auto e = edge_between(u, v)) return emit_weight(*e, risen(edges_[*e].w));
    }
    run(Action::rise_tight);
  }

  void fall_matched() {
    const auto e = matched_edge();
    if (!e) {
      if (live_edges_.empty()) return run(Action::add);
      ran_ = Action::random_weight;
      const EdgeId any = live_edges_.draw(actions_);
      return emit_weight(any, fallen(edges_[any].w));
    }
    emit_weight(*e, fallen(edges_[*e].w));
  }

  void remove_matched() {
    if (alive_.size() <= 2) return run(Action::add);
    if (const auto e = matched_edge()) return emit_remove(actions_.chance(0.5) ? edges_[*e].a : edges_[*e].b);
    run(Action::remove);
  }

  // A key comes back: one removed long ago, or one removed and added back right away with
  // edges to some of its old partners.
  void re_add() {
    if (!removed_.empty() && actions_.chance(0.5)) {
      const Slot v = removed_.draw(actions_);
      removed_.erase(v);
      return add_with_edges(v, arrival_edges(), explicit_add());
    }
    if (alive_.size() <= 2) return add();
    const Slot u = alive_.draw(actions_);
    found_.clear();
    for (const EdgeId e : incident_[u]) found_.push_back(edges_[e].other(u));
    keep_some(1 + actions_.below(std::max<std::size_t>(arrival_edges(), 1)));
    const std::vector<Slot> partners = found_;
    emit_remove(u);
    if (partners.empty() || explicit_add()) emit_add(u);
    for (const Slot c : partners) emit_new_edge(u, c, new_edge_weight(c));
  }
};

StreamFamily parse_stream_family(std::string_view name) {
  for (std::size_t i = 0; i < std::size(kFamilyNames); ++i) {
    if (name == kFamilyNames[i]) return static_cast<StreamFamily>(i);
  }
  throw std::invalid_argument("unknown family '" + std::string(name) +
                              "' (city, random, dispatch, complete, stress)");
}

const char* stream_family_name(StreamFamily family) {
  return kFamilyNames[static_cast<std::size_t>(family)];
}

EventMix benchmark_mix() {
  EventMix mix;
  mix.nudge_weight = 35;
  mix.random_weight = 35;
  mix.add = 15;
  mix.remove = 15;
  return mix;
}

EventMix test_mix() {
  EventMix mix;
  mix.nudge_weight = 18;
  mix.random_weight = 12;
  mix.add = 10;
  mix.remove = 12;  // re_add brings removed keys back: together they keep the size steady
  mix.unset = 8;
  mix.link = 10;
  mix.vertex_burst = 6;
  mix.add_remove = 5;
  mix.set_unset = 6;
  mix.tricky_weight = 9;
  mix.re_add = 4;
  return mix;
}

EventMix tail_mix() {
  EventMix mix;
  mix.nudge_weight = 15;
  mix.rise = 8;
  mix.rise_tight = 12;
  mix.rise_cycle = 12;
  mix.fall_matched = 8;
  mix.link = 10;
  mix.unset = 10;
  mix.add = 8;
  mix.remove_matched = 10;
  mix.remove = 7;
  return mix;
}

bool mix_is_aimed(const EventMix& mix) {
  return mix.rise_tight > 0 || mix.rise_cycle > 0 || mix.fall_matched > 0 || mix.remove_matched > 0;
}

EventMix parse_mix(std::string_view text) {
  if (text == "bench") return benchmark_mix();
  if (text == "test") return test_mix();
  if (text == "tail") return tail_mix();
  EventMix mix;
  std::array<bool, kMixEntries.size()> named{};
  for (bool more = true; more;) {
    const std::size_t comma = text.find(',');
    const std::string_view item = text.substr(0, comma);
    more = comma != std::string_view::npos;
    if (more) text.remove_prefix(comma + 1);
    const std::size_t equals = item.find('=');
    const std::string_view name = item.substr(0, equals);
    const auto entry = std::find_if(kMixEntries.begin(), kMixEntries.end(),
                                    [&](const MixEntry& m) { return name == m.name; });
    if (entry == kMixEntries.end()) {
      throw std::invalid_argument("mix: unknown action '" + std::string(name) +
                                  "' (nudge-weight, random-weight, add, remove, unset, link, "
                                  "vertex-burst, add-remove, set-unset, tricky-weight, re-add, "
                                  "rise, rise-tight, rise-cycle, fall-matched, remove-matched; "
                                  "or bench, test, tail)");
    }
    auto& seen = named[static_cast<std::size_t>(entry - kMixEntries.begin())];
    if (seen) throw std::invalid_argument("mix: '" + std::string(name) + "' given twice");
    seen = true;
    const std::string_view number =
        equals == std::string_view::npos ? std::string_view() : item.substr(equals + 1);
    int share = -1;
    const auto [end, error] = std::from_chars(number.data(), number.data() + number.size(), share);
    if (number.empty() || error != std::errc() || end != number.data() + number.size() || share < 0) {
      throw std::invalid_argument("mix: '" + std::string(item) +
                                  "' needs a share, a whole number >= 0 (NAME=SHARE)");
    }
    mix.*(entry->share) = share;
  }
  int total = 0;
  for (const MixEntry& entry : kMixEntries) total += mix.*entry.share;
  if (total == 0) throw std::invalid_argument("mix: no action has a positive share");
  return mix;
}

std::string mix_text(const EventMix& mix) {
  std::string text;
  for (const MixEntry& entry : kMixEntries) {
    if (mix.*entry.share == 0) continue;
    if (!text.empty()) text += ',';
    text += std::string(entry.name) + "=" + std::to_string(mix.*entry.share);
  }
  return text;
}

StreamSpec test_stream_spec(StreamFamily family, std::uint64_t seed, std::size_t max_vertices,
                            std::size_t commits) {
  Rng pick(seed, kTestSpecs);
  StreamSpec spec;
  spec.family = family;
  spec.seed = seed;
  spec.mix = test_mix();
  const std::size_t most = std::max<std::size_t>(
      2, family == StreamFamily::complete ? max_vertices / 3 : max_vertices);
  spec.vertices = std::max<std::size_t>(2, most / 4 + pick.below(most - most / 4 + 1));
  spec.degree = 2 + static_cast<int>(pick.below(5));
  switch (seed % 3) {
    case 0: spec.min_weight = 1, spec.max_weight = 3; break;  // ties everywhere
    case 1: spec.min_weight = -20, spec.max_weight = 100; break;
    default: spec.min_weight = 1, spec.max_weight = 1000; break;
  }
  spec.scrambled_keys = pick.chance(0.5);
  spec.arrival_edges = 1 + static_cast<int>(pick.below(10));
  std::size_t mean_batch = 1;
  switch (seed % 4) {
    case 0: spec.batch_min = spec.batch_max = 1; break;
    case 1: spec.batch_min = spec.batch_max = mean_batch = 5; break;
    case 2: spec.batch_min = spec.batch_max = mean_batch = 100; break;
    default: spec.batch_min = 1, spec.batch_max = 100, mean_batch = 50; break;
  }
  spec.events = commits * mean_batch;
  return spec;
}

EventStream::EventStream(const StreamSpec& spec)
    : events_left_(spec.events), action_batches_(spec.action_batches) {
  check_spec(spec);
  builder_ = std::make_unique<Builder>(spec);
}

EventStream::~EventStream() = default;

bool EventStream::next_batch(std::vector<Event>& batch) {
  batch.clear();
  if (batches_ == 0) {
    builder_->take_base(batch);
  } else {
    if (events_left_ == 0) return false;
    if (action_batches_) {
      builder_->take_action(batch);
      --events_left_;
    } else {
      const std::size_t size = std::min(events_left_, builder_->draw_batch_size());
      builder_->take(size, batch);
      events_left_ -= size;
    }
  }
  ++batches_;
  return true;
}

std::size_t EventStream::base_vertices() const { return builder_->base_vertices(); }
std::size_t EventStream::base_edges() const { return builder_->base_edges(); }
void EventStream::aim_at(const Pool* pool) { builder_->aim_at(pool); }
const char* EventStream::last_action() const { return builder_->last_action(); }

std::vector<std::vector<Event>> generate_stream(const StreamSpec& spec) {
  EventStream stream(spec);
  std::vector<std::vector<Event>> batches;
  std::vector<Event> batch;
  while (stream.next_batch(batch)) batches.push_back(batch);
  return batches;
}

}  // namespace yoke::gen
