#include "yoke/pool.h"

#include <algorithm>
#include <optional>

#include "pool/pool_state.h"
#include "yoke/util/dcheck.h"

namespace yoke {

PoolState::PoolState(Mode pool_mode, PoolLimits pool_limits, Weight bonus)
    : mode(pool_mode),
      limits(pool_limits),
      churn_bonus(bonus),
      weight_offset(resolve_limits(pool_mode, limits, bonus)),
      matching(graph.capacity()),
      uses_phantom(pool_mode != Mode::max_weight && bonus == 0 && phantom_switched_on()),
      search(std::make_unique<AlternatingSearch>(graph.graph(), weight_offset, matching)),
      node_mark(2 * graph.capacity(), 0) {
  if (churn_bonus != 0) bonus_mate.assign(graph.capacity(), kNoVertex);
  prices.resize(graph.capacity());
  if (uses_phantom) search->set_phantom(kNoVertex, &prices);
}

void PoolState::fit_capacity() {
  const std::size_t n = graph.capacity();
  matching.mate.resize(n);
  matching.dual2.resize(n, 0);
  matching.forest.grow(n);
  node_mark.assign(2 * n, 0);
  node_stamp = 0;
  if (churn_bonus != 0) bonus_mate.resize(n, kNoVertex);
  // The search's per-node arrays follow the capacity; it keeps no state between runs.
  search = std::make_unique<AlternatingSearch>(graph.graph(), weight_offset, matching);
  prices.resize(n);
  if (uses_phantom) search->set_phantom(phantom, &prices);
}

Pool::Pool(Mode mode, PoolLimits limits, Weight churn_bonus)
    : state_(std::make_unique<State>(mode, limits, churn_bonus)) {}
Pool::~Pool() = default;

Mode Pool::mode() const { return state_->mode; }
const PoolLimits& Pool::limits() const { return state_->limits; }
Weight Pool::churn_bonus() const { return state_->churn_bonus; }

CommitResult Pool::commit(std::span<const Event> batch) {
  stage(batch);
  return repair();
}

void Pool::stage(std::span<const Event> batch) {
  YOKE_DCHECK(!check(batch), "Pool::stage: the batch did not pass check()");
  State& pool = *state_;
  YOKE_DCHECK(!pool.staged, "Pool::stage: the previous batch was staged and not repaired");
  pool.stats = {};
  pool.root_candidates.clear();
  pool.weight_before.clear();
  pool.holds_touched.clear();
  pool.phantom_slots.clear();
  pool.without_phantom.reset();  // the state it was made from is about to change
  if (pool.phantom != kNoVertex) pool.phantom_slots.push_back(pool.phantom);
  pool.matching.mate.open_journal();
  const bool holds_in_batch = std::any_of(batch.begin(), batch.end(), [](const Event& e) {
    return e.kind == EventKind::hold_pair || e.kind == EventKind::release_pair;
  });
  pool.staged_solve = pool.graph.vertex_count() == 0 && !holds_in_batch;
  if (pool.staged_solve) {
    // Nothing to repair: the first batch (or one after the pool emptied) is solved from scratch.
    for (const Event& event : batch) load_event(pool, event);
    // Nothing refers to a slot yet in a new pool: number them for locality (the whole run's
    // searches read per-vertex arrays by slot). Otherwise lay the lists out in order.
    if (pool.commits == 0) {
      pool.graph.order_slots_by_locality();
    } else {
      pool.graph.tidy_layout();
    }
  } else {
    for (std::size_t i = 0; i < batch.size(); ++i) {
      pool.current_cause = static_cast<EventCause>(std::min<std::size_t>(i, kNoCause));
      pool.matching.mate.set_cause(pool.current_cause);
      apply_event(pool, batch[i]);
    }
    pool.graph.tidy_layout();
  }
  pool.staged = true;
}

CommitResult Pool::repair() {
  State& pool = *state_;
  YOKE_DCHECK(pool.staged, "Pool::repair: no batch was staged");
  // From here on nothing writes what a BatchChecker reads (the key and edge maps, the counts,
  // the holds): the weights, duals, mates and blossoms change, the topology does not.
  if (pool.staged_solve) {
    const SolveStats solved =
        solve_from_scratch(pool.graph.graph(), pool.weight_offset, pool.matching);
    pool.stats.initial_solve = true;
    pool.stats.searches = solved.searches;
    pool.stats.augmentations = solved.augmentations;
    pool.stats.vertices_touched = solved.scans + solved.warm_start_scans;
    if (pool.uses_phantom) {
      join_every_price(pool);  // φ enters below if the count is odd
      pool.current_cause = kNoCause;  // no one event of a solved batch brought it in
      pool.matching.mate.set_cause(kNoCause);
      sync_phantom(pool);
      search_from_roots(pool);
    }
  } else {
    search_from_roots(pool);
  }
  settle_churn_bonus(pool);
  flush_pending_duals(pool);

  CommitResult result;
  result.diff = collect_diff(pool);
  pool.matching.mate.close_journal();
  pool.graph.release_slots();  // the free-slot queue only: find() and find_edge() do not read it
  pool.staged = false;
  result.commit = ++pool.commits;
  result.weight = pool.weight + pool.holds.weight();
  result.pairs = pool.pairs + pool.holds.size();
  result.stats = pool.stats;
  if (pool.mode == Mode::perfect && 2 * result.pairs != pool.graph.vertex_count()) {
    result.status = SolveStatus::no_perfect_matching;
  }
  return result;
}

Weight Pool::weight() const { return state_->weight + state_->holds.weight(); }
std::size_t Pool::pairs() const { return state_->pairs + state_->holds.size(); }
std::size_t Pool::vertex_count() const { return state_->graph.vertex_count(); }
std::size_t Pool::edge_count() const {
  return state_->graph.edge_count() + state_->holds.aside_count();
}
std::uint64_t Pool::commits() const { return state_->commits; }
bool Pool::has_vertex(VertexKey key) const { return state_->graph.find(key) != kNoVertex; }

std::vector<std::pair<VertexKey, VertexKey>> Pool::blossom_cycle_at(VertexKey key) const {
  std::vector<std::pair<VertexKey, VertexKey>> cycle;
  const Vertex v = state_->graph.find(key);
  if (v == kNoVertex) return cycle;
  const BlossomForest& forest = state_->matching.forest;
  const NodeId blossom = forest.parent(v);
  if (blossom == kNoNode) return cycle;
  for (const CycleEdge& edge : forest.cycle_edges(blossom)) {
    // φ has no key: its implicit edges are left out (the pool's inside, not G's).
    if (edge.from == state_->phantom || edge.to == state_->phantom) continue;
    cycle.emplace_back(state_->graph.key(edge.from), state_->graph.key(edge.to));
  }
  return cycle;
}

std::optional<VertexKey> Pool::mate_of(VertexKey key) const {
  if (const auto partner = state_->holds.partner(key)) return partner;
  const Vertex v = state_->graph.find(key);
  if (v == kNoVertex) return std::nullopt;
  const Vertex m = state_->matching.mate[v];
  if (m == kNoVertex || m == state_->phantom) return std::nullopt;
  return state_->graph.key(m);
}

std::optional<MatchedPair> Pool::pair_of(VertexKey key) const {
  const State& pool = *state_;
  if (const auto partner = pool.holds.partner(key)) {
    return MatchedPair{key, *partner, *pool.holds.aside_weight(key, *partner)};
  }
  const Vertex v = pool.graph.find(key);
  if (v == kNoVertex) return std::nullopt;
  const Vertex m = pool.matching.mate[v];
  if (m == kNoVertex || m == pool.phantom) return std::nullopt;
  return MatchedPair{key, pool.graph.key(m), pool.own_weight(v, m, pool.graph.find_edge(v, m))};
}

std::vector<MatchedPair> Pool::matching() const {
  const State& pool = *state_;
  std::vector<MatchedPair> pairs;
  pairs.reserve(pool.pairs);
  for (Vertex v = 0; v < pool.graph.capacity(); ++v) {
    const Vertex m = pool.matching.mate[v];
    if (m == kNoVertex || m < v || v == pool.phantom || m == pool.phantom) continue;
    const VertexKey a = pool.graph.key(v);
    const VertexKey b = pool.graph.key(m);
    const Weight w = pool.own_weight(v, m, pool.graph.find_edge(v, m));
    pairs.push_back({std::min(a, b), std::max(a, b), w});
  }
  for (const auto& [pair, w] : pool.holds.pairs()) pairs.push_back({pair.first, pair.second, w});
  std::sort(pairs.begin(), pairs.end(), [](const MatchedPair& x, const MatchedPair& y) {
    return x.a != y.a ? x.a < y.a : x.b < y.b;
  });
  return pairs;
}

PoolExport Pool::export_certified() const {
  const State& pool = *state_;
  const std::size_t capacity = pool.graph.capacity();
  PoolExport out;
  std::vector<Vertex> dense(capacity, kNoVertex);
  for (Vertex v = 0; v < capacity; ++v) {
    if (!pool.graph.alive(v) || pool.holds.held(pool.graph.key(v))) continue;
    dense[v] = static_cast<Vertex>(out.keys.size());
    out.keys.push_back(pool.graph.key(v));
  }
  const std::size_t n = out.keys.size();
  std::vector<Edge> edges;
  edges.reserve(pool.graph.edge_count());
  for (Vertex v = 0; v < capacity; ++v) {
    for (const Incidence& inc : pool.graph.graph().incident(v)) {
      if (v < inc.other) edges.push_back({dense[v], dense[inc.other], inc.w});
    }
  }
  out.graph = Graph::from_edges(n, std::move(edges));

  out.matched_bonus = pool.churn_bonus;
  for (const auto& [pair, w] : pool.holds.pairs()) out.held.push_back({pair.first, pair.second, w});

  Certificate& cert = out.certificate;
  cert.mode = pool.mode;
  cert.weight_offset = pool.weight_offset;
  cert.mate.assign(n, kNoVertex);
  cert.vertex_dual2.assign(n, 0);
  // The certificate is of G. With φ present its prices come from a copy with φ taken out and
  // G's optimum restored; the pool's own matching less φ's pair is an optimum of G too, so by
  // complementary slackness those optimal prices certify it as well (every condition of
  // docs/mathematics.md §2 holds for any optimal matching with any optimal dual).
  const MatchingState& state = certified_state(pool);
  for (Vertex v = 0; v < capacity; ++v) {
    if (dense[v] == kNoVertex) continue;
    const Vertex m = pool.matching.mate[v] == pool.phantom ? kNoVertex : pool.matching.mate[v];
    cert.mate[dense[v]] = m == kNoVertex ? kNoVertex : dense[m];
    cert.vertex_dual2[dense[v]] = state.dual2[v];
  }
  cert.blossoms = state.forest.certificate_blossoms(dense, n);
  if (pool.mode == Mode::perfect) {
    if (2 * pool.pairs == n) {
      // Perfect-matching duals for the original weights: shift each u by offset/2.
      for (Weight& d : cert.vertex_dual2) d -= pool.weight_offset;
      cert.weight_offset = 0;
    } else {
      cert.mode = Mode::max_cardinality;  // evidence of the shortfall
    }
  }
  return out;
}

}  // namespace yoke
