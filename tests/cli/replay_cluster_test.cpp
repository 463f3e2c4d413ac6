// `yoke replay --cluster` against a real three-node nats-server cluster (tools/nats_cluster):
// the same windows are written through JetStreamCommitLog into a stream and through
// JournalCommitLog into a data directory, with a snapshot of each pool in both stores, and
// the replay of each pool from the cluster must print what the replay of the data directory
// prints (timings aside): commit lines, --diffs, --verify, --stats, --from a snapshot,
// --until, --history and --explain. Label nats.
#include <gtest/gtest.h>

#include <chrono>
#include <map>
#include <memory>
#include <random>
#include <regex>
#include <set>
#include <string>
#include <utility>
#include <vector>

#include "daemon/cluster/nats_connection.h"
#include "daemon/jetstream/jetstream_commit_log.h"
#include "daemon/jetstream/jetstream_snapshot_store.h"
#include "daemon/journal/journal_commit_log.h"
#include "daemon/service/snapshot_capture.h"
#include "daemon/service/wire_types.h"
#include "daemon/snapshots/snapshot_directory.h"
#include "yoke/pool.h"
#include "run_yoke.h"
#include "tools/nats_cluster/local_nats_cluster.h"

namespace yoke::cli::testing {
namespace {

const std::vector<std::string> kPools = {"quillory", "quillory-plain"};

// Valid events for one pool, drawn from a seeded generator that knows the pool's vertices and
// edges: mostly edge weights set, some edges unset, some vertices removed.
class EventDraw {
 public:
  explicit EventDraw(std::uint32_t seed) : random_(seed) {}

  Event next() {
    const int roll = pick(0, 9);
    if (roll == 0 && !alive_.empty()) {
      const VertexKey u = nth(alive_, pick(0, static_cast<int>(alive_.size()) - 1));
      alive_.erase(u);
      std::erase_if(edges_, [u](const auto& edge) { return edge.first == u || edge.second == u; });
      return Event{EventKind::remove_vertex, u, 0, 0};
    }
    if (roll <= 2 && !edges_.empty()) {
      const auto edge = nth(edges_, pick(0, static_cast<int>(edges_.size()) - 1));
      edges_.erase(edge);
      return Event{EventKind::unset_edge, edge.first, edge.second, 0};
    }
    VertexKey u = static_cast<VertexKey>(pick(1, 24));
    VertexKey v = static_cast<VertexKey>(pick(1, 23));
    if (v >= u) ++v;
    alive_.insert(u);
    alive_.insert(v);
    edges_.insert({std::min(u, v), std::max(u, v)});
    return Event{EventKind::set_edge, u, v, static_cast<Weight>(pick(-5, 60))};
  }

 private:
  int pick(int low, int high) { return std::uniform_int_distribution<int>(low, high)(random_); }
  template <typename Set>
  static typename Set::value_type nth(const Set& set, int index) {
    auto it = set.begin();
    std::advance(it, index);
    return *it;
  }

  std::mt19937 random_;
  std::set<VertexKey> alive_;
  std::set<std::pair<VertexKey, VertexKey>> edges_;
};

// The windows of two pools' histories, and each pool's state after every window (for the
// snapshots).
class History {
 public:
  History() {
    for (std::size_t i = 0; i < kPools.size(); ++i) {
      draws_.emplace(kPools[i], EventDraw(static_cast<std::uint32_t>(17 + i)));
      pools_.emplace(kPools[i], std::make_unique<Pool>(Mode::max_weight, PoolLimits{}));
    }
  }

