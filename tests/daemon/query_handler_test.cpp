// The query and control socket's requests, answered by the QueryHandler from a PoolService's
// state. Sources of the expected values: common knowledge for the small hand-made pools (the
// argument is given at each); the certificate checker's certificate (Pool::export_certified)
// for duals, slacks and the alternatives list; the protocol's comments for codes and fields.
#include <algorithm>
#include <map>
#include <set>
#include <stdexcept>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "daemon/pools/pool_names.h"
#include "daemon/service/query_handler.h"
#include "yoke/certificate.h"
#include "service_test_util.h"
#include "yoke/v1/query.pb.h"

namespace yoke::daemon {
namespace {

using testing::from_client;
using testing::in_pool;
using testing::ServiceHarness;
using testing::wire_add;
using testing::wire_remove;
using testing::wire_set;

DaemonConfig query_config() {
  DaemonConfig config = testing::test_config({});
  config.pools["cardinal"] = PoolSettings{Mode::max_cardinality, {}};
  config.pools["pairs"] = PoolSettings{Mode::perfect, {}};
  return config;
}

class QueryHandlerTest : public ::testing::Test {
 protected:
  QueryHandlerTest()
      : harness_(query_config()),
        handler_(harness_.service(), 4096,
                 [this](bool all_pools, const std::string& pool) {
                   snapshot_calls_.emplace_back(all_pools, pool);
                   if (snapshot_fails_) throw std::runtime_error("disk full (pretend)");
                   v1::SnapshotTaken taken;
                   v1::SnapshotTaken::Entry& entry = *taken.add_pools();
                   entry.set_pool(pool);
                   entry.set_seq(5);
                   taken.set_path("/data/snapshots/snapshot-00000000000000000009.yks");
                   return taken;
                 },
                 [] {
                   v1::Health health;
                   health.set_ok(true);
                   health.set_status("ok");
                   health.set_uptime_s(12);
                   health.set_pools(4);
                   health.set_daemon_version("0.1.0");
                   return health;
                 }) {
    // default: a triangle of 10s with a pendant edge {1,4} of weight 1, and vertex 5 alone.
    // Common knowledge: a triangle holds one pair, so the best is {2,3} + {1,4} = 11 (any pair
    // of the triangle with 1 in it leaves 4 and a triangle vertex unmatched: 10 < 11). This
    // optimum has no dual solution without a blossom: 1's dual is at most 1 (edge {1,4} is
    // tight), so 2 and 3 would need duals >= 9 each while their pair is tight at 10.
    offer({wire_set(1, 2, 10), wire_set(2, 3, 10), wire_set(3, 1, 10), wire_set(1, 4, 1),
           wire_add(5)},
          from_client("tram", 1));
    // hub: a star, leaves 101..108 with weights 1..8. Common knowledge: one pair, the heaviest.
    std::vector<v1::Event> star;
    for (VertexKey leaf = 101; leaf <= 108; ++leaf) {
      star.push_back(wire_set(100, leaf, static_cast<Weight>(leaf - 100)));
    }
    offer(star, in_pool("hub"));
    // cardinal: path 1-2-3-4 weighted 1, 10, 1. Common knowledge: max-cardinality takes the
    // two end edges (2 pairs, weight 2), where max-weight would take the middle one.
    offer({wire_set(1, 2, 1), wire_set(2, 3, 10), wire_set(3, 4, 1)}, in_pool("cardinal"));
    // pairs (perfect mode): a triangle has no perfect matching (odd), so the pool says so.
    offer({wire_set(1, 2, 3), wire_set(2, 3, 4), wire_set(1, 3, 5)}, in_pool("pairs"));
    harness_.close();
    offer({wire_remove(9)}, in_pool("hub"));  // refused
    offer({wire_set(1, 2, 10)}, from_client("tram", 1));  // a duplicate
    offer({wire_add(6)});
    harness_.close();
  }

  // Every pool queried holds a certified optimum.
  void TearDown() override {
    for (const std::string& name : harness_.service().registry().names()) {
      EXPECT_TRUE(testing::pool_certified(*harness_.service().registry().find(name))) << name;
    }
  }

