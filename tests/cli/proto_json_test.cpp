// The JSON forms of the daemon's messages (tools/cli/proto_json.h): every kind, key order,
// extreme integers, absent optional fields, unknown enum values and non-UTF-8 pool names.
#include <gtest/gtest.h>

#include <cstdint>
#include <limits>
#include <string>

#include "tools/cli/proto_json.h"

namespace yoke::cli {
namespace {

namespace v1 = yoke::v1;

constexpr std::uint64_t kMaxKey = std::numeric_limits<std::uint64_t>::max();
constexpr std::int64_t kMinWeight = std::numeric_limits<std::int64_t>::min();

void set_pair(v1::Pair& pair, std::uint64_t a, std::uint64_t b, std::int64_t weight) {
  pair.set_a(a);
  pair.set_b(b);
  pair.set_weight(weight);
}

TEST(ProtoJson, Diff) {
  v1::Diff diff;
  diff.set_pool("harbour");
  diff.set_seq(12);
  diff.set_prev_seq(10);
  diff.set_weight(kMinWeight);
  diff.set_pairs(2);
  diff.set_no_perfect_matching(true);
  set_pair(*diff.add_removed(), 1, kMaxKey, -5);
  set_pair(*diff.add_added(), 1, 4, 7);
  set_pair(*diff.add_added(), 2, 3, 0);
  diff.mutable_timings()->set_repair_us(31);
  diff.mutable_timings()->set_commit_to_publish_us(250);
  diff.mutable_timings()->set_publish_unix_us(1700000000123456);
  v1::RepairStats& stats = *diff.mutable_stats();
  stats.set_events(3);
  stats.set_roots(2);
  stats.set_searches(2);
  stats.set_augmentations(1);
  stats.set_blossoms_dissolved(4);
  stats.set_vertices_touched(19);
  stats.set_initial_solve(true);
  EXPECT_EQ(json_line(diff_json(diff)),
            "{\"pool\":\"harbour\",\"seq\":12,\"prev_seq\":10,\"weight\":-9223372036854775808,"
            "\"pairs\":2,\"no_perfect_matching\":true,\"removed\":[[1,18446744073709551615,-5]],"
            "\"added\":[[1,4,7],[2,3,0]],\"repair_us\":31,\"commit_to_publish_us\":250,"
            "\"publish_unix_us\":1700000000123456,\"stats\":{\"events\":3,\"roots\":2,"
            "\"searches\":2,\"augmentations\":1,\"blossoms_dissolved\":4,"
            "\"vertices_touched\":19,\"initial_solve\":true}}");
}

TEST(ProtoJson, Summary) {
  v1::Summary summary;
  summary.set_seq(7);
  summary.set_weight(-2);
  summary.set_pairs(1);
  summary.set_vertices(3);
  summary.set_edges(2);
  summary.set_mode(v1::MODE_PERFECT);
  summary.set_no_perfect_matching(true);
  EXPECT_EQ(json_line(summary_json("default", summary)),
            "{\"pool\":\"default\",\"seq\":7,\"weight\":-2,\"pairs\":1,\"vertices\":3,"
            "\"edges\":2,\"mode\":\"perfect\",\"no_perfect_matching\":true}");
}

TEST(ProtoJson, MateMatchedAndExposed) {
  v1::Mate mate;
  mate.set_seq(4);
  mate.set_vertex(kMaxKey);
  EXPECT_EQ(json_line(mate_json("p", mate)),
            "{\"pool\":\"p\",\"seq\":4,\"vertex\":18446744073709551615,\"mate\":null,"
            "\"pair_weight\":null}");
  mate.set_mate(0);  // present even though 0: key 0 is a vertex like any other
  mate.set_pair_weight(0);
  EXPECT_EQ(json_line(mate_json("p", mate)),
            "{\"pool\":\"p\",\"seq\":4,\"vertex\":18446744073709551615,\"mate\":0,"
            "\"pair_weight\":0}");
  mate.set_pair_weight(-9);
  EXPECT_EQ(json_line(mate_json("p", mate)),
            "{\"pool\":\"p\",\"seq\":4,\"vertex\":18446744073709551615,\"mate\":0,"
            "\"pair_weight\":-9}");
}

TEST(ProtoJson, Matching) {
  v1::Matching matching;
  matching.set_seq(9);
  matching.set_weight(12);
  matching.set_mode(v1::MODE_MAX_WEIGHT);
  set_pair(*matching.add_matching(), 1, 2, 5);
  set_pair(*matching.add_matching(), 3, 4, 7);
  EXPECT_EQ(json_line(matching_json("quillory", matching)),
            "{\"pool\":\"quillory\",\"seq\":9,\"weight\":12,\"pairs\":2,"
            "\"matching\":[[1,2,5],[3,4,7]],"
            "\"mode\":\"max-weight\",\"no_perfect_matching\":false}");
}

TEST(ProtoJson, Explanation) {
  v1::Explanation explanation;
  explanation.set_seq(3);
  explanation.set_vertex(5);
  explanation.set_mate(6);
  explanation.set_pair_weight(10);
  explanation.set_dual_x2(-4);
  explanation.set_weight_offset(21);
  v1::Alternative& near = *explanation.add_alternatives();
  near.set_other(8);
  near.set_weight(9);
  near.set_slack_x2(0);
  near.set_other_mate(2);
  v1::Alternative& far = *explanation.add_alternatives();
  far.set_other(1);
  far.set_weight(-1);
  far.set_slack_x2(40);
  EXPECT_EQ(json_line(explanation_json("x", explanation)),
            "{\"pool\":\"x\",\"seq\":3,\"vertex\":5,\"present\":true,\"mate\":6,"
            "\"pair_weight\":10,\"pair_bonus\":0,\"weight_offset\":21,\"dual_x2\":-4,"
            "\"price\":-12.5,\"alternatives\":[{\"other\":8,\"weight\":9,\"slack\":0,"
            "\"slack_x2\":0,\"other_mate\":2},{\"other\":1,\"weight\":-1,\"slack\":20,"
            "\"slack_x2\":40,\"other_mate\":null}]}");
  // Unpaired: no mate and no pair weight on the wire, null in the JSON.
  v1::Explanation alone;
  alone.set_seq(3);
  alone.set_vertex(7);
  EXPECT_EQ(json_line(explanation_json("x", alone)),
            "{\"pool\":\"x\",\"seq\":3,\"vertex\":7,\"present\":true,\"mate\":null,"
            "\"pair_weight\":null,\"pair_bonus\":0,\"weight_offset\":0,\"dual_x2\":0,"
            "\"price\":0,\"alternatives\":[]}");
}

TEST(ProtoJson, Stats) {
  v1::Stats stats;
  stats.set_seq(100);
  stats.set_weight(55);
  stats.set_pairs(4);
  stats.set_vertices(9);
  stats.set_edges(14);
  stats.mutable_config()->set_mode(v1::MODE_MAX_CARDINALITY);
  stats.mutable_config()->mutable_limits()->set_max_vertices(1000);
  stats.mutable_config()->mutable_limits()->set_max_edges(5000);
  stats.set_batches_accepted(98);
  stats.set_batches_rejected(2);
  stats.set_batches_duplicate(1);
  stats.set_events_applied(400);
  stats.set_commits(90);
  stats.mutable_last_repair()->set_events(5);
  stats.mutable_last_timings()->set_repair_us(8);
  stats.set_last_snapshot_seq(64);
  EXPECT_EQ(json_line(stats_json("s", stats)),
            "{\"pool\":\"s\",\"seq\":100,\"weight\":55,\"pairs\":4,\"vertices\":9,\"edges\":14,"
            "\"mode\":\"max-cardinality\",\"limits\":{\"max_vertices\":1000,"
            "\"max_edges\":5000,\"max_abs_weight\":0},\"churn_bonus\":0,\"batches_accepted\":98,"
            "\"batches_rejected\":2,\"batches_duplicate\":1,\"events_applied\":400,"
            "\"commits\":90,\"last_repair\":{\"events\":5,\"roots\":0,\"searches\":0,"
            "\"augmentations\":0,\"blossoms_dissolved\":0,\"vertices_touched\":0,"
            "\"initial_solve\":false},\"last_timings\":{\"repair_us\":8,"
            "\"commit_to_publish_us\":0,\"publish_unix_us\":0},\"last_snapshot_seq\":64}");
}

TEST(ProtoJson, SnapshotTaken) {
  v1::SnapshotTaken snapshot;
  v1::SnapshotTaken::Entry& a = *snapshot.add_pools();
  a.set_pool("a");
  a.set_seq(3);
  v1::SnapshotTaken::Entry& b = *snapshot.add_pools();
  b.set_pool("b");
  b.set_seq(0);
  snapshot.set_path("/data/snapshots/000012");
  EXPECT_EQ(json_line(snapshot_taken_json(snapshot)),
            "{\"pools\":[{\"pool\":\"a\",\"seq\":3},{\"pool\":\"b\",\"seq\":0}],"
            "\"path\":\"/data/snapshots/000012\"}");
}

TEST(ProtoJson, Health) {
  v1::Health health;
  health.set_ok(false);
  health.set_status("journal \"disk\" full");
  health.set_uptime_s(3600);
  health.set_pools(2);
  health.set_daemon_version("0.1.0");
  EXPECT_EQ(json_line(health_json(health)),
            "{\"ok\":false,\"status\":\"journal \\\"disk\\\" full\",\"uptime_s\":3600,"
            "\"pools\":2,\"daemon_version\":\"0.1.0\"}");
}

TEST(ProtoJson, ErrorWithAndWithoutEventIndex) {
  v1::Error error;
  error.set_code(v1::Error::WEIGHT_OUT_OF_RANGE);
  error.set_message("weight 9 exceeds the pool's bound 8");
  EXPECT_EQ(json_line(error_json(error)),
            "{\"code\":\"WEIGHT_OUT_OF_RANGE\",\"message\":\"weight 9 exceeds the pool's bound "
            "8\"}");
  error.set_event_index(0);
  EXPECT_EQ(json_line(error_json(error)),
            "{\"code\":\"WEIGHT_OUT_OF_RANGE\",\"message\":\"weight 9 exceeds the pool's bound "
            "8\",\"event_index\":0}");
  v1::Error skipped;
  skipped.set_code(v1::Error::BATCH_SKIPPED);
  skipped.set_message("never applied");
  skipped.set_last_batch(7);
  EXPECT_EQ(json_line(error_json(skipped)),
            "{\"code\":\"BATCH_SKIPPED\",\"message\":\"never applied\",\"last_batch\":7}");
}

TEST(ProtoJson, UnknownEnumValuesAndBadUtf8StillPrint) {
  EXPECT_EQ(error_code_name(v1::Error::OUT_OF_ORDER), "OUT_OF_ORDER");
  EXPECT_EQ(error_code_name(99), "CODE_99");
  EXPECT_EQ(mode_text(v1::MODE_UNSPECIFIED), nullptr);
  EXPECT_EQ(mode_text(static_cast<v1::Mode>(42)), nullptr);

  v1::Summary summary;  // mode unset: null
  EXPECT_EQ(json_line(summary_json("bad\xff", summary)),
            "{\"pool\":\"bad\xef\xbf\xbd\",\"seq\":0,\"weight\":0,\"pairs\":0,\"vertices\":0,"
            "\"edges\":0,\"mode\":null,\"no_perfect_matching\":false}");
}

TEST(ProtoJson, QueryReplyPicksItsKind) {
  v1::QueryReply reply;
  reply.set_pool("q");
  EXPECT_TRUE(query_reply_json(reply).is_null());
  reply.mutable_summary()->set_seq(2);
  EXPECT_EQ(query_reply_json(reply)["pool"], "q");
  EXPECT_EQ(query_reply_json(reply)["seq"], 2);
  reply.mutable_health()->set_ok(true);
  EXPECT_EQ(query_reply_json(reply)["ok"], true);
  reply.mutable_error()->set_code(v1::Error::UNKNOWN_VERTEX);
  EXPECT_EQ(query_reply_json(reply)["code"], "UNKNOWN_VERTEX");
}

}  // namespace
}  // namespace yoke::cli
