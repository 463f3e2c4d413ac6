// The hard cases of incremental repair (docs/mathematics.md §5), each built on purpose: the pool
// is loaded with a graph whose optimum holds nested blossoms, the certificate is read to find the
// structure an event must break (a blossom's cycle edge, its base, a vertex deep inside nested
// blossoms, an edge between two blossoms), and the event is aimed at it. After every commit:
// the certificate holds (yoke's independent checker), and the weight equals LEMON 1.3.1's
// optimum (Debian liblemon-dev) and that of yoke's static engine (an independent from-scratch
// solve). Each case asserts that it found its structure often enough to mean something.
#include <gtest/gtest.h>

#include <algorithm>
#include <cstdint>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "yoke/certificate.h"
#include "yoke/pool.h"
#include "yoke/solve.h"
#include "lemon_oracle.h"
#include "test_scale.h"
#include "tools/graphgen/generators.h"
#include "tools/graphgen/rng.h"

namespace yoke {
namespace {

// The blossom structure a certificate describes, over the export's dense ids.
class Structure {
 public:
  explicit Structure(const PoolExport& pool) : pool_(pool), n_(pool.keys.size()) {
    const std::size_t nodes = n_ + pool.certificate.blossoms.size();
    parent_.assign(nodes, kNone);
    for (std::size_t k = 0; k < pool.certificate.blossoms.size(); ++k) {
      for (NodeId child : pool.certificate.blossoms[k].children) parent_[child] = static_cast<NodeId>(n_ + k);
    }
  }

  std::size_t depth(Vertex v) const {
    std::size_t d = 0;
    for (NodeId node = parent_[v]; node != kNone; node = parent_[node]) ++d;
    return d;
  }
  NodeId top(NodeId node) const {
    while (parent_[node] != kNone) node = parent_[node];
    return node;
  }
  bool is_blossom(NodeId node) const { return node >= n_; }
  const CertificateBlossom& blossom(NodeId node) const { return pool_.certificate.blossoms[node - n_]; }
  bool contains(NodeId node, Vertex v) const {
    for (NodeId x = v; x != kNone; x = parent_[x]) {
      if (x == node) return true;
    }
    return false;
  }
  // Blossoms with a positive dual, deepest nest first.
  std::vector<NodeId> priced_blossoms() const {
    std::vector<NodeId> out;
    for (std::size_t k = 0; k < pool_.certificate.blossoms.size(); ++k) {
      if (pool_.certificate.blossoms[k].dual2 > 0) out.push_back(static_cast<NodeId>(n_ + k));
    }
    return out;
  }
  Weight slack2(const Edge& e) const {
    Weight z2 = 0;
    for (NodeId node = parent_[e.a]; node != kNone; node = parent_[node]) {
      if (contains(node, e.b)) z2 += blossom(node).dual2;
    }
    const Certificate& c = pool_.certificate;
    return c.vertex_dual2[e.a] + c.vertex_dual2[e.b] + z2 - 2 * (e.w + c.weight_offset);
  }
  // Tight edges joining two different children of `b`: its cycle edges are among them, and
  // for a child pair joined by one tight edge only, that edge is on the cycle.
  std::vector<Edge> cycle_edges(NodeId b) const {
    std::vector<Edge> out;
    const auto& kids = blossom(b).children;
    for (std::size_t i = 0; i < kids.size(); ++i) {
      const NodeId x = kids[i];
      const NodeId y = kids[(i + 1) % kids.size()];
      std::vector<Edge> joining;
      for (const Edge& e : pool_.graph.edges()) {
        if (((contains(x, e.a) && contains(y, e.b)) || (contains(x, e.b) && contains(y, e.a))) &&
            slack2(e) == 0) {
          joining.push_back(e);
        }
      }
      if (joining.size() == 1) out.push_back(joining.front());
    }
    return out;
  }

