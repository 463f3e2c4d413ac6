// The structures that make a max-cardinality or perfect repair expensive (issue 13 item 2), built
// on purpose on tiny graphs and hit after every commit. In these modes every weight carries a
// large offset, so the optimum's dual solution splits the graph by the Gallai-Edmonds
// decomposition: a component that cannot be matched perfectly sits inside one blossom whose
// dual holds the offset, with its one exposed vertex at its base; the vertices next to such
// components (the "A" side) carry the offset on their own duals. The events here aim at those
// parts: the exposed base and its edges, the matched and cycle edges inside the spanning
// blossom, a matched vertex whose departure flips a component between odd and even, the hub
// between two odd parts, arrivals wired to the exposed vertex.
//
// After every commit: yoke::check_certificate accepts the pool's certificate, and the weight,
// the pairs and (perfect mode) the feasibility equal those found by exhaustive enumeration of
// every matching of the pool's graph (tests/oracles/exhaustive.h: independent of any matching
// algorithm). Any later mechanism that lets these repairs stop early must keep all of it.
#include <gtest/gtest.h>

#include <algorithm>
#include <cstdint>
#include <string>
#include <vector>

#include "yoke/certificate.h"
#include "yoke/pool.h"
#include "all_modes.h"
#include "checked_solve.h"
#include "exhaustive.h"
#include "split_certificate.h"
#include "test_scale.h"
#include "tools/graphgen/rng.h"

namespace yoke {
namespace {

constexpr std::size_t kMostVertices = 12;  // keeps enumeration to a few thousand matchings

testing::AssertionResult certified_and_exhaustively_optimal(const Pool& pool,
                                                            const CommitResult& result) {
  const PoolExport exported = pool.export_certified();
  const SolveResult r = oracle::as_solve_result(result, exported);
  if (auto sound = oracle::result_is_sound(exported.graph, pool.mode(), r); !sound) return sound;
  // yoke::check_certificate (engine/include/yoke/certificate.h).
  if (auto holds = oracle::certificate_holds(exported.graph, r); !holds) return holds;
  // The split form of docs/mathematics.md §9 (class prices and weight prices) holds too.
  const oracle::SplitOutcome split = oracle::split_certificate(exported.graph, exported.certificate);
  if (!split.ok) return testing::AssertionFailure() << "no split certificate: " << split.failure;
  if (const CheckResult c = check_lexicographic_certificate(exported.graph, split.certificate); !c.ok) {
    return testing::AssertionFailure() << "split certificate refused: " << c.failure;
  }
  // Exhaustive enumeration of every matching (tests/oracles/exhaustive.h).
  return oracle::same_optimum(exported.graph, pool.mode(), r, [](const Graph& g, Mode m) {
    return oracle::exhaustive_optimum(g, m);
  });
}

// A tiny pool and the keys it holds, with the moves that aim at its structure.
class Aimer {
 public:
  Aimer(Mode mode, std::uint64_t seed) : pool_(mode), rng_(seed, 13) {}

  Pool& pool() { return pool_; }
  std::uint64_t next_key() { return next_key_++; }
  Weight weight() { return rng_.between(-3, 12); }  // small range: ties, zero and negatives
  gen::Rng& rng() { return rng_; }

  std::vector<VertexKey> alive() const {
    std::vector<VertexKey> keys;
    for (VertexKey k = 0; k < next_key_; ++k) {
      if (pool_.has_vertex(k)) keys.push_back(k);
    }
    return keys;
  }
  std::vector<VertexKey> exposed() const {
    std::vector<VertexKey> keys;
    for (VertexKey k : alive()) {
      if (!pool_.mate_of(k)) keys.push_back(k);
    }
    return keys;
  }
  // Edges of the pool's graph, by keys.
  std::vector<std::pair<VertexKey, VertexKey>> edges() const {
    const PoolExport exported = pool_.export_certified();
    std::vector<std::pair<VertexKey, VertexKey>> out;
    for (const Edge& e : exported.graph.edges()) out.emplace_back(exported.keys[e.a], exported.keys[e.b]);
    return out;
  }
  bool has_edge(VertexKey a, VertexKey b) const {
    const auto all = edges();
    return std::any_of(all.begin(), all.end(), [&](const auto& e) {
      return (e.first == a && e.second == b) || (e.first == b && e.second == a);
    });
  }

  template <typename T>
  const T& pick(const std::vector<T>& from) {
    return from[rng_.below(from.size())];
  }