  // One window: a batch or two for each of some pools (a pool's batches of a window are one
  // commit). Commits them to the shadow pools.
  std::vector<v1::JournalRecord> window(int index) {
    std::vector<v1::JournalRecord> records;
    std::map<std::string, std::vector<Event>> group_events;
    for (int slot = 0; slot < 3; ++slot) {
      const std::string& pool = kPools[static_cast<std::size_t>(index + slot) % kPools.size()];
      if (slot == 2 && index % 3 != 0) break;  // every third window has a pool twice
      v1::JournalRecord& record = records.emplace_back();
      record.set_pool(pool);
      record.set_seq(++seqs_[pool]);
      record.set_client_id("van-" + std::to_string(slot));
      record.set_client_batch(1000 + static_cast<std::uint64_t>(index));
      record.set_wall_time_unix_us(1'800'000'000'000'000 + static_cast<std::uint64_t>(index));
      if (record.seq() == 1) *record.mutable_created() = daemon::pool_config(*pools_.at(pool));
      for (int i = 0; i < 1 + (index + slot) % 4; ++i) {
        const Event event = draws_.at(pool).next();
        *record.add_events() = daemon::to_wire(event);
        group_events[pool].push_back(event);
      }
    }
    for (auto& [pool, events] : group_events) {
      Pool& state = *pools_.at(pool);
      EXPECT_FALSE(state.check(events)) << "the generator made an invalid batch";
      state.commit(events);
    }
    return records;
  }

  // Each pool's snapshot record now, as the daemon writes them, at log position `position`.
  std::vector<v1::SnapshotRecord> snapshot(std::uint64_t position) const {
    std::vector<v1::SnapshotRecord> records;
    for (const auto& [name, pool] : pools_) {
      v1::SnapshotRecord& record = records.emplace_back();
      record.set_pool(name);
      record.set_seq(seqs_.at(name));
      *record.mutable_config() = daemon::pool_config(*pool);
      record.set_weight(pool->weight());
      record.set_pairs(pool->pairs());
      record.set_vertices(pool->vertex_count());
      record.set_edges(pool->edge_count());
      record.set_engine_state_format(daemon::kEngineStateFormat);
      record.set_engine_state(pool->save());
      record.set_journal_position(position);
    }
    return records;
  }

  std::uint64_t seq(const std::string& pool) const { return seqs_.at(pool); }

 private:
  std::map<std::string, EventDraw> draws_;
  std::map<std::string, std::unique_ptr<Pool>> pools_;
  std::map<std::string, std::uint64_t> seqs_;
};

// The output with the timings (the only part that differs between runs) blanked.
std::string without_timings(const std::string& text) {
  static const std::regex repair("repair_us [0-9]+");
  static const std::regex stats_repair("stats repair_us .*");
  static const std::regex rate("stats events_per_second [0-9]+");
  std::string out = std::regex_replace(text, repair, "repair_us T");
  out = std::regex_replace(out, stats_repair, "stats repair_us T");
  return std::regex_replace(out, rate, "stats events_per_second T");
}

class ReplayFromCluster : public ::testing::Test {
 protected:
  static void SetUpTestSuite() {
    cluster_ = std::make_unique<nats_cluster::LocalNatsCluster>();
    cluster::ConnectionSettings settings;
    settings.servers = cluster_->client_urls();
    settings.name = "yoke-replay-cluster-test";
    connection_ = std::make_unique<cluster::NatsConnection>(std::move(settings));
    write_both();
  }
  static void TearDownTestSuite() {
    connection_.reset();
    cluster_.reset();
    data_.reset();
  }

  // 14 windows, a snapshot of both pools after the 8th, in the stream and in the data dir.
  static void write_both() {
    data_ = std::make_unique<TempDir>();
    jetstream::JetStreamLogSettings settings;
    settings.stream = kStream;
    settings.subject_prefix = kPrefix;
    settings.replicas = 3;
    settings.max_bytes = 32 << 20;
    auto stream_log = jetstream::JetStreamCommitLog::open(*connection_, settings);
    auto stream_snapshots = jetstream::JetStreamSnapshotStore::open(*connection_, settings, 2);
    auto journal = journal::JournalCommitLog::open(data_->path() / "journal");
    daemon::SnapshotDirectory snapshot_dir(data_->path() / "snapshots", 2);

    History history;
    for (int index = 0; index < 14; ++index) {
      const std::vector<v1::JournalRecord> window = history.window(index);
      const storage::CommittedWindow on_stream = stream_log->commit(window);
      for (const storage::CommittedGroup& group : on_stream.groups) {
        ASSERT_TRUE(group.accepted) << group.pool;
      }
      journal->commit(window);
      if (index == 7) {
        stream_snapshots->write(stream_log->end_position(),
                                history.snapshot(stream_log->end_position()));
        snapshot_dir.write(journal->end_position(), history.snapshot(journal->end_position()));
        snapshot_seq_ = history.seq("quillory");
      }
    }
    final_seq_ = history.seq("quillory");
  }

  // `yoke replay` of `pool` from the cluster and from the data directory, with `extra`.
  std::pair<RunResult, RunResult> replay_both(const std::string& pool,
                                              const std::vector<std::string>& extra) const {
    std::vector<std::string> from_cluster = {"replay", "--cluster", servers(), "--stream",
                                             kStream, "--subject-prefix", kPrefix, "--pool",
                                             pool};
    from_cluster.insert(from_cluster.end(), extra.begin(), extra.end());
    std::vector<std::string> from_dir = {"replay", data_->path().string(), "--pool", pool};
    from_dir.insert(from_dir.end(), extra.begin(), extra.end());
    return {run_yoke(*data_, from_cluster), run_yoke(*data_, from_dir)};
  }

  void expect_same(const std::string& pool, const std::vector<std::string>& extra) const {
    const auto [cluster, dir] = replay_both(pool, extra);
    ASSERT_EQ(cluster.exit_code, 0) << cluster.err;
    ASSERT_EQ(dir.exit_code, 0) << dir.err;
    EXPECT_FALSE(cluster.out.empty());
    EXPECT_EQ(without_timings(cluster.out), without_timings(dir.out));
    EXPECT_EQ(cluster.err, dir.err);
  }

  static std::string servers() {
    std::string text;
    for (const std::string& url : cluster_->client_urls()) text += (text.empty() ? "" : ",") + url;
    return text;
  }