  void offer(const std::vector<v1::Event>& events, const testing::BatchHeader& header = {}) {
    harness_.offer(events, header);
  }

  v1::QueryReply ask(v1::QueryRequest request, std::uint32_t version = 1) {
    request.set_version(version);
    if (request.request_id() == 0) request.set_request_id(next_request_id_++);
    const std::string bytes = handler_.handle(request.SerializeAsString());
    v1::QueryReply reply;
    EXPECT_TRUE(reply.ParseFromString(bytes));
    EXPECT_EQ(reply.version(), 1u);
    EXPECT_EQ(reply.request_id(), request.request_id());
    return reply;
  }
  v1::QueryReply ask_pool(const std::string& pool, v1::QueryRequest request) {
    request.set_pool(pool);
    return ask(std::move(request));
  }

  static v1::QueryRequest summary() {
    v1::QueryRequest request;
    request.mutable_summary();
    return request;
  }
  static v1::QueryRequest mate(VertexKey vertex) {
    v1::QueryRequest request;
    request.mutable_mate()->set_vertex(vertex);
    return request;
  }
  static v1::QueryRequest matching() {
    v1::QueryRequest request;
    request.mutable_matching();
    return request;
  }
  static v1::QueryRequest explain(VertexKey vertex, std::uint32_t limit = 0) {
    v1::QueryRequest request;
    request.mutable_explain()->set_vertex(vertex);
    request.mutable_explain()->set_max_alternatives(limit);
    return request;
  }
  static v1::QueryRequest stats() {
    v1::QueryRequest request;
    request.mutable_stats();
    return request;
  }
  static v1::QueryRequest snapshot(bool all_pools) {
    v1::QueryRequest request;
    request.mutable_snapshot()->set_all_pools(all_pools);
    return request;
  }

  static void expect_error(const v1::QueryReply& reply, v1::Error::Code code) {
    ASSERT_TRUE(reply.has_error()) << reply.ShortDebugString();
    EXPECT_EQ(reply.error().code(), code) << reply.ShortDebugString();
    EXPECT_FALSE(reply.error().message().empty());
    EXPECT_FALSE(reply.error().has_event_index());
  }