 private:
  static constexpr NodeId kNone = static_cast<NodeId>(-1);
  const PoolExport& pool_;
  std::size_t n_;
  std::vector<NodeId> parent_;
};

Event set_event(VertexKey a, VertexKey b, Weight w) { return {EventKind::set_edge, a, b, w}; }
Event unset_event(VertexKey a, VertexKey b) { return {EventKind::unset_edge, a, b, 0}; }
Event remove_event(VertexKey v) { return {EventKind::remove_vertex, v, 0, 0}; }

// Commits `batch` and checks the result against the checker, LEMON and the static engine.
void commit_checked(Pool& pool, const std::vector<Event>& batch, const std::string& label) {
  ASSERT_FALSE(pool.check(batch).has_value()) << label;
  const CommitResult result = pool.commit(batch);
  const PoolExport out = pool.export_certified();
  const CheckResult check = check_certificate(out.graph, out.certificate);
  ASSERT_TRUE(check.ok) << label << ": " << check.failure;
  // LEMON 1.3.1 (Debian liblemon-dev): an independent implementation.
  const oracle::Answer lemon = oracle::lemon_optimum(out.graph, pool.mode());
  EXPECT_EQ(result.weight, lemon.weight) << label << " (LEMON)";
  // yoke's static engine: a from-scratch solve of the same graph.
  const SolveResult fresh = solve(out.graph, pool.mode());
  EXPECT_EQ(result.weight, fresh.weight) << label << " (static engine)";
  if (pool.mode() != Mode::max_weight) {
    EXPECT_EQ(result.pairs, lemon.pairs) << label;
  }
}

// A pool loaded with one graph of blossom-heavy shapes; keys are the generator's ids.
std::unique_ptr<Pool> loaded_pool(const gen::GeneratedGraph& graph, Mode mode) {
  auto pool = std::make_unique<Pool>(mode);
  std::vector<Event> batch;
  for (const Edge& e : graph.edges) batch.push_back(set_event(e.a, e.b, e.w));
  pool->commit(batch);
  return pool;
}

gen::GeneratedGraph shapes(std::uint64_t seed) {
  return seed % 3 == 2 ? gen::city(60 + seed % 50, 6, seed) : gen::blossom_stress(40 + seed % 60, seed);
}

// Runs `aim` on many seeds and modes; `aim` returns the batch aimed at the structure, or nothing
// when this graph lacks it. Fails unless at least `at_least` batches were aimed.
void sweep(const std::string& name, int at_least,
           const std::function<std::optional<std::vector<Event>>(const PoolExport&, gen::Rng&)>& aim) {
  int aimed = 0;
  const int seeds = oracle::scaled(60);
  for (Mode mode : {Mode::max_weight, Mode::max_cardinality}) {
    for (int seed = 0; seed < seeds; ++seed) {
      const gen::GeneratedGraph graph = shapes(static_cast<std::uint64_t>(seed));
      auto pool = loaded_pool(graph, mode);
      gen::Rng rng(static_cast<std::uint64_t>(seed) * 7919 + 17);
      // Several rounds: each aims at the structure the previous repair left behind.
      for (int round = 0; round < 4; ++round) {
        const PoolExport before = pool->export_certified();
        const std::optional<std::vector<Event>> batch = aim(before, rng);
        if (!batch) break;
        ++aimed;
        commit_checked(*pool, *batch,
                       name + " " + mode_name(mode) + " seed " + std::to_string(seed) + " round " +
                           std::to_string(round));
        if (testing::Test::HasFatalFailure()) return;
      }
    }
  }
  EXPECT_GE(aimed, oracle::small_scale() ? at_least / 5 : at_least) << name << " found its structure too rarely";
}

// A cycle edge of the deepest priced blossom, by the outside keys.
std::optional<Edge> some_cycle_edge(const PoolExport& pool, gen::Rng& rng, bool matched) {
  const Structure s(pool);
  std::vector<Edge> candidates;
  for (NodeId b : s.priced_blossoms()) {
    for (const Edge& e : s.cycle_edges(b)) {
      if ((pool.certificate.mate[e.a] == e.b) == matched) candidates.push_back(e);
    }
  }
  if (candidates.empty()) return std::nullopt;
  Edge e = candidates[rng.below(candidates.size())];
  return Edge{static_cast<Vertex>(pool.keys[e.a]), static_cast<Vertex>(pool.keys[e.b]), e.w};
}

TEST(PoolHardCases, UnmatchedCycleEdgeFalls) {
  sweep("unmatched cycle edge falls", 40, [](const PoolExport& pool, gen::Rng& rng) {
    const auto e = some_cycle_edge(pool, rng, false);
    if (!e) return std::optional<std::vector<Event>>();
    return std::optional(std::vector<Event>{set_event(e->a, e->b, e->w - 1 - static_cast<Weight>(rng.below(20)))});
  });
}

TEST(PoolHardCases, MatchedCycleEdgeFalls) {
  sweep("matched cycle edge falls", 40, [](const PoolExport& pool, gen::Rng& rng) {
    const auto e = some_cycle_edge(pool, rng, true);
    if (!e) return std::optional<std::vector<Event>>();
    return std::optional(std::vector<Event>{set_event(e->a, e->b, e->w - 1 - static_cast<Weight>(rng.below(20)))});
  });
}

TEST(PoolHardCases, CycleEdgeRises) {
  sweep("cycle edge rises", 40, [](const PoolExport& pool, gen::Rng& rng) {
    const auto e = some_cycle_edge(pool, rng, rng.below(2) == 0);
    if (!e) return std::optional<std::vector<Event>>();
    return std::optional(std::vector<Event>{set_event(e->a, e->b, e->w + 1 + static_cast<Weight>(rng.below(20)))});
  });
}

TEST(PoolHardCases, CycleEdgeRemoved) {
  sweep("cycle edge removed", 40, [](const PoolExport& pool, gen::Rng& rng) {
    const auto e = some_cycle_edge(pool, rng, rng.below(2) == 0);
    if (!e) return std::optional<std::vector<Event>>();
    return std::optional(std::vector<Event>{unset_event(e->a, e->b)});
  });
}

TEST(PoolHardCases, BaseOfTopBlossomDeparts) {
  sweep("base departs", 40, [](const PoolExport& pool, gen::Rng& rng) {
    const Structure s(pool);
    std::vector<Vertex> bases;
    for (NodeId b : s.priced_blossoms()) {
      if (s.top(b) == b) bases.push_back(s.blossom(b).base);
    }
    if (bases.empty()) return std::optional<std::vector<Event>>();
    return std::optional(std::vector<Event>{remove_event(pool.keys[bases[rng.below(bases.size())]])});
  });
}

TEST(PoolHardCases, DeepVertexDeparts) {
  sweep("deep vertex departs", 40, [](const PoolExport& pool, gen::Rng&) {
    const Structure s(pool);
    Vertex deepest = 0;
    for (Vertex v = 0; v < pool.keys.size(); ++v) {
      if (s.depth(v) > s.depth(deepest)) deepest = v;
    }
    if (s.depth(deepest) < 2) return std::optional<std::vector<Event>>();
    return std::optional(std::vector<Event>{remove_event(pool.keys[deepest])});
  });
}

TEST(PoolHardCases, WeightRisesBetweenTwoBlossoms) {
  sweep("rise between blossoms", 40, [](const PoolExport& pool, gen::Rng& rng) {
    const Structure s(pool);
    std::vector<Edge> between;
    for (const Edge& e : pool.graph.edges()) {
      const NodeId ta = s.top(e.a);
      const NodeId tb = s.top(e.b);
      if (ta != tb && s.is_blossom(ta) && s.is_blossom(tb)) between.push_back(e);
    }
    if (between.empty()) return std::optional<std::vector<Event>>();
    const Edge e = between[rng.below(between.size())];
    // Past the slack, so the duals must move: half the doubled slack, plus a little more.
    const Weight rise = s.slack2(e) / 2 + 1 + static_cast<Weight>(rng.below(10));
    return std::optional(std::vector<Event>{set_event(pool.keys[e.a], pool.keys[e.b], e.w + rise)});
  });
}

TEST(PoolHardCases, OneBatchTouchesADeepVertexManyTimes) {
  sweep("same vertex many times", 40, [](const PoolExport& pool, gen::Rng& rng) {
    const Structure s(pool);
    Vertex deepest = 0;
    for (Vertex v = 0; v < pool.keys.size(); ++v) {
      if (s.depth(v) > s.depth(deepest)) deepest = v;
    }
    if (s.depth(deepest) < 1 || pool.graph.incident(deepest).size() < 2) {
      return std::optional<std::vector<Event>>();
    }
    const VertexKey v = pool.keys[deepest];
    std::vector<Event> batch;
    const auto incident = pool.graph.incident(deepest);
    const VertexKey first = pool.keys[incident[0].other];
    const VertexKey second = pool.keys[incident[1].other];
    batch.push_back(set_event(v, first, incident[0].w + 5));
    batch.push_back(set_event(v, first, incident[0].w - 3));
    batch.push_back(unset_event(v, second));
    batch.push_back(set_event(v, second, incident[1].w + static_cast<Weight>(rng.below(9))));
    if (rng.below(2) == 0) {
      // It leaves and comes back under the same key with fewer edges.
      batch.push_back(remove_event(v));
      batch.push_back(set_event(v, first, 7));
      batch.push_back(set_event(v, second, 3));
    }
    return std::optional(batch);
  });
}

}  // namespace
}  // namespace yoke