  static constexpr const char* kStream = "replay-log";
  static constexpr const char* kPrefix = "r1.yoke";
  static inline std::unique_ptr<nats_cluster::LocalNatsCluster> cluster_;
  static inline std::unique_ptr<cluster::NatsConnection> connection_;
  static inline std::unique_ptr<TempDir> data_;
  static inline std::uint64_t snapshot_seq_ = 0;
  static inline std::uint64_t final_seq_ = 0;
};

TEST_F(ReplayFromCluster, EveryCommitAsFromTheDataDirectory) {
  for (const std::string& pool : kPools) {
    expect_same(pool, {"--diffs", "--verify", "--stats"});
  }
  const auto [cluster, dir] = replay_both("quillory", {});
  // One line per commit, ending in the pool's seq.
  EXPECT_NE(cluster.out.find(" seq " + std::to_string(final_seq_) + "\n"), std::string::npos)
      << cluster.out;
}

TEST_F(ReplayFromCluster, EveryPoolOfTheLog) {
  const auto [cluster, dir] = replay_both("unused", {"--all-pools", "--stats", "--verify"});
  ASSERT_EQ(cluster.exit_code, 0) << cluster.err;
  ASSERT_EQ(dir.exit_code, 0) << dir.err;
  EXPECT_EQ(without_timings(cluster.out), without_timings(dir.out));
  const auto first = cluster.out.find("pool quillory\n");
  const auto second = cluster.out.find("pool quillory-plain\n");
  ASSERT_EQ(first, 0u) << cluster.out;
  ASSERT_NE(second, std::string::npos) << cluster.out;
  // Each pool's replay is the one of --pool P.
  const auto [alone, unused] = replay_both("quillory", {"--stats", "--verify"});
  EXPECT_EQ(without_timings(cluster.out.substr(first + 14, second - first - 14)),
            without_timings(alone.out));
}

TEST_F(ReplayFromCluster, FromTheSnapshotAndUntilASeq) {
  expect_same("quillory", {"--from", std::to_string(snapshot_seq_ + 1), "--diffs"});
  const auto [cluster, dir] =
      replay_both("quillory", {"--from", std::to_string(snapshot_seq_ + 1)});
  EXPECT_NE(cluster.out.find("note: starting from the snapshot at seq " +
                             std::to_string(snapshot_seq_)),
            std::string::npos)
      << cluster.out;
  expect_same("quillory-plain", {"--until", "5", "--verify"});
}

TEST_F(ReplayFromCluster, PostmortemAnswersAsFromTheDataDirectory) {
  expect_same("quillory", {"--history", "3", "--history", "7", "--json"});
  expect_same("quillory-plain", {"--explain", "5", "--until", "6"});
  expect_same("quillory", {"--explain", "2", "--from", std::to_string(snapshot_seq_ + 1),
                           "--json"});
}

TEST_F(ReplayFromCluster, ReportNamesTheStream) {
  const RunResult result =
      run_yoke(*data_, {"replay", "--cluster", servers(), "--stream", kStream, "--subject-prefix",
                        kPrefix, "--pool", "quillory", "--report",
                        data_->file("cluster-report.html")});
  ASSERT_EQ(result.exit_code, 0) << result.err;
  const std::string page = data_->read("cluster-report.html");
  EXPECT_NE(page.find("JetStream stream <code>JetStream stream &#39;replay-log&#39;"),
            std::string::npos)
      << page.substr(0, 3000);
}

TEST_F(ReplayFromCluster, ClearErrorsForAWrongStreamPrefixOrPool) {
  RunResult result = run_yoke(*data_, {"replay", "--cluster", servers(), "--stream", "nowhere",
                                       "--pool", "quillory"});
  EXPECT_EQ(result.exit_code, 2);
  EXPECT_EQ(result.err, "error: no JetStream stream 'nowhere' on " +
                            connection_->servers_text() + " (is --stream right?)\n");

  result = run_yoke(*data_, {"replay", "--cluster", servers(), "--stream", kStream,
                             "--subject-prefix", "other", "--pool", "quillory"});
  EXPECT_EQ(result.exit_code, 2);
  EXPECT_EQ(result.err, "error: JetStream stream 'replay-log' holds r1.yoke.>, not other.> "
                        "(is --subject-prefix right?)\n");

  result = run_yoke(*data_, {"replay", "--cluster", servers(), "--stream", kStream,
                             "--subject-prefix", kPrefix, "--pool", "harbour"});
  EXPECT_EQ(result.exit_code, 2);
  EXPECT_NE(result.err.find("holds no record of pool harbour"), std::string::npos) << result.err;

  result = run_yoke(*data_, {"replay", data_->path().string(), "--cluster", servers()});
  EXPECT_EQ(result.exit_code, 2);
  EXPECT_NE(result.err.find("--cluster replays a cluster's log: it takes no SCRIPT"),
            std::string::npos);
}

}  // namespace
}  // namespace yoke::cli::testing