  // Checks an explanation against the pool's certificate: the vertex's dual, the pair, and the
  // alternatives, which must be the `limit` unmatched edges of least slack (ties by key), each
  // slack computed here from the certificate's duals and blossoms.
  void expect_consistent(const std::string& pool_name, VertexKey vertex,
                         const v1::Explanation& explanation, std::size_t limit) {
    const Pool& pool = *harness_.service().registry().find(pool_name);
    const PoolExport exported = pool.export_certified();
    const CheckResult check = check_certificate(exported.graph, exported.certificate);
    ASSERT_TRUE(check.ok) << check.failure;
    const Certificate& certificate = exported.certificate;
    std::map<VertexKey, Vertex> dense;
    for (std::size_t i = 0; i < exported.keys.size(); ++i) {
      dense[exported.keys[i]] = static_cast<Vertex>(i);
    }
    const Vertex v = dense.at(vertex);
    const std::size_t n = exported.keys.size();
    // Each blossom's vertices, children expanded with a stack.
    std::vector<std::set<Vertex>> members(certificate.blossoms.size());
    for (std::size_t b = 0; b < certificate.blossoms.size(); ++b) {
      std::vector<NodeId> stack(certificate.blossoms[b].children.begin(),
                                certificate.blossoms[b].children.end());
      while (!stack.empty()) {
        const NodeId node = stack.back();
        stack.pop_back();
        if (node < n) {
          members[b].insert(static_cast<Vertex>(node));
        } else {
          const auto& children = certificate.blossoms[node - n].children;
          stack.insert(stack.end(), children.begin(), children.end());
        }
      }
    }
    EXPECT_EQ(explanation.vertex(), vertex);
    EXPECT_EQ(explanation.dual_x2(), certificate.vertex_dual2[v]);
    EXPECT_EQ(explanation.weight_offset(), certificate.weight_offset);
    const Vertex mate_of_v = certificate.mate[v];
    EXPECT_EQ(explanation.has_mate(), mate_of_v != kNoVertex);
    if (mate_of_v != kNoVertex) {
      EXPECT_EQ(explanation.mate(), exported.keys[mate_of_v]);
    }

    std::vector<std::tuple<Weight, VertexKey, Weight, std::optional<VertexKey>>> expected;
    Weight pair_weight = 0;
    for (const Incidence& incidence : exported.graph.incident(v)) {
      if (incidence.other == mate_of_v) {
        pair_weight = incidence.w;
        continue;
      }
      Weight z2 = 0;
      for (std::size_t b = 0; b < members.size(); ++b) {
        if (members[b].contains(v) && members[b].contains(incidence.other)) {
          z2 += certificate.blossoms[b].dual2;
        }
      }
      const Weight slack2 = certificate.vertex_dual2[v] +
                            certificate.vertex_dual2[incidence.other] + z2 -
                            2 * (incidence.w + certificate.weight_offset);
      const Vertex other_mate = certificate.mate[incidence.other];
      expected.emplace_back(slack2, exported.keys[incidence.other], incidence.w,
                            other_mate == kNoVertex
                                ? std::nullopt
                                : std::optional<VertexKey>(exported.keys[other_mate]));
    }
    EXPECT_EQ(explanation.has_pair_weight(), mate_of_v != kNoVertex);
    EXPECT_EQ(explanation.pair_weight(), pair_weight);
    std::sort(expected.begin(), expected.end());
    expected.resize(std::min(expected.size(), limit));
    ASSERT_EQ(static_cast<std::size_t>(explanation.alternatives_size()), expected.size());
    for (std::size_t i = 0; i < expected.size(); ++i) {
      SCOPED_TRACE(i);
      const v1::Alternative& alternative = explanation.alternatives(static_cast<int>(i));
      const auto& [slack2, other, weight, other_mate] = expected[i];
      EXPECT_GE(alternative.slack_x2(), 0);
      EXPECT_EQ(alternative.slack_x2(), slack2);
      EXPECT_EQ(alternative.other(), other);
      EXPECT_EQ(alternative.weight(), weight);
      EXPECT_EQ(alternative.has_other_mate(), other_mate.has_value());
      if (other_mate) {
        EXPECT_EQ(alternative.other_mate(), *other_mate);
      }
    }
  }

