// The history builder (vertex_history.h) on small scripts whose causes are known by
// construction, fed by a real Pool; and the fallback when a commit reports no causes. Also
// `yoke replay SCRIPT --history V / --explain V` end to end on the built binary.
#include <gtest/gtest.h>

#include <string>
#include <vector>

#include "yoke/events.h"
#include "yoke/pool.h"
#include "run_yoke.h"
#include "tools/cli/proto_json.h"
#include "tools/formats/event_script_writer.h"
#include "tools/postmortem/vertex_history.h"

namespace yoke::cli::history_tests {
namespace {

// The history builder is the postmortem library's (tools/postmortem).
using postmortem::ChangeCause;
using postmortem::EventOrigin;
using postmortem::history_json;
using postmortem::history_text;
using postmortem::HistoryBuilder;
using postmortem::HistoryChange;
using postmortem::HistoryEntry;
using postmortem::HistoryUnit;
using postmortem::ReplayedCommit;
using postmortem::VertexHistory;

Event set(VertexKey u, VertexKey v, Weight w) { return Event{EventKind::set_edge, u, v, w}; }
Event remove(VertexKey u) { return Event{EventKind::remove_vertex, u, 0, 0}; }

// Commits `batches` one by one into a max-weight pool; batch k is commit k and its event i
// sits on "line" 100 k + i.
HistoryBuilder replay(const std::vector<std::vector<Event>>& batches,
                      const std::vector<VertexKey>& vertices) {
  Pool pool(Mode::max_weight);
  HistoryBuilder builder(vertices, HistoryUnit::commit);
  builder.start(pool, 0);
  std::uint64_t at = 0;
  for (const std::vector<Event>& batch : batches) {
    ++at;
    EXPECT_FALSE(pool.check(batch).has_value());
    const CommitResult result = pool.commit(batch);
    builder.record(ReplayedCommit{at, at, batch,
                                  [at](std::size_t i) {
                                    EventOrigin origin;
                                    origin.line = 100 * at + i;
                                    return origin;
                                  }},
                   result);
  }
  builder.finish(pool, at);
  return builder;
}

TEST(VertexHistory, StolenPartnerGoesBackToTheStealingEvent) {
  // Commit 1: 1-2 (5), solved from scratch. Commit 2: `set 5 6 1` (an unrelated pair) then
  // `set 2 3 9`: 2-3 outweighs 1-2, so 1 loses 2 and the cause is event 1 of commit 2.
  // Commit 3: `remove 1`.
  const HistoryBuilder built =
      replay({{set(1, 2, 5)}, {set(5, 6, 1), set(2, 3, 9)}, {remove(1)}}, {1, 3});
  ASSERT_EQ(built.histories().size(), 2u);
  const VertexHistory& one = built.histories()[0];
  EXPECT_EQ(one.vertex, 1u);
  EXPECT_FALSE(one.start.present);
  ASSERT_EQ(one.entries.size(), 4u);

  EXPECT_EQ(one.entries[0].change, HistoryChange::vertex_added);
  EXPECT_EQ(one.entries[0].at, 1u);
  EXPECT_EQ(one.entries[0].cause.origin.line, 100u);

  EXPECT_EQ(one.entries[1].change, HistoryChange::pair_gained);
  EXPECT_EQ(one.entries[1].other, 2u);
  EXPECT_EQ(one.entries[1].w, 5);
  EXPECT_EQ(one.entries[1].cause.kind, ChangeCause::Kind::first_solve);

  const HistoryEntry& lost = one.entries[2];
  EXPECT_EQ(lost.change, HistoryChange::pair_lost);
  EXPECT_EQ(lost.at, 2u);
  EXPECT_EQ(lost.other, 2u);
  EXPECT_EQ(lost.w, 5);
  ASSERT_EQ(lost.cause.kind, ChangeCause::Kind::event);
  EXPECT_EQ(lost.cause.index, 1u);
  EXPECT_EQ(formats::event_line(lost.cause.event), "set 2 3 9");
  EXPECT_EQ(lost.cause.origin.line, 201u);

  EXPECT_EQ(one.entries[3].change, HistoryChange::vertex_removed);
  EXPECT_EQ(one.entries[3].at, 3u);
  EXPECT_EQ(formats::event_line(one.entries[3].cause.event), "remove 1");

  ASSERT_EQ(one.partners.size(), 1u);
  EXPECT_EQ(one.partners[0].other, 2u);
  EXPECT_EQ(one.partners[0].from, 1u);
  ASSERT_TRUE(one.partners[0].to.has_value());
  EXPECT_EQ(*one.partners[0].to, 2u);
  EXPECT_FALSE(one.end.present);

  // 3 is added by `set 2 3 9` and gains 2 by the same event; still paired at the end.
  const VertexHistory& three = built.histories()[1];
  ASSERT_EQ(three.entries.size(), 2u);
  EXPECT_EQ(three.entries[0].change, HistoryChange::vertex_added);
  EXPECT_EQ(three.entries[1].change, HistoryChange::pair_gained);
  ASSERT_EQ(three.entries[1].cause.kind, ChangeCause::Kind::event);
  EXPECT_EQ(formats::event_line(three.entries[1].cause.event), "set 2 3 9");
  ASSERT_EQ(three.partners.size(), 1u);
  EXPECT_FALSE(three.partners[0].to.has_value());
  EXPECT_TRUE(three.end.present);
  ASSERT_TRUE(three.end.mate.has_value());
  EXPECT_EQ(*three.end.mate, 2u);
  EXPECT_EQ(three.end.pair_weight, 9);

  const std::string text = history_text(one, "steal.events");
  EXPECT_NE(text.find("history of 1 (steal.events), the start to commit 3:\n"), std::string::npos)
      << text;
  EXPECT_NE(text.find("  commit 1: pair with 2 gained (weight 5): first solve of the pool"),
            std::string::npos)
      << text;
  EXPECT_NE(text.find("  commit 2: pair with 2 lost (weight 5): cause set 2 3 9 [line 201]\n"),
            std::string::npos)
      << text;
  EXPECT_NE(text.find("  commit 3: removed: remove 1 [line 300]\n"), std::string::npos) << text;
  EXPECT_NE(text.find("  2 (weight 5) from commit 1 to commit 2\n"), std::string::npos) << text;
  EXPECT_NE(text.find("at commit 3: 1 is not in the pool\n"), std::string::npos) << text;
}

TEST(VertexHistory, RemovedPartnerIsTheCause) {
  // 1-2 (4) and 3-4 (4), then `set 3 4 6` (unrelated) and `remove 2`: 1 loses 2 by event 1.
  const HistoryBuilder built =
      replay({{set(1, 2, 4), set(3, 4, 4)}, {set(3, 4, 6), remove(2)}}, {1});
  const VertexHistory& one = built.histories()[0];
  ASSERT_EQ(one.entries.size(), 3u);
  const HistoryEntry& lost = one.entries[2];
  EXPECT_EQ(lost.change, HistoryChange::pair_lost);
  ASSERT_EQ(lost.cause.kind, ChangeCause::Kind::event);
  EXPECT_EQ(formats::event_line(lost.cause.event), "remove 2");
  EXPECT_TRUE(one.end.present);
  EXPECT_FALSE(one.end.mate.has_value());
}

TEST(VertexHistory, WithoutCausesTheBatchAnswers) {
  // A commit whose diff carries no cause lists: two events -> "one of the commit's 2 events";
  // one event -> that event.
  HistoryBuilder builder({1}, HistoryUnit::seq);
  Pool empty(Mode::max_weight);
  builder.start(empty, 0);
  const std::vector<Event> two = {set(1, 2, 5), set(7, 8, 1)};
  CommitResult result;
  result.diff.added = {MatchedPair{1, 2, 5}};
  builder.record(ReplayedCommit{6, 7, two, [](std::size_t i) {
                                  EventOrigin origin;
                                  origin.seq = 6 + i;
                                  origin.client_id = "alice";
                                  origin.client_batch = 3;
                                  return origin;
                                }},
                 result);
  const std::vector<Event> one = {remove(2)};
  CommitResult lost;
  lost.diff.removed = {MatchedPair{1, 2, 5}};
  builder.record(ReplayedCommit{8, 8, one, [](std::size_t) {
                                  EventOrigin origin;
                                  origin.seq = 8;
                                  return origin;
                                }},
                 lost);
  builder.finish(empty, 8);
  const VertexHistory& history = builder.histories()[0];
  ASSERT_EQ(history.entries.size(), 3u);
  EXPECT_EQ(history.entries[1].cause.kind, ChangeCause::Kind::batch);
  EXPECT_EQ(history.entries[1].cause.batch_events, 2u);
  EXPECT_EQ(history.entries[2].cause.kind, ChangeCause::Kind::event);

  const std::string text = history_text(history, "pool default");
  EXPECT_NE(text.find("  seqs 6-7: added: set 1 2 5 [seq 6, client alice, batch 3]\n"),
            std::string::npos)
      << text;
  EXPECT_NE(text.find("  seqs 6-7: pair with 2 gained (weight 5): one of the commit's 2 events "
                      "(no cause reported)\n"),
            std::string::npos)
      << text;
  EXPECT_NE(text.find("  seq 8: pair with 2 lost (weight 5): cause remove 2 [seq 8]\n"),
            std::string::npos)
      << text;
  EXPECT_NE(text.find("  2 (weight 5) from seq 7 to seq 8\n"), std::string::npos) << text;

  EXPECT_EQ(json_line(history_json(history, std::string("default"))),
            "{\"kind\":\"history\",\"vertex\":1,\"pool\":\"default\",\"unit\":\"seq\","
            "\"start\":{\"at\":0,\"present\":false,\"mate\":null,\"pair_weight\":null},"
            "\"changes\":[{\"first\":6,\"at\":7,\"change\":\"added\",\"cause\":{\"kind\":"
            "\"event\",\"index\":0,\"event\":\"set 1 2 5\",\"seq\":6,\"client_id\":\"alice\","
            "\"client_batch\":3}},{\"first\":6,\"at\":7,\"change\":\"pair_gained\",\"other\":2,"
            "\"weight\":5,\"cause\":{\"kind\":\"batch\",\"events\":2}},{\"first\":8,\"at\":8,"
            "\"change\":\"pair_lost\",\"other\":2,\"weight\":5,\"cause\":{\"kind\":\"event\","
            "\"index\":0,\"event\":\"remove 2\",\"seq\":8,\"client_id\":null,\"client_batch\":"
            "null}}],\"partners\":[{\"other\":2,\"weight\":5,\"from\":7,\"from_start\":false,"
            "\"to\":8}],\"end\":{\"at\":8,\"present\":false,\"mate\":null,\"pair_weight\":null}}");
}

TEST(VertexHistory, EventWords) {
  EXPECT_EQ(formats::event_line(Event{EventKind::add_vertex, 7, 0, 0}), "add 7");
  EXPECT_EQ(formats::event_line(set(12, 40, -3)), "set 12 40 -3");
  EXPECT_EQ(formats::event_line(Event{EventKind::unset_edge, 12, 40, 0}), "unset 12 40");
  EXPECT_EQ(formats::event_line(remove(12)), "remove 12");
  EXPECT_EQ(formats::event_line(Event{EventKind::hold_pair, 40, 12, 0}), "hold 40 12");
  EXPECT_EQ(formats::event_line(Event{EventKind::release_pair, 12, 40, 0}), "release 12 40");
}

// The built binary: `--history` and `--explain` on a script, with `--until` picking the commit.
TEST(ReplayWhy, ScriptHistoryAndExplanation) {
  const testing::TempDir dir;
  const std::string script = dir.write("steal.events",
                                       "set 1 2 5\ncommit\n"
                                       "set 5 6 1\nset 2 3 9\ncommit\n"
                                       "remove 1\ncommit\n");
  const testing::RunResult history = testing::run_yoke(dir, {"replay", script, "--history", "1"});
  ASSERT_EQ(history.exit_code, 0) << history.err;
  EXPECT_NE(history.out.find("  commit 2: pair with 2 lost (weight 5): cause set 2 3 9 "
                             "[line 4]\n"),
            std::string::npos)
      << history.out;
  EXPECT_EQ(history.out.find("commit 1 weight"), std::string::npos) << history.out;

  // After commit 1: 1-2 (5) alone, duals 2.5 and 2.5 (the engine may split them otherwise,
  // but the sum is 5), no alternative.
  const testing::RunResult explained =
      testing::run_yoke(dir, {"replay", script, "--explain", "1", "--until", "1"});
  ASSERT_EQ(explained.exit_code, 0) << explained.err;
  EXPECT_EQ(explained.out.rfind("explain 1 at commit 1 (", 0), 0u) << explained.out;
  EXPECT_NE(explained.out.find("steal.events):\n1 is paired with 2 (weight 5). Its price is "),
            std::string::npos)
      << explained.out;

  // After commit 2: 2-3 (9); 1 is unpaired with price 0 and its edge to 2 has slack
  // u(1) + u(2) - 5 = u(2) - 5 >= 0.
  const testing::RunResult json = testing::run_yoke(
      dir, {"replay", script, "--explain", "1", "--until", "2", "--json"});
  ASSERT_EQ(json.exit_code, 0) << json.err;
  const Json answer = Json::parse(json.out);
  EXPECT_EQ(answer["kind"], "explanation");
  EXPECT_EQ(answer["unit"], "commit");
  EXPECT_EQ(answer["at"], 2);
  EXPECT_TRUE(answer["mate"].is_null());
  EXPECT_TRUE(answer["pair_weight"].is_null());
  EXPECT_EQ(answer["price"], 0);
  EXPECT_EQ(answer["dual_x2"], 0);
  ASSERT_EQ(answer["alternatives"].size(), 1u);
  EXPECT_EQ(answer["alternatives"][0]["other"], 2);
  EXPECT_EQ(answer["alternatives"][0]["other_mate"], 3);
  EXPECT_GE(answer["alternatives"][0]["slack_x2"].get<std::int64_t>(), 0);

  // The help documents both questions and the JSON shapes.
  const testing::RunResult help = testing::run_yoke(dir, {"replay", "--help"});
  ASSERT_EQ(help.exit_code, 0) << help.err;
  for (const char* wanted : {"--history", "--explain", "--alternatives", "--json",
                             "\"kind\":\"history\"", "\"kind\":\"explanation\"",
                             "first_solve", "slack_x2", "dual_x2"}) {
    EXPECT_NE(help.out.find(wanted), std::string::npos) << wanted;
  }

  // Not combinable with the commit-line options.
  EXPECT_EQ(testing::run_yoke(dir, {"replay", script, "--history", "1", "--diffs"}).exit_code, 2);
  EXPECT_EQ(testing::run_yoke(dir, {"replay", script, "--json"}).exit_code, 2);
}

}  // namespace
}  // namespace yoke::cli::history_tests
