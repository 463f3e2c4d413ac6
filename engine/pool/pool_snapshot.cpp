// Pool::save and Pool::restore: the pool's state as bytes, engine/pool/STATE_FORMAT.md. Everything
// that decides a later result is kept as it lies (slot numbers, free lists, incidence and leaf
// order); what is only a cache (each vertex's top-level node, the search's scratch) is rebuilt.
#include <string>

#include "pool/pool_state.h"
#include "pool/state_format.h"

namespace yoke {
namespace {

// φ's pair (docs/mathematics.md §9) is on an implicit edge: only its symmetry is checked.
void check_matching(const PoolGraph& graph, const Mates& mate, const std::vector<Weight>& dual2,
                    Vertex phantom) {
  for (Vertex v = 0; v < mate.size(); ++v) {
    const Vertex m = mate[v];
    if (m == kNoVertex) continue;
    if (m < mate.size() && mate[m] == v && (v == phantom || m == phantom)) continue;
    if (m >= mate.size() || mate[m] != v || !graph.alive(v) || graph.find_edge(v, m) == kNoEdge) {
      ByteReader::fail("the matching is not a matching of the graph");
    }
  }
  if (dual2.size() != mate.size()) ByteReader::fail("the duals have the wrong length");
}

// What the certificate check after a restore does not see: every weight within the pool's bound
// (the engine's arithmetic counts on it: a weight of 2^62 that no optimality condition minds
// overflowed the next repair), and the weight and pair counters equal to the matching's (the
// objective is only ever moved by diffs after this). Found by tests/fuzz/snapshot_fuzz.
// With a churn bonus, matched edges carry it on top of their own weight.
void check_weights(const PoolGraph& graph, const Mates& mate, Weight bound, Weight bonus,
                   Weight weight, std::uint64_t pairs, Vertex phantom) {
  const Graph& g = graph.graph();
  for (EdgeIndex e = 0; e < g.edge_slots(); ++e) {
    if (!g.is_live(e)) continue;
    const Edge& edge = g.edge(e);
    const Weight own = edge.w - (mate[edge.a] == edge.b ? bonus : 0);
    if (own > bound || own < -bound) {
      ByteReader::fail("edge " + std::to_string(e) + " has a weight beyond the pool's bound");
    }
  }
  Int128 total = 0;  // |w| <= 2^52 for at most 2^29 pairs: no overflow here
  std::uint64_t count = 0;
  for (Vertex v = 0; v < mate.size(); ++v) {
    const Vertex m = mate[v];
    if (m == kNoVertex || m < v || v == phantom || m == phantom) continue;
    total += g.edge(graph.find_edge(v, m)).w - bonus;
    ++count;
  }
  if (total != weight || count != pairs) {
    ByteReader::fail("the weight or the pair count is not the matching's");
  }
}

// Held vertices are alive with no edges in the graph; edges aside join alive vertices.
void check_holds(const PoolGraph& graph, const HeldPairs& holds) {
  for (const auto& [pair, w] : holds.pairs()) {
    for (const VertexKey key : {pair.first, pair.second}) {
      const Vertex v = graph.find(key);
      if (v == kNoVertex || !graph.graph().incident(v).empty()) {
        ByteReader::fail("held vertex " + std::to_string(key) + " is not alive or has edges");
      }
      for (const VertexKey other : holds.aside_at(key)) {
        if (graph.find(other) == kNoVertex) ByteReader::fail("an edge aside ends at no vertex");
      }
    }
  }
}

}  // namespace

Pool::Pool(std::unique_ptr<State> state) : state_(std::move(state)) {}

std::string Pool::save() const {
  const State& pool = *state_;
  ByteWriter out;
  out.put(state_format::kStateMagic);
  const bool phantom = pool.phantom != kNoVertex;
  out.put(phantom ? state_format::kPhantomStateVersion : state_format::kStateVersion);
  out.put(static_cast<std::uint8_t>(pool.mode));
  out.put<std::uint64_t>(pool.limits.max_vertices);
  out.put<std::uint64_t>(pool.limits.max_edges);
  out.put(pool.limits.max_abs_weight);
  out.put(pool.churn_bonus);
  out.put(pool.commits);
  out.put(pool.weight);
  out.put<std::uint64_t>(pool.pairs);
  if (phantom) out.put<std::uint32_t>(pool.phantom);  // its slot is listed free in the graph
  pool.graph.save(out);
  out.put_vector(pool.matching.mate.values());
  out.put_vector(pool.matching.dual2);
  pool.matching.forest.save(out);
  pool.holds.save(out);
  return out.take();
}

std::unique_ptr<Pool> Pool::restore(std::string_view bytes) {
  ByteReader in(bytes);
  if (in.get<std::uint64_t>() != state_format::kStateMagic) {
    ByteReader::fail("it does not start with the pool magic");
  }
  const auto version = in.get<std::uint32_t>();
  if (version < 1 || version > state_format::kPhantomStateVersion) {
    ByteReader::fail("unknown format version");
  }
  const auto mode_number = in.get<std::uint8_t>();
  if (mode_number > static_cast<std::uint8_t>(Mode::perfect)) ByteReader::fail("unknown mode");
  PoolLimits limits;
  limits.max_vertices = in.get<std::uint64_t>();
  limits.max_edges = in.get<std::uint64_t>();
  limits.max_abs_weight = in.get<Weight>();
  const Weight bonus = version >= 2 ? in.get<Weight>() : 0;
  // The constructor checks the limits and the bonus: an InputError is what restore() throws.
  auto state = std::make_unique<State>(static_cast<Mode>(mode_number), limits, bonus);
  State& pool = *state;
  pool.commits = in.get<std::uint64_t>();
  pool.weight = in.get<Weight>();
  pool.pairs = in.get<std::uint64_t>();
  const Vertex phantom = version >= 4 ? in.get<std::uint32_t>() : kNoVertex;
  pool.graph = PoolGraph::load(in);
  const std::size_t n = pool.graph.capacity();
  if (phantom != kNoVertex) {
    // A pool saved with φ keeps using it, whatever this process's switch says.
    if (pool.mode == Mode::max_weight || bonus != 0 || phantom >= n ||
        !pool.graph.claim_reserved(phantom) || pool.graph.vertex_count() % 2 == 0) {
      ByteReader::fail("the phantom vertex is not a free slot of an odd pool that may have one");
    }
    pool.uses_phantom = true;
    pool.phantom = phantom;
  }
  pool.matching.mate.assign(in.get_vector<Vertex>(n));
  if (pool.matching.mate.size() != n) ByteReader::fail("the matching has the wrong length");
  pool.matching.dual2 = in.get_vector<Weight>(n);
  check_matching(pool.graph, pool.matching.mate, pool.matching.dual2, phantom);
  check_weights(pool.graph, pool.matching.mate, pool.limits.max_abs_weight, bonus, pool.weight,
                pool.pairs, phantom);
  if (bonus != 0) pool.bonus_mate = pool.matching.mate.values();  // between commits: the matching
  pool.matching.forest = BlossomForest::load(in);
  if (pool.matching.forest.vertex_count() != n) ByteReader::fail("the forest has the wrong size");
  if (version >= 3) {
    pool.holds = HeldPairs::load(in);
    check_holds(pool.graph, pool.holds);
    if (!pool.holds.weights_within(pool.limits.max_abs_weight)) {
      ByteReader::fail("an edge aside has a weight beyond the pool's bound");
    }
  }
  if (phantom != kNoVertex && !pool.holds.empty()) {
    ByteReader::fail("a pool with the phantom vertex holds pairs");
  }
  if (!in.done()) ByteReader::fail("bytes are left over at the end");
  pool.node_mark.assign(2 * n, 0);
  pool.search = std::make_unique<AlternatingSearch>(pool.graph.graph(), pool.weight_offset, pool.matching);
  pool.prices.resize(n);
  if (pool.uses_phantom) {
    join_every_price(pool);
    pool.search->set_phantom(pool.phantom, &pool.prices);
  }
  return std::unique_ptr<Pool>(new Pool(std::move(state)));
}

}  // namespace yoke