  ServiceHarness harness_;
  std::vector<std::pair<bool, std::string>> snapshot_calls_;
  bool snapshot_fails_ = false;
  QueryHandler handler_;
  std::uint64_t next_request_id_ = 1000;
};

TEST_F(QueryHandlerTest, Summary) {
  const v1::QueryReply reply = ask(summary());  // no pool named: "default"
  EXPECT_EQ(reply.pool(), "default");
  ASSERT_TRUE(reply.has_summary()) << reply.ShortDebugString();
  EXPECT_EQ(reply.summary().seq(), 2u);
  EXPECT_EQ(reply.summary().weight(), 11);
  EXPECT_EQ(reply.summary().pairs(), 2u);
  EXPECT_EQ(reply.summary().vertices(), 6u);
  EXPECT_EQ(reply.summary().edges(), 4u);
  EXPECT_EQ(reply.summary().mode(), v1::MODE_MAX_WEIGHT);
  EXPECT_FALSE(reply.summary().no_perfect_matching());
  EXPECT_TRUE(testing::pool_certified(*harness_.service().registry().find("default")));

  const v1::QueryReply cardinal = ask_pool("cardinal", summary());
  EXPECT_EQ(cardinal.pool(), "cardinal");
  EXPECT_EQ(cardinal.summary().mode(), v1::MODE_MAX_CARDINALITY);
  EXPECT_EQ(cardinal.summary().weight(), 2);
  EXPECT_EQ(cardinal.summary().pairs(), 2u);
  EXPECT_TRUE(testing::pool_certified(*harness_.service().registry().find("cardinal")));

  const v1::QueryReply pairs = ask_pool("pairs", summary());
  EXPECT_EQ(pairs.summary().mode(), v1::MODE_PERFECT);
  EXPECT_TRUE(pairs.summary().no_perfect_matching());
  // Common knowledge: the best single pair of the triangle is {1,3} (5).
  EXPECT_EQ(pairs.summary().weight(), 5);
  EXPECT_EQ(pairs.summary().pairs(), 1u);
  EXPECT_TRUE(testing::pool_certified(*harness_.service().registry().find("pairs")));
}

TEST_F(QueryHandlerTest, MateOfMatchedExposedAndUnknownVertices) {
  v1::QueryReply reply = ask(mate(4));
  ASSERT_TRUE(reply.has_mate()) << reply.ShortDebugString();
  EXPECT_EQ(reply.mate().seq(), 2u);
  EXPECT_EQ(reply.mate().vertex(), 4u);
  ASSERT_TRUE(reply.mate().has_mate());
  EXPECT_EQ(reply.mate().mate(), 1u);
  EXPECT_EQ(reply.mate().pair_weight(), 1);
  reply = ask(mate(3));
  EXPECT_EQ(reply.mate().mate(), 2u);
  EXPECT_EQ(reply.mate().pair_weight(), 10);

  reply = ask(mate(5));  // alive, no edge: exposed
  ASSERT_TRUE(reply.has_mate()) << reply.ShortDebugString();
  EXPECT_FALSE(reply.mate().has_mate());
  EXPECT_FALSE(reply.mate().has_pair_weight());

  reply = ask(mate(77));
  expect_error(reply, v1::Error::UNKNOWN_VERTEX);
  EXPECT_EQ(reply.pool(), "default");
  expect_error(ask_pool("hub", mate(1)), v1::Error::UNKNOWN_VERTEX);
}

TEST_F(QueryHandlerTest, MatchingIsSortedWithWeights) {
  const v1::QueryReply reply = ask(matching());
  ASSERT_TRUE(reply.has_matching()) << reply.ShortDebugString();
  EXPECT_EQ(reply.matching().seq(), 2u);
  EXPECT_EQ(reply.matching().weight(), 11);
  EXPECT_EQ(reply.matching().mode(), v1::MODE_MAX_WEIGHT);
  ASSERT_EQ(reply.matching().matching_size(), 2);
  EXPECT_EQ(reply.matching().matching(0).ShortDebugString(), "a: 1 b: 4 weight: 1");
  EXPECT_EQ(reply.matching().matching(1).ShortDebugString(), "a: 2 b: 3 weight: 10");

  const v1::QueryReply hub = ask_pool("hub", matching());
  ASSERT_EQ(hub.matching().matching_size(), 1);
  EXPECT_EQ(hub.matching().matching(0).ShortDebugString(), "a: 100 b: 108 weight: 8");
  EXPECT_EQ(hub.matching().seq(), 1u);
  EXPECT_TRUE(ask_pool("pairs", matching()).matching().no_perfect_matching());
}

TEST_F(QueryHandlerTest, ExplainListsAlternativesConsistentWithTheCertificate) {
  // Vertex 1 of the triangle: paired with 4; its triangle edges are its alternatives, each to
  // a vertex paired with the third one.
  v1::QueryReply reply = ask(explain(1));
  ASSERT_TRUE(reply.has_explain()) << reply.ShortDebugString();
  EXPECT_EQ(reply.explain().seq(), 2u);
  EXPECT_EQ(reply.explain().mate(), 4u);
  EXPECT_EQ(reply.explain().pair_weight(), 1);
  ASSERT_EQ(reply.explain().alternatives_size(), 2);
  for (const v1::Alternative& alternative : reply.explain().alternatives()) {
    EXPECT_EQ(alternative.other() + alternative.other_mate(), 5u);  // {2,3} either way round
    EXPECT_EQ(alternative.weight(), 10);
  }
  expect_consistent("default", 1, reply.explain(), QueryHandler::kDefaultAlternatives);
  for (const VertexKey vertex : {2u, 3u, 4u, 5u, 6u}) {
    SCOPED_TRACE(vertex);
    reply = ask(explain(vertex));
    ASSERT_TRUE(reply.has_explain()) << reply.ShortDebugString();
    expect_consistent("default", vertex, reply.explain(), QueryHandler::kDefaultAlternatives);
  }
  // Vertex 5 is exposed with no edges: dual 0 in max-weight mode, nothing to list.
  reply = ask(explain(5));
  EXPECT_FALSE(reply.explain().has_mate());
  EXPECT_EQ(reply.explain().dual_x2(), 0);
  EXPECT_FALSE(reply.explain().has_pair_weight());
  EXPECT_EQ(reply.explain().alternatives_size(), 0);

  // The hub: seven unmatched edges; 5 by default, as many as asked, capped by what exists.
  reply = ask_pool("hub", explain(100));
  EXPECT_EQ(reply.explain().mate(), 108u);
  EXPECT_EQ(reply.explain().pair_weight(), 8);
  EXPECT_EQ(reply.explain().alternatives_size(), 5);
  expect_consistent("hub", 100, reply.explain(), QueryHandler::kDefaultAlternatives);
  // Common knowledge: the heavier a leaf's edge, the less it lacks: 107 first.
  EXPECT_EQ(reply.explain().alternatives(0).other(), 107u);
  reply = ask_pool("hub", explain(100, 2));
  EXPECT_EQ(reply.explain().alternatives_size(), 2);
  expect_consistent("hub", 100, reply.explain(), 2);
  reply = ask_pool("hub", explain(100, 4'000'000'000u));
  EXPECT_EQ(reply.explain().alternatives_size(), 7);
  expect_consistent("hub", 100, reply.explain(), 7);
  reply = ask_pool("hub", explain(104));
  EXPECT_FALSE(reply.explain().has_mate());
  expect_consistent("hub", 104, reply.explain(), QueryHandler::kDefaultAlternatives);

  // Max-cardinality: duals price the offset weights.
  for (const VertexKey vertex : {1u, 2u, 3u, 4u}) {
    SCOPED_TRACE(vertex);
    reply = ask_pool("cardinal", explain(vertex));
    ASSERT_TRUE(reply.has_explain());
    EXPECT_GT(reply.explain().weight_offset(), 0);
    expect_consistent("cardinal", vertex, reply.explain(), QueryHandler::kDefaultAlternatives);
  }
  reply = ask_pool("pairs", explain(2));
  expect_consistent("pairs", 2, reply.explain(), QueryHandler::kDefaultAlternatives);

  expect_error(ask(explain(77)), v1::Error::UNKNOWN_VERTEX);
}

// query.proto, Explanation.held: a held pair is fixed and outside the optimisation, so its
// vertices have no price to explain, and the explanation says so rather than show a dual of 0
// that no certificate of the pair's edge would have.
TEST_F(QueryHandlerTest, ExplainSaysAVertexIsHeld) {
  // berth: 1-2 (5), 1-3 (9), 2-4 (9), 3-4 (1); {1,2} held. The rest, 3 and 4 with their one
  // edge (1-3 and 2-4 go aside with the held ends), pair as 3-4: common knowledge.
  offer({wire_set(1, 2, 5), wire_set(1, 3, 9), wire_set(2, 4, 9), wire_set(3, 4, 1)},
        in_pool("berth"));
  harness_.close();
  v1::QueryReply reply = ask_pool("berth", explain(1));
  EXPECT_FALSE(reply.explain().held());
  offer({testing::wire_hold(1, 2)}, in_pool("berth"));
  // cardinal (path 1-2-3-4, max-cardinality): {2,3} held leaves 1 and 4 with no edge.
  offer({testing::wire_hold(2, 3)}, in_pool("cardinal"));
  harness_.close();

  reply = ask_pool("berth", explain(1));
  ASSERT_TRUE(reply.has_explain()) << reply.ShortDebugString();
  EXPECT_TRUE(reply.explain().held());
  EXPECT_EQ(reply.explain().mate(), 2u);
  EXPECT_EQ(reply.explain().pair_weight(), 5);
  EXPECT_EQ(reply.explain().dual_x2(), 0);
  EXPECT_EQ(reply.explain().alternatives_size(), 0);
  // 3's edge to the held 1 is no alternative; its pair with 4 is priced as ever.
  reply = ask_pool("berth", explain(3));
  EXPECT_FALSE(reply.explain().held());
  EXPECT_EQ(reply.explain().mate(), 4u);
  EXPECT_EQ(reply.explain().alternatives_size(), 0);
  expect_consistent("berth", 3, reply.explain(), QueryHandler::kDefaultAlternatives);

  // Summary counts the held vertices and every edge, those set aside included.
  reply = ask_pool("berth", summary());
  EXPECT_EQ(reply.summary().vertices(), 4u);
  EXPECT_EQ(reply.summary().edges(), 4u);
  EXPECT_EQ(reply.summary().pairs(), 2u);
  EXPECT_EQ(reply.summary().weight(), 6);

  reply = ask_pool("cardinal", explain(3));
  EXPECT_TRUE(reply.explain().held());
  EXPECT_EQ(reply.explain().mate(), 2u);
  EXPECT_EQ(reply.explain().pair_weight(), 10);
  reply = ask_pool("cardinal", explain(1));
  EXPECT_FALSE(reply.explain().held());
  EXPECT_FALSE(reply.explain().has_mate());
  EXPECT_EQ(reply.explain().alternatives_size(), 0);
}

TEST_F(QueryHandlerTest, StatsCounters) {
  v1::QueryReply reply = ask(stats());
  ASSERT_TRUE(reply.has_stats()) << reply.ShortDebugString();
  const v1::Stats& counters = reply.stats();
  EXPECT_EQ(counters.seq(), 2u);
  EXPECT_EQ(counters.weight(), 11);
  EXPECT_EQ(counters.pairs(), 2u);
  EXPECT_EQ(counters.vertices(), 6u);
  EXPECT_EQ(counters.edges(), 4u);
  EXPECT_EQ(counters.config().mode(), v1::MODE_MAX_WEIGHT);
  EXPECT_EQ(counters.config().limits().max_vertices(), PoolLimits{}.max_vertices);
  EXPECT_EQ(counters.batches_accepted(), 2u);
  EXPECT_EQ(counters.batches_rejected(), 0u);
  EXPECT_EQ(counters.batches_duplicate(), 1u);
  EXPECT_EQ(counters.events_applied(), 6u);
  EXPECT_EQ(counters.commits(), 2u);
  EXPECT_EQ(counters.last_repair().events(), 1u);
  EXPECT_FALSE(counters.last_repair().initial_solve());
  EXPECT_EQ(counters.last_snapshot_seq(), 0u);

  reply = ask_pool("hub", stats());
  EXPECT_EQ(reply.stats().batches_accepted(), 1u);
  EXPECT_EQ(reply.stats().batches_rejected(), 1u);
  EXPECT_EQ(reply.stats().events_applied(), 8u);
  EXPECT_EQ(reply.stats().commits(), 1u);
  EXPECT_TRUE(reply.stats().last_repair().initial_solve());

  harness_.service().progress_of("hub").last_snapshot_seq = 1;  // as the snapshot writer does
  EXPECT_EQ(ask_pool("hub", stats()).stats().last_snapshot_seq(), 1u);
}

TEST_F(QueryHandlerTest, SnapshotGoesThroughTheCallback) {
  v1::QueryReply reply = ask_pool("hub", snapshot(false));
  ASSERT_TRUE(reply.has_snapshot()) << reply.ShortDebugString();
  EXPECT_EQ(reply.pool(), "hub");
  ASSERT_EQ(reply.snapshot().pools_size(), 1);
  EXPECT_EQ(reply.snapshot().pools(0).pool(), "hub");
  EXPECT_EQ(reply.snapshot().path(), "/data/snapshots/snapshot-00000000000000000009.yks");
  reply = ask(snapshot(true));
  ASSERT_TRUE(reply.has_snapshot());
  ASSERT_EQ(snapshot_calls_.size(), 2u);
  EXPECT_EQ(snapshot_calls_[0], std::make_pair(false, std::string("hub")));
  EXPECT_EQ(snapshot_calls_[1], std::make_pair(true, std::string("default")));

  // A pool that does not exist, named alone: refused without calling back.
  expect_error(ask_pool("nowhere", snapshot(false)), v1::Error::UNKNOWN_POOL);
  EXPECT_EQ(snapshot_calls_.size(), 2u);
  // A failing write is an INTERNAL error that says why.
  snapshot_fails_ = true;
  reply = ask(snapshot(true));
  expect_error(reply, v1::Error::INTERNAL);
  EXPECT_NE(reply.error().message().find("disk full"), std::string::npos);
}

TEST_F(QueryHandlerTest, HealthIgnoresThePool) {
  v1::QueryRequest request;
  request.mutable_health();
  const v1::QueryReply reply = ask_pool("nowhere", request);
  ASSERT_TRUE(reply.has_health()) << reply.ShortDebugString();
  EXPECT_TRUE(reply.health().ok());
  EXPECT_EQ(reply.health().status(), "ok");
  EXPECT_EQ(reply.health().pools(), 4u);
  EXPECT_EQ(reply.health().daemon_version(), "0.1.0");
}

TEST_F(QueryHandlerTest, UnknownPool) {
  for (const auto& request :
       {summary(), mate(1), matching(), explain(1), stats(), snapshot(false)}) {
    const v1::QueryReply reply = ask_pool("nowhere", request);
    expect_error(reply, v1::Error::UNKNOWN_POOL);
    EXPECT_EQ(reply.error().message(), "there is no pool nowhere");
    EXPECT_EQ(reply.pool(), "nowhere");
  }
}

// A name no pool may have is refused saying what is wrong with it, in the words a batch's
// refusal uses (docs/protocol.md, "Pool names"), not as a pool that is not there.
TEST_F(QueryHandlerTest, InvalidPoolNameSaysWhatIsWrong) {
  const std::string too_long(kMaxPoolNameBytes + 1, 'a');
  for (const auto& request :
       {summary(), mate(1), matching(), explain(1), stats(), snapshot(false)}) {
    v1::QueryReply reply = ask_pool(too_long, request);
    expect_error(reply, v1::Error::UNKNOWN_POOL);
    EXPECT_EQ(reply.error().message(), *pool_name_problem(too_long));
    EXPECT_EQ(reply.error().message(), "a pool name has at most 128 bytes, not 129");
    reply = ask_pool("a/b", request);
    expect_error(reply, v1::Error::UNKNOWN_POOL);
    EXPECT_EQ(reply.error().message(),
              "a pool name may hold only ASCII letters, digits and . _ - : (byte 47 is not "
              "allowed)");
  }
  EXPECT_TRUE(snapshot_calls_.empty());
}

TEST_F(QueryHandlerTest, RequestIdIsEchoed) {
  v1::QueryRequest request = summary();
  request.set_request_id(~std::uint64_t{0});
  EXPECT_EQ(ask(request).request_id(), ~std::uint64_t{0});
  request.set_pool("nowhere");
  request.set_request_id(31);
  EXPECT_EQ(ask(request).request_id(), 31u);
}

TEST_F(QueryHandlerTest, BadRequests) {
  // Garbage: nothing could be read, so request_id is 0.
  v1::QueryReply reply;
  ASSERT_TRUE(reply.ParseFromString(handler_.handle(std::string("\x10\x05\x1a\x09short", 9))));
  EXPECT_EQ(reply.version(), 1u);
  EXPECT_EQ(reply.request_id(), 0u);
  expect_error(reply, v1::Error::MALFORMED_MESSAGE);

  // Versions 0 and 2: the request_id is still echoed.
  for (const std::uint32_t version : {0u, 2u}) {
    v1::QueryRequest request = summary();
    request.set_request_id(77);
    request.set_version(version);
    ASSERT_TRUE(reply.ParseFromString(handler_.handle(request.SerializeAsString())));
    expect_error(reply, v1::Error::UNSUPPORTED_VERSION);
    EXPECT_EQ(reply.request_id(), 77u);
  }

  // No kind.
  expect_error(ask(v1::QueryRequest{}), v1::Error::UNKNOWN_MESSAGE_KIND);

  // Oversized: refused before parsing.
  v1::QueryRequest big = summary();
  big.set_version(1);
  big.set_request_id(8);
  big.set_pool(std::string(5000, 'p'));
  ASSERT_TRUE(reply.ParseFromString(handler_.handle(big.SerializeAsString())));
  expect_error(reply, v1::Error::OVERSIZED_MESSAGE);
  EXPECT_EQ(reply.request_id(), 0u);
}

}  // namespace
}  // namespace yoke::daemon