  // One aimed action, as a batch. Empty when the action found nothing to aim at.
  std::vector<Event> draw() {
    const std::vector<VertexKey> keys = alive();
    const std::vector<VertexKey> open = exposed();
    const auto all_edges = edges();
    std::vector<Event> batch;
    auto set = [&](VertexKey a, VertexKey b, Weight w) {
      batch.push_back({EventKind::set_edge, a, b, w});
    };
    switch (rng_.below(9)) {
      case 0:  // an edge at an exposed vertex rises (or appears): its dual must rise
        if (!open.empty() && keys.size() > 1) {
          const VertexKey x = pick(open);
          VertexKey y = pick(keys);
          if (y != x) set(x, y, weight() + 6);
        }
        break;
      case 1:  // a matched edge (inside the spanning blossom, or A to D) falls or rises
        if (!all_edges.empty()) {
          for (int tries = 0; tries < 8; ++tries) {
            const auto [a, b] = pick(all_edges);
            if (pool_.mate_of(a) == b) {
              set(a, b, weight());
              break;
            }
          }
        }
        break;
      case 2:  // any edge gets a new weight (often a cycle edge of the big blossom)
        if (!all_edges.empty()) {
          const auto [a, b] = pick(all_edges);
          set(a, b, weight());
        }
        break;
      case 3:  // a matched vertex leaves: its component flips between odd and even
        if (keys.size() > 2) {
          for (int tries = 0; tries < 8; ++tries) {
            const VertexKey v = pick(keys);
            if (pool_.mate_of(v)) {
              batch.push_back({EventKind::remove_vertex, v, 0, 0});
              break;
            }
          }
        }
        break;
      case 4:  // the exposed vertex leaves
        if (!open.empty() && keys.size() > 2) batch.push_back({EventKind::remove_vertex, pick(open), 0, 0});
        break;
      case 5:  // an arrival wired to an exposed vertex and to one or two others
        if (keys.size() < kMostVertices && !keys.empty()) {
          const VertexKey v = next_key();
          set(v, open.empty() ? pick(keys) : pick(open), weight());
          for (std::uint64_t i = rng_.below(3); i > 0; --i) {
            const VertexKey other = pick(keys);
            if (std::none_of(batch.begin(), batch.end(), [&](const Event& e) { return e.v == other; })) {
              set(v, other, weight());
            }
          }
        }
        break;
      case 6:  // an edge at an exposed vertex leaves
        if (!open.empty()) {
          const VertexKey x = pick(open);
          for (const auto& [a, b] : all_edges) {
            if (a == x || b == x) {
              batch.push_back({EventKind::unset_edge, a, b, 0});
              break;
            }
          }
        }
        break;
      case 7:  // a new edge between two vertices already there
        if (keys.size() > 2) {
          const VertexKey a = pick(keys);
          const VertexKey b = pick(keys);
          if (a != b && !has_edge(a, b)) set(a, b, weight());
        }
        break;
      default:  // an edge leaves anywhere
        if (all_edges.size() > 1) {
          const auto [a, b] = pick(all_edges);
          batch.push_back({EventKind::unset_edge, a, b, 0});
        }
        break;
    }
    return batch;
  }

