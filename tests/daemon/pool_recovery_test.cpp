// One pool's state on its own, for an instance of a cluster that gains, loses or follows a
// pool while it runs: taking it out of a ServiceState and putting it in, the log position of
// its last group (last_position), a snapshot of it alone, recovering it alone from a snapshot
// store and the log (recover_pool), and following the log further (catch_up_pool). All over
// the local journal and snapshot directory; the live service is the reference each rebuilt
// pool must equal.
#include <gtest/gtest.h>

#include "daemon/journal/journal_commit_log.h"
#include "daemon/service/recovery.h"
#include "daemon/service/snapshot_capture.h"
#include "daemon/snapshots/snapshot_directory.h"
#include "service_test_util.h"

namespace yoke::daemon {
namespace {

using testing::from_client;
using testing::in_pool;
using testing::PoolView;
using testing::ScriptWindow;
using testing::ServiceHarness;
using testing::view_of;
using testing::wire_set;

PoolView view_in(ServiceState& state, const std::string& name) {
  PoolView view;
  const Pool* pool = state.registry.find(name);
  if (pool == nullptr) return view;
  if (const auto it = state.progress.find(name); it != state.progress.end()) {
    view.seq = it->second.seq;
    view.incarnation = it->second.incarnation;
  }
  view.weight = pool->weight();
  view.pairs = pool->pairs();
  view.vertices = pool->vertex_count();
  view.edges = pool->edge_count();
  view.matching = pool->matching();
  return view;
}

// Client id, last batch and seq of each mark, for comparisons.
std::vector<std::tuple<std::string, std::uint64_t, std::uint64_t>> pool_marks(
    const RetryLedger& ledger, const std::string& pool) {
  std::vector<std::tuple<std::string, std::uint64_t, std::uint64_t>> out;
  for (const auto& [client, mark] : ledger.clients_of(pool)) {
    out.emplace_back(client, mark.highest().batch_number, mark.highest().seq);
  }
  return out;
}

std::vector<ScriptWindow> two_pool_script(std::size_t windows, std::uint64_t seed) {
  testing::ScriptSpec spec;
  spec.pools = {"default", "harbour"};
  spec.windows = windows;
  return testing::random_script(spec, seed);
}

// The windows of a script from `first` to the end.
std::vector<ScriptWindow> windows_from(const std::vector<ScriptWindow>& windows,
                                       std::size_t first) {
  return {windows.begin() + static_cast<std::ptrdiff_t>(first), windows.end()};
}
std::vector<ScriptWindow> first_windows(const std::vector<ScriptWindow>& windows,
                                        std::size_t count) {
  return {windows.begin(), windows.begin() + static_cast<std::ptrdiff_t>(count)};
}

TEST(PoolState, TakeAndPutMoveOnePoolsWholeState) {
  const DaemonConfig config = testing::test_config({});
  ServiceState state = testing::fresh_state(config);
  Pool& harbour = state.registry.pool("harbour");
  harbour.commit(testing::engine_events({wire_set(1, 2, 7)}));
  state.progress["harbour"].seq = 3;
  state.progress["harbour"].last_position = 41;
  state.ledger.record("harbour", "tug-1", {5, 3});
  state.ledger.record("harbour", "tug-2", {1, 2});
  state.registry.pool("default");
  state.progress["default"].seq = 1;
  state.ledger.record("default", "tug-1", {9, 1});

  std::optional<PoolState> taken = take_pool_state(state, "harbour");
  ASSERT_TRUE(taken.has_value());
  EXPECT_EQ(taken->pool.get(), &harbour);
  EXPECT_EQ(taken->progress.seq, 3u);
  EXPECT_EQ(taken->progress.last_position, 41u);
  ASSERT_EQ(taken->clients.size(), 2u);
  EXPECT_EQ(taken->clients[0].first, "tug-1");
  EXPECT_EQ(taken->clients[0].second.highest().batch_number, 5u);
  EXPECT_EQ(state.registry.find("harbour"), nullptr);
  EXPECT_FALSE(state.progress.contains("harbour"));
  EXPECT_TRUE(state.ledger.clients_of("harbour").empty());
  EXPECT_NE(state.registry.find("default"), nullptr);  // the other pool is untouched
  EXPECT_EQ(state.ledger.last("default", "tug-1")->seq, 1u);
  EXPECT_FALSE(take_pool_state(state, "harbour").has_value());

  // Into another state that holds an older harbour: nothing of the older one stays.
  ServiceState other = testing::fresh_state(config);
  other.registry.pool("harbour");
  other.ledger.record("harbour", "tug-9", {4, 4});
  put_pool_state(other, "harbour", std::move(*taken));
  EXPECT_EQ(other.registry.find("harbour"), &harbour);
  EXPECT_EQ(other.progress.at("harbour").seq, 3u);
  EXPECT_EQ(other.ledger.last("harbour", "tug-2")->seq, 2u);
  EXPECT_FALSE(other.ledger.last("harbour", "tug-9").has_value());
  EXPECT_EQ(other.ledger.size(), 2u);

  // A pool with nothing applied moves as progress alone.
  put_pool_state(other, "quiet", PoolState{});
  EXPECT_EQ(other.registry.find("quiet"), nullptr);
  EXPECT_TRUE(other.progress.contains("quiet"));
  EXPECT_TRUE(take_pool_state(other, "quiet").has_value());
}

TEST(PoolProgressPosition, IsTheLastGroupsPositionLiveAndAfterRecovery) {
  ServiceHarness harness;
  std::map<std::string, std::uint64_t> expected;
  for (const ScriptWindow& window : two_pool_script(12, 7)) {
    const std::uint64_t position = harness.service().next_journal_position();
    for (const auto& batch : window) {
      ASSERT_FALSE(harness.offer(batch.events, batch.header).has_value());
      expected[batch.header.pool.empty() ? "default" : batch.header.pool] = position;
    }
    harness.close();
  }
  ASSERT_EQ(expected.size(), 2u);
  for (const auto& [pool, position] : expected) {
    EXPECT_EQ(harness.service().progress(pool)->last_position, position) << pool;
  }
  harness.restart();  // no snapshot: every group replayed
  for (const auto& [pool, position] : expected) {
    EXPECT_EQ(harness.service().progress(pool)->last_position, position) << pool;
  }
  // From a snapshot: the position below it (it covers everything there).
  const std::uint64_t snapshot = harness.snapshot();
  harness.restart();
  for (const auto& [pool, position] : expected) {
    EXPECT_EQ(harness.service().progress(pool)->last_position, snapshot - 1) << pool;
  }
}

TEST(PoolSnapshot, OnePoolsRecordIsNamedByItsLastPositionPlusOne) {
  ServiceHarness harness;
  ASSERT_TRUE(testing::run_script(harness, two_pool_script(10, 11)));
  std::optional<v1::SnapshotRecord> harbour = capture_pool_snapshot(harness.service(), "harbour");
  ASSERT_TRUE(harbour.has_value());
  EXPECT_EQ(harbour->journal_position(),
            harness.service().progress("harbour")->last_position + 1);
  // The same record as in a snapshot of every pool, but for the position it names.
  for (v1::SnapshotRecord record : capture_snapshot(harness.service())) {
    if (record.pool() != "harbour") continue;
    record.set_journal_position(harbour->journal_position());
    record.set_wall_time_unix_us(harbour->wall_time_unix_us());
    EXPECT_EQ(record.SerializeAsString(), harbour->SerializeAsString());
  }
  EXPECT_FALSE(capture_pool_snapshot(harness.service(), "lagoon").has_value());
  // A record restores to the pool it was taken from.
  EXPECT_EQ(restore_checked(*harbour)->matching(),
            harness.service().registry().find("harbour")->matching());
}

TEST(PoolRecovery, RecoversOnePoolFromTheNewestSnapshotHoldingItAndItsGroupsAfter) {
  ServiceHarness harness;
  const std::vector<ScriptWindow> windows = two_pool_script(24, 3);
  ASSERT_TRUE(testing::run_script(harness, first_windows(windows, 12)));
  const std::uint64_t snapshot = harness.snapshot();
  ASSERT_TRUE(testing::run_script(harness, windows_from(windows, 12)));
  // lagoon starts after the snapshot: no snapshot holds it.
  ASSERT_FALSE(harness.offer({wire_set(1, 2, 3)}, from_client("skiff", 1, "lagoon")));
  harness.close();

  journal::JournalView view(harness.journal_dir());
  const SnapshotDirectory store(harness.snapshot_dir(), 2);
  ServiceState state = testing::fresh_state(harness.config());
  state.registry.pool("elsewhere");  // what the state holds of other pools stays
  RecoveryReport report;
  recover_pool(view, store, "harbour", state, report);
  EXPECT_EQ(report.snapshot_position, snapshot);
  EXPECT_TRUE(report.skipped.empty());
  EXPECT_EQ(report.pools, 1u);
  EXPECT_GT(report.commits, 0u);
  EXPECT_EQ(view_in(state, "harbour"), view_of(harness.service(), "harbour"));
  EXPECT_EQ(state.progress.at("harbour").last_position,
            harness.service().progress("harbour")->last_position);
  EXPECT_EQ(pool_marks(state.ledger, "harbour"),
            pool_marks(harness.service().ledger(), "harbour"));
  EXPECT_EQ(state.registry.find("default"), nullptr);  // only the pool asked for
  EXPECT_NE(state.registry.find("elsewhere"), nullptr);

  RecoveryReport lagoon_report;
  recover_pool(view, store, "lagoon", state, lagoon_report);
  EXPECT_FALSE(lagoon_report.snapshot_position.has_value());
  ASSERT_EQ(lagoon_report.skipped.size(), 1u);
  EXPECT_NE(lagoon_report.skipped[0].find("holds no pool lagoon"), std::string::npos)
      << lagoon_report.skipped[0];
  EXPECT_EQ(lagoon_report.commits, 1u);
  EXPECT_EQ(view_in(state, "lagoon"), view_of(harness.service(), "lagoon"));
  EXPECT_EQ(state.ledger.last("lagoon", "skiff")->seq, 1u);

  RecoveryReport missing_report;
  recover_pool(view, store, "nowhere", state, missing_report);
  EXPECT_EQ(missing_report.pools, 0u);
  EXPECT_EQ(missing_report.commits, 0u);
}

TEST(PoolRecovery, AFollowerCatchesUpAndServesOnWhereTheOwnerStopped) {
  ServiceHarness harness;
  const std::vector<ScriptWindow> windows = two_pool_script(30, 5);
  ASSERT_TRUE(testing::run_script(harness, first_windows(windows, 10)));
  journal::JournalView view(harness.journal_dir());
  const SnapshotDirectory store(harness.snapshot_dir(), 2);  // empty: the log alone
  ServiceState follower = testing::fresh_state(harness.config());
  RecoveryReport report;
  recover_pool(view, store, "harbour", follower, report);
  EXPECT_EQ(view_in(follower, "harbour"), view_of(harness.service(), "harbour"));

  ASSERT_TRUE(testing::run_script(harness, windows_from(windows, 10)));
  const std::uint64_t commits_before = report.commits;
  const std::uint64_t applied = catch_up_pool(view, "harbour", follower, report);
  EXPECT_GT(applied, 0u);
  EXPECT_EQ(report.commits, commits_before + applied);
  EXPECT_EQ(view_in(follower, "harbour"), view_of(harness.service(), "harbour"));
  EXPECT_EQ(catch_up_pool(view, "harbour", follower, report), 0u);  // nothing new
  EXPECT_EQ(follower.registry.find("default"), nullptr);

  // The follower takes the pool over in a service of its own: seqs and retries continue.
  const std::uint64_t seq = harness.service().progress("harbour")->seq;
  const auto last_marks = pool_marks(harness.service().ledger(), "harbour");
  ASSERT_FALSE(last_marks.empty());
  harness.stop();
  DaemonConfig config = harness.config();
  config.cluster.backend = StorageBackend::jetstream;
  config.cluster.servers = {"nats://127.0.0.1:4222"};
  config.cluster.instance = "west";
  config.cluster.instances["east"] = {"tcp://10.0.0.1:7410", "tcp://10.0.0.1:7412",
                                      "tcp://10.0.0.1:7411", {"harbour"}, {}};
  config.cluster.instances["west"] = {"tcp://10.0.0.2:7410", "tcp://10.0.0.2:7412",
                                      "tcp://10.0.0.2:7411", {}, {"harbour"}};
  ServiceHarness successor(config);
  successor.service().adopt_pool("harbour", *take_pool_state(follower, "harbour"));
  EXPECT_EQ(view_of(successor.service(), "harbour").seq, seq);
  const auto& [client, batch_number, client_seq] = last_marks.front();
  const auto retry =
      successor.offer({wire_set(1, 2, 1)}, from_client(client, batch_number, "harbour"));
  ASSERT_TRUE(retry.has_value());
  ASSERT_TRUE(retry->has_accepted()) << retry->ShortDebugString();
  EXPECT_TRUE(retry->accepted().duplicate());
  EXPECT_EQ(retry->accepted().seq(), client_seq);
  ASSERT_FALSE(successor.offer({wire_set(900, 901, 2)}, in_pool("harbour")).has_value());
  const testing::WindowResult window = successor.close();
  ASSERT_EQ(window.acks.size(), 1u);
  EXPECT_EQ(window.acks[0].second.accepted().seq(), seq + 1);
  ASSERT_EQ(window.diffs.size(), 1u);
  EXPECT_EQ(window.diffs[0].prev_seq(), seq);
  EXPECT_TRUE(testing::pool_certified(*successor.service().registry().find("harbour")));
}

}  // namespace
}  // namespace yoke::daemon
