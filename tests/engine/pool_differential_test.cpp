// The incremental pool against yoke's static engine: hundreds of seeded event streams over the
// five graph families, in every mode, at batch sizes 1, 5, 100 and 1..100, with every kind of
// event. After every commit the pool's certificate must hold and its optimum must be the one a
// from-scratch solve of the same graph finds. A failing stream is saved as an event script for
// `yoke replay --verify`.
//
// The streams come from tools/graphgen/event_stream.h; the first tests below check that they
// are what the differential tests assume: valid, deterministic, varied.
#include <gtest/gtest.h>

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <map>
#include <set>
#include <string>
#include <tuple>
#include <utility>
#include <vector>

#include "yoke/pool.h"
#include "yoke/solve.h"
#include "tests/oracles/checked_solve.h"
#include "tests/oracles/stream_cases.h"
#include "tests/oracles/test_scale.h"
#include "tools/formats/event_script_writer.h"
#include "tools/graphgen/event_stream.h"

namespace yoke {
namespace {

using gen::StreamFamily;
using KeyPair = std::pair<VertexKey, VertexKey>;


KeyPair ordered(VertexKey a, VertexKey b) { return {std::min(a, b), std::max(a, b)}; }

// ---- the streams ----------------------------------------------------------------------------

// The state a stream describes, replayed with plain ordered containers (no engine code): every
// event must fit it, and each event is classified for the coverage test.
struct StreamReplay {
  std::set<VertexKey> alive;
  std::set<VertexKey> departed;
  std::map<KeyPair, Weight> edges;
  std::map<std::string, int> seen;  // how often each kind of event occurred