 private:
  Pool pool_;
  gen::Rng rng_;
  std::uint64_t next_key_ = 0;
};

// Base graphs whose optimum in these modes has the expensive structures.
enum class Shape {
  odd_cycle_with_chords,  // one component that cannot be matched perfectly: a spanning blossom
  two_odd_cycles_and_hub,  // D - A - D: the hub is matched into one side, the other side's
                           // exposed base waits behind it
  even_cycle_with_chords,  // perfectly matchable: every vertex's dual holds half the offset
};

std::vector<Event> base_graph(Shape shape, Aimer& aimer) {
  gen::Rng& rng = aimer.rng();
  std::vector<Event> batch;
  auto set = [&](VertexKey a, VertexKey b) {
    batch.push_back({EventKind::set_edge, a, b, aimer.weight()});
  };
  auto cycle = [&](std::size_t length) {
    const VertexKey first = aimer.next_key();
    for (std::size_t i = 1; i < length; ++i) set(first + i - 1, aimer.next_key());
    set(first + length - 1, first);
    return first;
  };
  auto chords = [&](VertexKey first, std::size_t length, std::uint64_t count) {
    for (; count > 0; --count) {
      const VertexKey a = first + rng.below(length);
      const VertexKey b = first + rng.below(length);
      const bool neighbours = (a + 1 - first) % length == b - first || (b + 1 - first) % length == a - first;
      if (a == b || neighbours) continue;
      if (std::any_of(batch.begin(), batch.end(), [&](const Event& e) {
            return (e.u == a && e.v == b) || (e.u == b && e.v == a);
          })) {
        continue;
      }
      set(a, b);
    }
  };
  switch (shape) {
    case Shape::odd_cycle_with_chords: {
      const std::size_t length = 5 + 2 * rng.below(3);  // 5, 7, 9
      chords(cycle(length), length, rng.below(4));
      break;
    }
    case Shape::two_odd_cycles_and_hub: {
      const std::size_t left = 3 + 2 * rng.below(2);   // 3 or 5
      const std::size_t right = 3 + 2 * rng.below(2);
      const VertexKey l = cycle(left);
      const VertexKey r = cycle(right);
      const VertexKey hub = aimer.next_key();
      set(hub, l + rng.below(left));
      set(hub, r + rng.below(right));
      if (rng.below(2) == 0) set(hub, l + rng.below(left));
      break;
    }
    case Shape::even_cycle_with_chords: {
      const std::size_t length = 6 + 2 * rng.below(3);  // 6, 8, 10
      chords(cycle(length), length, 1 + rng.below(3));
      break;
    }
  }
  // A repeated chord sets its edge twice: the later weight counts, as a batch says.
  return batch;
}

// How often a sweep met what it aims at, so a drift in the generator cannot empty it silently.
struct Coverage {
  std::size_t commits = 0;
  std::size_t offset_blossom = 0;  // a blossom's dual holds the offset (weights here are tiny)
  std::size_t exposed = 0;         // some vertex was left exposed
};

// Weights stay within [-3, 18]: a doubled blossom dual above this holds the mode's offset.
constexpr Weight kOffsetSized = 1000;

void note_coverage(const Pool& pool, Coverage& coverage) {
  const PoolExport exported = pool.export_certified();
  ++coverage.commits;
  const auto& blossoms = exported.certificate.blossoms;
  if (std::any_of(blossoms.begin(), blossoms.end(),
                  [](const CertificateBlossom& b) { return b.dual2 > kOffsetSized; })) {
    ++coverage.offset_blossom;
  }
  if (2 * pool.pairs() < pool.vertex_count()) ++coverage.exposed;
}

void expect_aimed_stream_certified(Mode mode, Shape shape, std::uint64_t seed, Coverage& coverage) {
  Aimer aimer(mode, seed);
  Pool& pool = aimer.pool();
  std::vector<std::vector<Event>> batches{base_graph(shape, aimer)};
  constexpr int kActions = 30;
  for (int step = 0; step <= kActions; ++step) {
    if (step > 0) {
      std::vector<Event> batch = aimer.draw();
      if (batch.empty()) continue;
      batches.push_back(std::move(batch));
    }
    const std::vector<Event>& batch = batches.back();
    if (const auto error = pool.check(batch)) {
      FAIL() << "seed " << seed << ": drawn batch " << batches.size() << " rejected: " << error->message;
    }
    const CommitResult result = pool.commit(batch);
    if (auto ok = certified_and_exhaustively_optimal(pool, result); !ok) {
      FAIL() << mode_name(mode) << " seed " << seed << " commit " << result.commit << " ("
             << batch.size() << " events, first kind "
             << static_cast<int>(batch.front().kind) << "): " << ok.message();
    }
    note_coverage(pool, coverage);
  }
}

// Each sweep met a blossom holding the offset in about a fifth of its commits and an exposed
// vertex in more than half (measured when the sweeps were written): a tenth and a quarter.
void expect_covered(const Coverage& coverage) {
  EXPECT_GE(coverage.offset_blossom * 10, coverage.commits) << coverage.offset_blossom << " of " << coverage.commits;
  EXPECT_GE(coverage.exposed * 4, coverage.commits) << coverage.exposed << " of " << coverage.commits;
}

class CardinalityStructures : public testing::TestWithParam<Mode> {};

TEST_P(CardinalityStructures, SpanningBlossomAndItsExposedBase) {
  const int seeds = oracle::scaled(400);
  Coverage coverage;
  for (int seed = 1; seed <= seeds; ++seed) {
    expect_aimed_stream_certified(GetParam(), Shape::odd_cycle_with_chords, seed, coverage);
    if (HasFatalFailure()) return;
  }
  expect_covered(coverage);
}

TEST_P(CardinalityStructures, OddPartsBehindAHub) {
  const int seeds = oracle::scaled(400);
  Coverage coverage;
  for (int seed = 1; seed <= seeds; ++seed) {
    expect_aimed_stream_certified(GetParam(), Shape::two_odd_cycles_and_hub, seed, coverage);
    if (HasFatalFailure()) return;
  }
  expect_covered(coverage);
}

TEST_P(CardinalityStructures, PerfectlyMatchableThenOddAndBack) {
  const int seeds = oracle::scaled(400);
  Coverage coverage;
  for (int seed = 1; seed <= seeds; ++seed) {
    expect_aimed_stream_certified(GetParam(), Shape::even_cycle_with_chords, seed, coverage);
    if (HasFatalFailure()) return;
  }
  expect_covered(coverage);
}

INSTANTIATE_TEST_SUITE_P(Modes, CardinalityStructures,
                         testing::Values(Mode::max_cardinality, Mode::perfect),
                         [](const testing::TestParamInfo<Mode>& mode) {
                           return oracle::mode_label(mode.param);
                         });

}  // namespace
}  // namespace yoke
