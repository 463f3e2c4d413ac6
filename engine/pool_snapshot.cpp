// Pool::save and Pool::restore: the pool's state as bytes. Everything that decides a later
// result is kept as it lies (slot numbers, free lists, incidence and leaf order); what is only
// a cache (each vertex's top-level node, the search's scratch) is rebuilt.
#include <string>

#include "pool_state.h"

namespace yoke {
namespace {

constexpr std::uint64_t kMagic = 0x4c4f4f50454b4f59;  // "YOKEPOOL"
constexpr std::uint32_t kVersion = 1;

void check_matching(const PoolGraph& graph, const Mates& mate, const std::vector<Weight>& dual2) {
  for (Vertex v = 0; v < mate.size(); ++v) {
    const Vertex m = mate[v];
    if (m == kNoVertex) continue;
    if (m >= mate.size() || mate[m] != v || !graph.alive(v) || graph.find_edge(v, m) == kNoEdge) {
      ByteReader::fail("the matching is not a matching of the graph");
    }
  }
  if (dual2.size() != mate.size()) ByteReader::fail("the duals have the wrong length");
}

}  // namespace

Pool::Pool(std::unique_ptr<State> state) : state_(std::move(state)) {}

std::string Pool::save() const {
  const State& pool = *state_;
  ByteWriter out;
  out.put(kMagic);
  out.put(kVersion);
  out.put(static_cast<std::uint8_t>(pool.mode));
  out.put<std::uint64_t>(pool.limits.max_vertices);
  out.put<std::uint64_t>(pool.limits.max_edges);
  out.put(pool.limits.max_abs_weight);
  out.put(pool.commits);
  out.put(pool.weight);
  out.put<std::uint64_t>(pool.pairs);
  pool.graph.save(out);
  out.put_vector(pool.matching.mate.values());
  out.put_vector(pool.matching.dual2);
  pool.matching.forest.save(out);
  return out.take();
}

std::unique_ptr<Pool> Pool::restore(std::string_view bytes) {
  ByteReader in(bytes);
  if (in.get<std::uint64_t>() != kMagic) ByteReader::fail("it does not start with the pool magic");
  if (in.get<std::uint32_t>() != kVersion) ByteReader::fail("unknown format version");
  const auto mode_number = in.get<std::uint8_t>();
  if (mode_number > static_cast<std::uint8_t>(Mode::perfect)) ByteReader::fail("unknown mode");
  PoolLimits limits;
  limits.max_vertices = in.get<std::uint64_t>();
  limits.max_edges = in.get<std::uint64_t>();
  limits.max_abs_weight = in.get<Weight>();
  auto state = std::make_unique<State>(static_cast<Mode>(mode_number), limits);
  State& pool = *state;
  pool.commits = in.get<std::uint64_t>();
  pool.weight = in.get<Weight>();
  pool.pairs = in.get<std::uint64_t>();
  pool.graph = PoolGraph::load(in);
  const std::size_t n = pool.graph.capacity();
  pool.matching.mate.assign(in.get_vector<Vertex>(n));
  if (pool.matching.mate.size() != n) ByteReader::fail("the matching has the wrong length");
  pool.matching.dual2 = in.get_vector<Weight>(n);
  check_matching(pool.graph, pool.matching.mate, pool.matching.dual2);
  pool.matching.forest = BlossomForest::load(in);
  if (pool.matching.forest.vertex_count() != n) ByteReader::fail("the forest has the wrong size");
  if (!in.done()) ByteReader::fail("bytes are left over at the end");
  pool.node_mark.assign(2 * n, 0);
  pool.search = std::make_unique<AlternatingSearch>(pool.graph.graph(), pool.weight_offset, pool.matching);
  return std::unique_ptr<Pool>(new Pool(std::move(state)));
}

}  // namespace yoke