  // The problem with `e`, or empty; applies it when it fits.
  std::string apply(const Event& e) {
    switch (e.kind) {
      case EventKind::add_vertex:
        if (!alive.insert(e.u).second) return "add of a vertex that exists";
        ++seen[departed.erase(e.u) > 0 ? "add of a returning key" : "add"];
        return "";
      case EventKind::set_edge: {
        if (e.u == e.v) return "self loop";
        const auto [at, inserted] = edges.try_emplace(ordered(e.u, e.v), e.w);
        if (!inserted) {
          ++seen[at->second == e.w ? "set to the same weight" : "set of an existing edge"];
          at->second = e.w;
        } else {
          ++seen["set of a new edge"];
          for (const VertexKey x : {e.u, e.v}) {
            if (alive.insert(x).second) ++seen[departed.erase(x) > 0 ? "set brings a key back"
                                                                      : "set brings a vertex"];
          }
        }
        if (e.w == 0) ++seen["weight 0"];
        if (e.w < 0) ++seen["negative weight"];
        return "";
      }
      case EventKind::unset_edge:
        if (e.u == e.v) return "unset of a self loop";
        if (edges.erase(ordered(e.u, e.v)) == 0) return "unset of an edge that does not exist";
        ++seen["unset"];
        return "";
      case EventKind::remove_vertex:
        if (alive.erase(e.u) == 0) return "remove of a vertex that does not exist";
        departed.insert(e.u);
        std::erase_if(edges, [&](const auto& kv) { return kv.first.first == e.u || kv.first.second == e.u; });
        ++seen["remove"];
        return "";
      case EventKind::hold_pair:
      case EventKind::release_pair: return "a hold event (the generators draw none)";
    }
    return "unknown event kind";
  }
};

// Common knowledge (what "valid" means, docs/contracts.md §2): each event fits the state the
// events before it leave.
TEST(EventStream, EveryEventFitsTheStateBeforeIt) {
  for (const StreamFamily family : oracle::kStreamFamilies) {
    for (std::uint64_t seed = 0; seed < 8; ++seed) {
      gen::StreamSpec spec = gen::test_stream_spec(family, seed, 40, 30);
      spec.extreme_weight = 1000000;
      StreamReplay replay;
      std::size_t index = 0;
      for (const auto& batch : gen::generate_stream(spec)) {
        for (const Event& e : batch) {
          const std::string problem = replay.apply(e);
          ASSERT_EQ(problem, "") << gen::stream_family_name(family) << " seed " << seed
                                 << ", event " << index;
          ++index;
        }
      }
    }
  }
}

// The test mix reaches every kind of event and the corner cases the pool must handle.
TEST(EventStream, TestMixCoversEveryEventKind) {
  gen::StreamSpec spec = gen::test_stream_spec(StreamFamily::random, 3, 40, 40);
  spec.events = 3000;
  spec.batch_min = spec.batch_max = 100;
  spec.scrambled_keys = true;
  spec.extreme_weight = 1 << 20;
  StreamReplay replay;
  int same_batch_add_remove = 0;
  int same_batch_set_unset = 0;
  int tied_weights = 0;
  bool near_top_key = false;
  for (const auto& batch : gen::generate_stream(spec)) {
    std::set<VertexKey> added;
    std::set<KeyPair> set_here;
    std::map<VertexKey, Weight> weight_at;  // a weight set at each vertex in this batch
    for (const Event& e : batch) {
      ASSERT_EQ(replay.apply(e), "");
      near_top_key |= e.u >= ~VertexKey{0} - (VertexKey{1} << 32);
      if (e.kind == EventKind::add_vertex) added.insert(e.u);
      if (e.kind == EventKind::remove_vertex) same_batch_add_remove += added.count(e.u) > 0;
      if (e.kind == EventKind::set_edge) {
        set_here.insert(ordered(e.u, e.v));
        tied_weights += weight_at.count(e.u) > 0 && weight_at[e.u] == e.w;
        weight_at[e.u] = weight_at[e.v] = e.w;
      }
      if (e.kind == EventKind::unset_edge) same_batch_set_unset += set_here.count(ordered(e.u, e.v)) > 0;
    }
  }
  for (const char* kind : {"add", "add of a returning key", "set of a new edge",
                           "set of an existing edge", "set to the same weight",
                           "set brings a vertex", "unset", "remove", "weight 0",
                           "negative weight"}) {
    EXPECT_GT(replay.seen[kind], 0) << kind;
  }
  EXPECT_GT(same_batch_add_remove, 0);
  EXPECT_GT(same_batch_set_unset, 0);
  EXPECT_GT(tied_weights, 0);
  EXPECT_TRUE(near_top_key);
}

// Events as comparable (and printable) values.
using EventTuple = std::tuple<EventKind, VertexKey, VertexKey, Weight>;

std::vector<EventTuple> tuples(const std::vector<Event>& batch) {
  std::vector<EventTuple> out;
  for (const Event& e : batch) out.emplace_back(e.kind, e.u, e.v, e.w);
  return out;
}

std::vector<std::vector<EventTuple>> tuples(const std::vector<std::vector<Event>>& batches) {
  std::vector<std::vector<EventTuple>> out;
  for (const auto& batch : batches) out.push_back(tuples(batch));
  return out;
}

std::vector<EventTuple> after_first_batch(const std::vector<std::vector<Event>>& batches) {
  std::vector<EventTuple> events;
  for (std::size_t i = 1; i < batches.size(); ++i) {
    const auto batch = tuples(batches[i]);
    events.insert(events.end(), batch.begin(), batch.end());
  }
  return events;
}

TEST(EventStream, SameSpecSameEventsOtherSeedOtherEvents) {
  for (const StreamFamily family : oracle::kStreamFamilies) {
    const gen::StreamSpec spec = gen::test_stream_spec(family, 11, 40, 20);
    gen::StreamSpec other = spec;
    other.seed = 12;
    const auto first = tuples(gen::generate_stream(spec));
    EXPECT_EQ(first, tuples(gen::generate_stream(spec))) << gen::stream_family_name(family);
    EXPECT_NE(first, tuples(gen::generate_stream(other))) << gen::stream_family_name(family);
  }
}

// The batch sizes only cut the events: the same spec with other batch sizes gives the same
// events, in batches of the sizes asked for.
TEST(EventStream, BatchSizesOnlyCutTheStream) {
  gen::StreamSpec spec = gen::test_stream_spec(StreamFamily::city, 5, 60, 1);
  spec.events = 1234;
  const auto cut = [&](std::size_t low, std::size_t high) {
    gen::StreamSpec s = spec;
    s.batch_min = low;
    s.batch_max = high;
    return gen::generate_stream(s);
  };
  const auto ones = cut(1, 1);
  const auto hundreds = cut(100, 100);
  const auto mixed = cut(1, 100);
  EXPECT_EQ(tuples(ones.front()), tuples(hundreds.front()));
  EXPECT_EQ(after_first_batch(ones).size(), 1234u);
  EXPECT_EQ(after_first_batch(ones), after_first_batch(hundreds));
  EXPECT_EQ(after_first_batch(ones), after_first_batch(mixed));
  EXPECT_EQ(ones.size(), 1235u);
  EXPECT_EQ(hundreds.size(), 1u + 13u);  // twelve of 100 and the last 34
  for (std::size_t i = 1; i < mixed.size(); ++i) {
    EXPECT_GE(mixed[i].size(), 1u);
    EXPECT_LE(mixed[i].size(), 100u);
  }
}

// The benchmark mix balances arrivals and departures (shares of actions), so a long stream
// keeps the pool near its starting size.
TEST(EventStream, BenchmarkMixKeepsThePoolNearItsSize) {
  gen::StreamSpec spec;
  spec.vertices = 1000;
  spec.events = 30000;
  StreamReplay replay;
  for (const auto& batch : gen::generate_stream(spec)) {
    for (const Event& e : batch) ASSERT_EQ(replay.apply(e), "");
  }
  EXPECT_GT(replay.alive.size(), 500u);
  EXPECT_LT(replay.alive.size(), 1500u);
}

TEST(EventStream, MixTextRoundTripsAndBadMixesAreErrors) {
  EXPECT_EQ(gen::parse_mix("bench"), gen::benchmark_mix());
  EXPECT_EQ(gen::parse_mix(gen::mix_text(gen::test_mix())), gen::test_mix());
  EXPECT_EQ(gen::parse_mix("remove=3").remove, 3);
  const gen::EventMix every = gen::parse_mix(
      "nudge-weight=1,random-weight=2,add=3,remove=4,unset=5,link=6,vertex-burst=7,add-remove=8,"
      "set-unset=9,tricky-weight=10,re-add=11");
  EXPECT_EQ(std::vector<int>({every.nudge_weight, every.random_weight, every.add, every.remove,
                              every.unset, every.link, every.vertex_burst, every.add_remove,
                              every.set_unset, every.tricky_weight, every.re_add}),
            std::vector<int>({1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11}));
  EXPECT_EQ(gen::parse_mix(gen::mix_text(every)), every);
  const gen::EventMix large = gen::parse_mix(
      "rise=1,rise-tight=2,rise-cycle=3,fall-matched=4,remove-matched=5");
  EXPECT_EQ(std::vector<int>({large.rise, large.rise_tight, large.rise_cycle, large.fall_matched,
                              large.remove_matched}),
            std::vector<int>({1, 2, 3, 4, 5}));
  EXPECT_EQ(gen::parse_mix("tail"), gen::tail_mix());
  EXPECT_EQ(gen::parse_mix(gen::mix_text(gen::tail_mix())), gen::tail_mix());
  EXPECT_TRUE(gen::mix_is_aimed(gen::tail_mix()));
  EXPECT_FALSE(gen::mix_is_aimed(gen::test_mix()));
  for (const char* bad : {"", "drift=5", "arrive=1", "add", "add=-1", "add=x", "add=0",
                          "add=1,add=2", "add=1,"}) {
    EXPECT_THROW(gen::parse_mix(bad), std::invalid_argument) << bad;
  }
}

// ---- the pool against the static engine --------------------------------------------------

// yoke's static engine (independent from-scratch solve), as the oracle of same_optimum.
oracle::Answer static_optimum(const Graph& graph, Mode mode) {
  const SolveResult fresh = solve(graph, mode);
  return {fresh.status == SolveStatus::optimal, fresh.weight, fresh.pairs};
}


std::vector<KeyPair> certified_pairs(const PoolExport& exported) {
  std::vector<KeyPair> pairs;
  const auto& mate = exported.certificate.mate;
  for (Vertex v = 0; v < mate.size(); ++v) {
    if (mate[v] != kNoVertex && v < mate[v]) {
      pairs.push_back(ordered(exported.keys[v], exported.keys[mate[v]]));
    }
  }
  std::sort(pairs.begin(), pairs.end());
  return pairs;
}

std::vector<KeyPair> listed_pairs(const Pool& pool) {
  std::vector<KeyPair> pairs;
  for (const MatchedPair& p : pool.matching()) pairs.push_back({p.a, p.b});
  return pairs;
}

// Everything checked after one commit: the first problem, or success.
testing::AssertionResult commit_is_certified_optimum(const Pool& pool, const CommitResult& result) {
  const PoolExport exported = pool.export_certified();
  const Graph& graph = exported.graph;
  const SolveResult r = oracle::as_solve_result(result, exported);
  // Common knowledge: result.weight and result.pairs are those of the certificate's matching,
  // and that matching is a matching of the pool's graph.
  if (auto sound = oracle::result_is_sound(graph, pool.mode(), r); !sound) return sound;
  // yoke::check_certificate (engine/include/yoke/certificate.h), the engine's independent referee.
  if (auto holds = oracle::certificate_holds(graph, r); !holds) return holds;
  // yoke's static engine (independent from-scratch solve): the same optimum weight; in
  // max-cardinality and perfect mode the same number of pairs, and the same feasibility.
  if (auto same = oracle::same_optimum(graph, pool.mode(), r, static_optimum); !same) return same;
  // The certificate is about the matching the pool lists.
  if (listed_pairs(pool) != certified_pairs(exported)) {
    return testing::AssertionFailure() << "pool.matching() is not the certificate's matching";
  }
  if (pool.weight() != result.weight || pool.pairs() != result.pairs) {
    return testing::AssertionFailure() << "pool.weight() " << pool.weight() << " pairs "
                                       << pool.pairs() << ", the commit said " << result.weight
                                       << " and " << result.pairs;
  }
  if (pool.vertex_count() != graph.vertex_count() || pool.edge_count() != graph.edge_count() ||
      exported.keys.size() != graph.vertex_count()) {
    return testing::AssertionFailure() << "pool counts " << pool.vertex_count() << " vertices "
                                       << pool.edge_count() << " edges, its export "
                                       << graph.vertex_count() << " and " << graph.edge_count();
  }
  return testing::AssertionSuccess();
}

// Writes the batches as an event script under /tmp/yoke-pool-failures/; returns the command
// that replays it.
std::string save_script(const std::string& label, Mode mode,
                        const std::vector<std::vector<Event>>& batches) {
  const std::filesystem::path dir = "/tmp/yoke-pool-failures";
  std::error_code ignored;
  std::filesystem::create_directories(dir, ignored);
  const std::filesystem::path path = dir / (label + ".txt");
  std::ofstream out(path);
  out << "# " << label << "\n";
  for (const auto& batch : batches) formats::write_event_script(out, batch);
  return std::string("yoke replay --verify --mode ") + mode_name(mode) + " " + path.string();
}

// Streams `spec` through a fresh pool and checks every commit; stops at the first problem.
// `owing`, when given, adds up the commits' RepairStats::blossoms_owing.
void expect_stream_certified(gen::StreamSpec spec, Mode mode, const std::string& label,
                             std::uint64_t* owing = nullptr) {
  Pool pool(mode);
  // Every fifth stream also sets weights at the pool's bound.
  if (spec.seed % 5 == 0) spec.extreme_weight = pool.limits().max_abs_weight;
  gen::EventStream stream(spec);
  if (gen::mix_is_aimed(spec.mix)) stream.aim_at(&pool);  // aimed at the pool under test
  std::vector<std::vector<Event>> batches;
  std::vector<Event> batch;
  while (stream.next_batch(batch)) {
    batches.push_back(batch);
    if (const auto error = pool.check(batch)) {
      FAIL() << label << ": generated batch " << batches.size() << " rejected at event "
             << error->index << ": " << error->message
             << "\n  replay: " << save_script(label, mode, batches);
    }
    const CommitResult result = pool.commit(batch);
    if (owing != nullptr) *owing += result.stats.blossoms_owing;
    if (result.commit != batches.size()) {
      FAIL() << label << ": commit numbered " << result.commit << ", expected " << batches.size();
    }
    if (auto ok = commit_is_certified_optimum(pool, result); !ok) {
      FAIL() << label << ", commit " << result.commit << " (" << batch.size()
             << " events): " << ok.message() << "\n  replay: " << save_script(label, mode, batches);
    }
  }
}

std::string script_label(StreamFamily family, Mode mode, std::uint64_t seed) {
  std::string name = std::string("pool_") + gen::stream_family_name(family) + "_" +
                     mode_name(mode) + "_seed" + std::to_string(seed);
  std::replace(name.begin(), name.end(), '-', '_');
  return name;
}

class PoolAgainstStatic : public testing::TestWithParam<std::tuple<StreamFamily, Mode>> {};

TEST_P(PoolAgainstStatic, EveryCommitIsACertifiedOptimum) {
  const auto [family, mode] = GetParam();
  // Perfect mode mostly reports that no perfect matching exists: fewer seeds.
  const int seeds = oracle::scaled(mode == Mode::perfect ? 40 : 150);
  for (int seed = 0; seed < seeds && !HasFailure(); ++seed) {
    const auto s = static_cast<std::uint64_t>(seed);
    expect_stream_certified(gen::test_stream_spec(family, s, 80, 60), mode,
                            script_label(family, mode, s));
  }
}

// The same events cut into batches of 1, 10 and 50: after every 50 events all three pools hold
// the same graph, so the same optimum. Common knowledge: the optimum depends on the graph only.
TEST_P(PoolAgainstStatic, BatchingDoesNotChangeTheOptimum) {
  const auto [family, mode] = GetParam();
  const int seeds = oracle::scaled(5);
  for (int seed = 100; seed < 100 + seeds; ++seed) {
    gen::StreamSpec spec = gen::test_stream_spec(family, static_cast<std::uint64_t>(seed), 40, 1);
    spec.events = 300;
    std::vector<std::map<std::size_t, std::pair<Weight, std::size_t>>> at_event;  // per cut
    for (const std::size_t size : {1, 10, 50}) {
      spec.batch_min = spec.batch_max = size;
      Pool pool(mode);
      gen::EventStream stream(spec);
      std::vector<Event> batch;
      std::size_t events = 0;
      at_event.emplace_back();
      for (bool first = true; stream.next_batch(batch); first = false) {
        ASSERT_FALSE(pool.check(batch).has_value());
        const CommitResult result = pool.commit(batch);
        if (!first) events += batch.size();
        if (events % 50 == 0) at_event.back()[events] = {result.weight, result.pairs};
      }
    }
    const bool pairs_matter = mode != Mode::max_weight;
    for (const auto& [events, answer] : at_event[0]) {
      for (std::size_t cut = 1; cut < at_event.size(); ++cut) {
        const auto& other = at_event[cut].at(events);
        EXPECT_EQ(other.first, answer.first) << "seed " << seed << " after " << events << " events";
        if (pairs_matter) {
          EXPECT_EQ(other.second, answer.second) << "seed " << seed << " after " << events;
        }
      }
    }
  }
}

INSTANTIATE_TEST_SUITE_P(Streams, PoolAgainstStatic, oracle::all_stream_cases(),
                         oracle::stream_case_name);

// A few long streams on graphs large enough for blossoms nested several deep.
class LongPoolStreams : public PoolAgainstStatic {};

TEST_P(LongPoolStreams, EveryCommitIsACertifiedOptimum) {
  const auto [family, mode] = GetParam();
  const int seeds = oracle::small_scale() ? 1 : 2;
  for (int seed = 500; seed < 500 + seeds && !HasFailure(); ++seed) {
    const auto s = static_cast<std::uint64_t>(seed);
    // 500..1500 vertices; complete graphs 40..120.
    gen::StreamSpec spec =
        gen::test_stream_spec(family, s, family == StreamFamily::complete ? 360 : 1500, 1);
    spec.vertices = std::max<std::size_t>(spec.vertices, family == StreamFamily::complete ? 40 : 500);
    spec.events = 3000;
    spec.batch_min = 1;
    spec.batch_max = 30;
    expect_stream_certified(spec, mode, script_label(family, mode, s));
  }
}

// The repair's expensive cases (gen::tail_mix): large rises on tight and blossom-cycle edges,
// matched edges that fall, matched departures, aimed at the pool under test as it stands, one
// action per commit or a few actions' events per commit, with plain or coarse (tied) weights.
class AimedPoolStreams : public PoolAgainstStatic {};

TEST_P(AimedPoolStreams, EveryCommitIsACertifiedOptimum) {
  const auto [family, mode] = GetParam();
  const int seeds = oracle::scaled(mode == Mode::perfect ? 10 : 40);
  for (int seed = 700; seed < 700 + seeds && !HasFailure(); ++seed) {
    const auto s = static_cast<std::uint64_t>(seed);
    gen::StreamSpec spec = gen::test_stream_spec(family, s, 120, 1);
    spec.mix = gen::tail_mix();
    spec.action_batches = s % 2 == 0;
    spec.events = spec.action_batches ? 80 : 400;
    spec.batch_min = 1;
    spec.batch_max = 12;
    if (s % 3 == 0) spec.weight_grain = std::max<Weight>(1, (spec.max_weight - spec.min_weight) / 10);
    expect_stream_certified(spec, mode, script_label(family, mode, s) + "_aimed");
  }
}

INSTANTIATE_TEST_SUITE_P(Streams, AimedPoolStreams, oracle::all_stream_cases(),
                         oracle::stream_case_name);

// Larger aimed streams: city and stress graphs of 600..1500 vertices, where blossoms nest, with
// plain and with coarse weights.
class LongAimedPoolStreams : public PoolAgainstStatic {};

TEST_P(LongAimedPoolStreams, EveryCommitIsACertifiedOptimum) {
  const auto [family, mode] = GetParam();
  const int seeds = oracle::small_scale() ? 1 : 2;
  for (int seed = 900; seed < 900 + seeds && !HasFailure(); ++seed) {
    const auto s = static_cast<std::uint64_t>(seed);
    gen::StreamSpec spec = gen::test_stream_spec(family, s, 1500, 1);
    spec.vertices = std::max<std::size_t>(spec.vertices, 600);
    spec.mix = gen::tail_mix();
    spec.action_batches = true;
    spec.events = 400;
    expect_stream_certified(spec, mode, script_label(family, mode, s) + "_aimed_long");
    // Coarse weights: tight regions where one search forms and unwinds nests of blossoms
    // hundreds deep at a single dual level (BlossomForest::dissolve_unpriced_nest).
    spec.weight_grain = 100;
    expect_stream_certified(spec, mode, script_label(family, mode, s) + "_aimed_long_tied");
  }
}

// Tied weights in batches of many aimed actions: one batch's events dissolve priced blossoms
// one after another, a later one often inside a blossom an earlier one left owing its dual
// (BlossomForest::pending_dual2), and the search and the next events read duals through those
// debts. Every commit is certified.
class ManyActionTiedPoolStreams : public PoolAgainstStatic {};

TEST_P(ManyActionTiedPoolStreams, EveryCommitIsACertifiedOptimum) {
  const auto [family, mode] = GetParam();
  const int seeds = oracle::small_scale() ? 1 : 2;
  for (int seed = 931; seed < 931 + seeds && !HasFailure(); ++seed) {
    const auto s = static_cast<std::uint64_t>(seed);
    gen::StreamSpec spec = gen::test_stream_spec(family, s, 1500, 1);
    spec.vertices = std::max<std::size_t>(spec.vertices, 800);
    spec.mix = gen::tail_mix();
    spec.weight_grain = 100;
    spec.action_batches = false;
    spec.batch_min = 2;
    spec.batch_max = 60;
    spec.events = 3000;
    std::uint64_t owing = 0;
    expect_stream_certified(spec, mode, script_label(family, mode, s) + "_aimed_tied_batches",
                            &owing);
    // In max-weight pools of this size no dissolved blossom has a child large enough to owe
    // (BlossomForest::kOwedFromSize); the spanning blossoms of max-cardinality pools do.
    if (mode != Mode::max_weight) {
      EXPECT_GT(owing, 0u) << "no dissolution left a blossom child owing its push";
    }
  }
}

// The same in a max-weight pool large enough for tied weights to nest blossoms of hundreds of
// vertices under priced ones (a city graph: the stress family's blossoms stay small):
// dissolutions leave children owing their push, later events and the search read duals through
// the debts, and every commit is certified.
TEST(LargeTiedPoolStreams, DissolutionsLeaveChildrenOwingAndEveryCommitIsCertified) {
  for (const StreamFamily family : {StreamFamily::city}) {
    gen::StreamSpec spec = gen::test_stream_spec(family, 977, 1500, 1);
    spec.vertices = 20000;
    spec.degree = 10;  // as the tail benchmark's city graphs: ties on a grain of 100 of ~5000
    spec.min_weight = 1;
    spec.max_weight = 5000;
    spec.mix = gen::tail_mix();
    spec.weight_grain = 100;
    spec.action_batches = false;
    spec.batch_min = 2;
    spec.batch_max = 60;
    spec.events = 2000;
    std::uint64_t owing = 0;
    expect_stream_certified(spec, Mode::max_weight,
                            script_label(family, Mode::max_weight, 977) + "_large_tied", &owing);
    EXPECT_GT(owing, 0u) << gen::stream_family_name(family) << ": no blossom child owed its push";
  }
}

INSTANTIATE_TEST_SUITE_P(Streams, ManyActionTiedPoolStreams,
                         testing::Combine(testing::Values(StreamFamily::city, StreamFamily::stress),
                                          testing::Values(Mode::max_weight, Mode::max_cardinality)),
                         oracle::stream_case_name);

INSTANTIATE_TEST_SUITE_P(Streams, LongAimedPoolStreams,
                         testing::Combine(testing::Values(StreamFamily::city, StreamFamily::stress),
                                          testing::Values(Mode::max_weight, Mode::max_cardinality)),
                         oracle::stream_case_name);

INSTANTIATE_TEST_SUITE_P(Streams, LongPoolStreams,
                         testing::Combine(testing::ValuesIn(oracle::kStreamFamilies),
                                          testing::Values(Mode::max_weight, Mode::max_cardinality)),
                         oracle::stream_case_name);

}  // namespace
}  // namespace yoke
