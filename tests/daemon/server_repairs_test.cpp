// yoked's loop with its repair threads, in process over real ZeroMQ sockets: while pool A's
// strand is blocked on a latch (so A's repair cannot run), pool B's acknowledgement and a query
// on B are answered, and A's own batch and query wait for A; while a window's commit is held on
// the journal thread, queries are answered and batches join the next window. No timing: the
// order of replies on one socket says what waited.
#include <netinet/in.h>
#include <signal.h>
#include <sys/socket.h>
#include <unistd.h>

#include <algorithm>
#include <atomic>
#include <chrono>
#include <filesystem>
#include <future>
#include <map>
#include <memory>
#include <optional>
#include <string>
#include <string_view>
#include <thread>
#include <vector>

#include <gtest/gtest.h>
#include <zmq.hpp>

#include "daemon/server/thread_niceness.h"
#include "daemon/server/yoked_server.h"
#include "daemon/service/recovery.h"
#include "daemon/service/snapshot_capture.h"
#include "daemon/snapshots/snapshot_directory.h"
#include "service_test_util.h"
#include "yoke/v1/ingest.pb.h"
#include "yoke/v1/query.pb.h"

namespace yoke::daemon {
namespace {

using testing::from_client;
using testing::wire_add;
using testing::wire_set;

// A bound on each wait for a reply: a design that holds B's answer fails instead of hanging.
constexpr int kReplyBoundMs = 30000;

// A loopback port free now (the metrics endpoint needs a number).
int free_port() {
  const int fd = ::socket(AF_INET, SOCK_STREAM, 0);
  sockaddr_in address{};
  address.sin_family = AF_INET;
  address.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  socklen_t length = sizeof(address);
  if (fd < 0 || ::bind(fd, reinterpret_cast<sockaddr*>(&address), sizeof(address)) != 0 ||
      ::getsockname(fd, reinterpret_cast<sockaddr*>(&address), &length) != 0) {
    throw std::runtime_error("no free loopback port");
  }
  ::close(fd);
  return ntohs(address.sin_port);
}

zmq::socket_t dealer(zmq::context_t& context, const std::string& endpoint) {
  zmq::socket_t socket(context, zmq::socket_type::dealer);
  socket.set(zmq::sockopt::linger, 0);
  socket.set(zmq::sockopt::rcvtimeo, kReplyBoundMs);
  socket.connect(endpoint);
  return socket;
}

v1::Ack next_ack(zmq::socket_t& socket) {
  zmq::message_t message;
  if (!socket.recv(message)) throw std::runtime_error("no acknowledgement came");
  v1::IngestReply reply;
  if (!reply.ParseFromArray(message.data(), static_cast<int>(message.size()))) {
    throw std::runtime_error("not an IngestReply");
  }
  return reply.ack();
}

v1::QueryReply next_answer(zmq::socket_t& socket) {
  zmq::message_t message;
  if (!socket.recv(message)) throw std::runtime_error("no query answer came");
  v1::QueryReply reply;
  if (!reply.ParseFromArray(message.data(), static_cast<int>(message.size()))) {
    throw std::runtime_error("not a QueryReply");
  }
  return reply;
}

void ask_summary(zmq::socket_t& socket, const std::string& pool, std::uint64_t id) {
  v1::QueryRequest request;
  request.set_version(1);
  request.set_request_id(id);
  request.set_pool(pool);
  request.mutable_summary();
  socket.send(zmq::buffer(request.SerializeAsString()), zmq::send_flags::none);
}

void send_batch(zmq::socket_t& socket, const std::vector<v1::Event>& events,
                const testing::BatchHeader& header) {
  socket.send(zmq::buffer(testing::ingest_message(events, header)), zmq::send_flags::none);
}

// A daemon in `dir` on ipc endpoints there, with two repair threads (one for the latch).
DaemonConfig server_config(const std::filesystem::path& dir) {
  DaemonConfig config = testing::test_config(dir);
  const std::string ipc = "ipc://" + (dir / "").string();
  config.endpoints.ingest = ipc + "ingest";
  config.endpoints.publish = ipc + "publish";
  config.endpoints.query = ipc + "query";
  config.endpoints.metrics = "127.0.0.1:" + std::to_string(free_port());
  config.service.repair_threads = 2;
  config.snapshots.after_events = 0;
  return config;
}

// server_config() with a snapshot after every window, the last 10 kept.
DaemonConfig snapshot_each_window_config(const std::filesystem::path& dir) {
  DaemonConfig config = server_config(dir);
  config.snapshots.after_events = 1;
  config.snapshots.keep = 10;
  return config;
}

// A yoked server on its own thread, recovered from `dir`, whose pool A's strand first runs a
// latch: A's repairs wait behind it until `latch.set_value()`.
struct HeldRepairDaemon {
  HeldRepairDaemon(const DaemonConfig& config, const std::filesystem::path& dir)
      : log(journal::JournalCommitLog::open(dir / "journal", config.journal)),
        snapshots(dir / "snapshots", config.snapshots.keep),
        service(config, recover(config, *log, snapshots, report), *log),
        server(config, service, snapshots),
        opened(latch.get_future().share()) {
    server.repair_threads().run("A", [held = opened] { held.wait(); });
    status = std::async(std::launch::async, [this] { return server.run(); });
  }

  std::unique_ptr<journal::JournalCommitLog> log;
  SnapshotDirectory snapshots;
  RecoveryReport report;
  PoolService service;
  YokedServer server;
  std::promise<void> latch;
  std::shared_future<void> opened;
  std::future<int> status;  // server.run()'s exit status
};

TEST(ServerRepairs, ABlockedPoolHoldsNeitherAnotherPoolsAckNorItsQueries) {
  testing::TempDir dir;
  const DaemonConfig config = server_config(dir.path());

  HeldRepairDaemon yoked(config, dir.path());

  zmq::context_t context(1);
  zmq::socket_t ingest = dealer(context, config.endpoints.ingest);
  zmq::socket_t query = dealer(context, config.endpoints.query);

  send_batch(ingest, {wire_add(1), wire_add(2), wire_set(1, 2, 5)}, from_client("a", 1, "A"));
  const v1::Ack a1 = next_ack(ingest);  // durable: its repair now waits behind the latch
  ASSERT_TRUE(a1.has_accepted()) << a1.DebugString();
  EXPECT_EQ(a1.accepted().seq(), 1u);

  // Sent first, answered last: A's second batch and a query on A.
  send_batch(ingest, {wire_add(3), wire_add(4), wire_set(3, 4, 2)}, from_client("a", 2, "A"));
  ask_summary(query, "A", 1);
  send_batch(ingest, {wire_add(1), wire_add(2), wire_set(1, 2, 7)}, from_client("b", 1, "B"));
  const v1::Ack b1 = next_ack(ingest);
  EXPECT_EQ(b1.pool(), "B");
  ASSERT_TRUE(b1.has_accepted()) << b1.DebugString();
  EXPECT_EQ(b1.accepted().seq(), 1u);
  ask_summary(query, "B", 2);
  const v1::QueryReply on_b = next_answer(query);
  EXPECT_EQ(on_b.request_id(), 2u);
  ASSERT_TRUE(on_b.has_summary()) << on_b.DebugString();
  EXPECT_EQ(on_b.summary().seq(), 1u);
  EXPECT_EQ(on_b.summary().weight(), 7);

  yoked.latch.set_value();  // A's repair runs; what waited for it is answered
  const v1::Ack a2 = next_ack(ingest);
  EXPECT_EQ(a2.pool(), "A");
  EXPECT_EQ(a2.client_batch(), 2u);
  ASSERT_TRUE(a2.has_accepted()) << a2.DebugString();
  EXPECT_EQ(a2.accepted().seq(), 2u);
  const v1::QueryReply on_a = next_answer(query);
  EXPECT_EQ(on_a.request_id(), 1u);
  ASSERT_TRUE(on_a.has_summary()) << on_a.DebugString();
  EXPECT_EQ(on_a.summary().seq(), 1u);  // answered once A's first repair was collected
  EXPECT_EQ(on_a.summary().weight(), 5);

  ::kill(::getpid(), SIGTERM);
  EXPECT_EQ(yoked.status.get(), kYokedOk);
  EXPECT_EQ(yoked.service.progress("A")->seq, 2u);
  EXPECT_EQ(yoked.service.registry().find("A")->weight(), 7);
  EXPECT_TRUE(testing::pool_certified(*yoked.service.registry().find("A")));
  EXPECT_TRUE(testing::pool_certified(*yoked.service.registry().find("B")));
}

// A new pool's big first message is decoded on its strand, here behind the latch: another
// pool's batch is acknowledged meanwhile, and once the latch opens the big message's refusal
// (an event of an unknown kind at index 4321) and then the pool's next big batch, which waited
// behind it, are answered in that order.
TEST(ServerRepairs, ANewPoolsBigFirstMessageIsDecodedOffTheLoop) {
  testing::TempDir dir;
  const DaemonConfig config = server_config(dir.path());
  HeldRepairDaemon yoked(config, dir.path());
  zmq::context_t context(1);
  zmq::socket_t ingest = dealer(context, config.endpoints.ingest);

  std::vector<v1::Event> base;
  for (VertexKey key = 1; key <= 8000; ++key) base.push_back(wire_add(key));
  for (VertexKey key = 1; key < 8000; key += 2) base.push_back(wire_set(key, key + 1, 3));
  v1::EventBatch bad = testing::make_batch(base, from_client("a", 1, "A"));
  bad.mutable_events(4321)->set_kind(static_cast<v1::Event::Kind>(99));
  const std::string bad_message = testing::ingest_message(bad);
  ASSERT_GT(bad_message.size(), std::size_t{64} << 10);
  ingest.send(zmq::buffer(bad_message), zmq::send_flags::none);
  send_batch(ingest, base, from_client("a", 2, "A"));
  send_batch(ingest, {wire_add(1), wire_add(2), wire_set(1, 2, 7)}, from_client("b", 1, "B"));
  const v1::Ack b1 = next_ack(ingest);
  EXPECT_EQ(b1.pool(), "B");
  ASSERT_TRUE(b1.has_accepted()) << b1.DebugString();

  yoked.latch.set_value();
  const v1::Ack refused = next_ack(ingest);
  EXPECT_EQ(refused.client_batch(), 1u);
  EXPECT_EQ(refused.pool(), "A");
  ASSERT_TRUE(refused.has_rejected()) << refused.DebugString();
  EXPECT_EQ(refused.rejected().errors(0).code(), v1::Error::MALFORMED_MESSAGE);
  EXPECT_EQ(refused.rejected().errors(0).event_index(), 4321u);
  const v1::Ack a2 = next_ack(ingest);
  EXPECT_EQ(a2.client_batch(), 2u);
  ASSERT_TRUE(a2.has_accepted()) << a2.DebugString();
  EXPECT_EQ(a2.accepted().seq(), 1u);

  ::kill(::getpid(), SIGTERM);
  EXPECT_EQ(yoked.status.get(), kYokedOk);
  EXPECT_EQ(yoked.service.registry().find("A")->weight(), 4000 * 3);
  EXPECT_TRUE(testing::pool_certified(*yoked.service.registry().find("A")));
}

// A snapshot after every window, written off the loop: the one started while A's repair is
// held waits for A alone (B's batch and query are answered meanwhile), holds A at its
// position, and not B, whose first batch came after that position.
TEST(ServerRepairs, ASnapshotWaitsForABlockedPoolWithoutHoldingTheOthers) {
  testing::TempDir dir;
  const DaemonConfig config = snapshot_each_window_config(dir.path());

  HeldRepairDaemon yoked(config, dir.path());

  zmq::context_t context(1);
  zmq::socket_t ingest = dealer(context, config.endpoints.ingest);
  zmq::socket_t query = dealer(context, config.endpoints.query);
  send_batch(ingest, {wire_add(1), wire_add(2), wire_set(1, 2, 5)}, from_client("a", 1, "A"));
  ASSERT_TRUE(next_ack(ingest).has_accepted());  // A repairs (held); a snapshot starts
  send_batch(ingest, {wire_add(1), wire_add(2), wire_set(1, 2, 7)}, from_client("b", 1, "B"));
  const v1::Ack b1 = next_ack(ingest);
  ASSERT_TRUE(b1.has_accepted()) << b1.DebugString();
  ask_summary(query, "B", 1);
  const v1::QueryReply on_b = next_answer(query);
  ASSERT_TRUE(on_b.has_summary()) << on_b.DebugString();
  EXPECT_EQ(on_b.summary().seq(), 1u);

  yoked.latch.set_value();
  ask_summary(query, "A", 2);  // answered once A's repair is collected (and A captured)
  ASSERT_TRUE(next_answer(query).has_summary());
  ::kill(::getpid(), SIGTERM);
  ASSERT_EQ(yoked.status.get(), kYokedOk);

  // The oldest snapshot is the one started with A held: A at seq 1 alone.
  const std::vector<std::uint64_t> positions = yoked.snapshots.positions();
  ASSERT_GE(positions.size(), 2u);
  const storage::SnapshotContents first = yoked.snapshots.read(positions.back());
  ASSERT_EQ(first.pools.size(), 1u);
  EXPECT_EQ(first.pools[0].pool(), "A");
  EXPECT_EQ(first.pools[0].seq(), 1u);
  EXPECT_EQ(first.pools[0].weight(), 5);
  // A was saved by its worker right after its repair (capture_after_repair): it restores.
  const std::unique_ptr<Pool> restored = restore_checked(first.pools[0]);
  EXPECT_TRUE(testing::pool_certified(*restored));
  // The final one holds both, and a restart from it finds them as they were.
  const storage::SnapshotContents last = yoked.snapshots.read(positions.front());
  EXPECT_EQ(last.pools.size(), 2u);
}

// A pool free when a background snapshot starts is saved on its strand, not on the loop: with
// A recovered (seq 1) and its strand blocked, B's window starts a snapshot; A's next batch is
// acknowledged while A's capture waits, and its window, repaired after the capture, is not in
// that snapshot. A restart from the snapshots finds both pools as they were.
TEST(ServerRepairs, AFreePoolsCaptureWaitsOnItsStrandWhileItsBatchesAreAcknowledged) {
  testing::TempDir dir;
  const DaemonConfig config = snapshot_each_window_config(dir.path());
  {  // A's first window, journalled by a daemon of the service alone
    auto log = journal::JournalCommitLog::open(dir.path() / "journal", config.journal);
    SnapshotDirectory none(dir.path() / "snapshots", config.snapshots.keep);
    RecoveryReport report;
    PoolService service(config, recover(config, *log, none, report), *log);
    ASSERT_FALSE(service.offer(1, testing::ingest_message({wire_add(1), wire_add(2),
                                                           wire_set(1, 2, 5)},
                                                          from_client("a", 1, "A"))));
    ASSERT_EQ(testing::close_window(service).acks.size(), 1u);
  }
  auto yoked = std::make_unique<HeldRepairDaemon>(config, dir.path());
  ASSERT_EQ(yoked->report.pools, 1u);

  zmq::context_t context(1);
  zmq::socket_t ingest = dealer(context, config.endpoints.ingest);
  zmq::socket_t query = dealer(context, config.endpoints.query);
  send_batch(ingest, {wire_add(1), wire_add(2), wire_set(1, 2, 7)}, from_client("b", 1, "B"));
  ASSERT_TRUE(next_ack(ingest).has_accepted());  // a snapshot starts: A's capture is held
  send_batch(ingest, {wire_add(3), wire_set(2, 3, 9)}, from_client("a", 2, "A"));
  const v1::Ack a2 = next_ack(ingest);
  ASSERT_TRUE(a2.has_accepted()) << a2.DebugString();
  EXPECT_EQ(a2.accepted().seq(), 2u);
  // Nothing written yet: the snapshot waits for A's capture, behind the latch on A's strand.
  EXPECT_TRUE(yoked->snapshots.positions().empty());

  yoked->latch.set_value();
  ask_summary(query, "A", 1);  // answered once A's capture and window are collected
  const v1::QueryReply on_a = next_answer(query);
  ASSERT_TRUE(on_a.has_summary()) << on_a.DebugString();
  EXPECT_EQ(on_a.summary().seq(), 2u);
  EXPECT_EQ(on_a.summary().weight(), 9);
  ::kill(::getpid(), SIGTERM);
  ASSERT_EQ(yoked->status.get(), kYokedOk);

  // The oldest snapshot, started at B's window: A at seq 1 (before its window), B at seq 1.
  const std::vector<std::uint64_t> positions = yoked->snapshots.positions();
  ASSERT_GE(positions.size(), 2u);
  const storage::SnapshotContents first = yoked->snapshots.read(positions.back());
  ASSERT_EQ(first.pools.size(), 2u);
  EXPECT_EQ(first.pools[0].pool(), "A");
  EXPECT_EQ(first.pools[0].seq(), 1u);
  EXPECT_EQ(first.pools[0].weight(), 5);
  EXPECT_EQ(first.pools[0].vertices(), 2u);
  EXPECT_TRUE(testing::pool_certified(*restore_checked(first.pools[0])));
  EXPECT_EQ(first.pools[1].pool(), "B");
  EXPECT_EQ(first.pools[1].seq(), 1u);

  yoked.reset();  // the journal unlocked
  // Recovered from the oldest snapshot alone (the newer ones gone) plus the journal after it:
  // A's window is replayed.
  const SnapshotDirectory snapshots(dir.path() / "snapshots", config.snapshots.keep);
  for (std::size_t i = 0; i + 1 < positions.size(); ++i) {
    std::filesystem::remove(snapshots.path_for(positions[i]));  // newest first
  }
  auto log = journal::JournalCommitLog::open(dir.path() / "journal", config.journal);
  RecoveryReport report;
  PoolService restarted(config, recover(config, *log, snapshots, report), *log);
  EXPECT_EQ(report.snapshot_position, positions.back());
  EXPECT_EQ(restarted.progress("A")->seq, 2u);
  EXPECT_EQ(restarted.registry().find("A")->weight(), 9);
  EXPECT_TRUE(testing::pool_certified(*restarted.registry().find("A")));
}

// The local journal behind latches: each of its commit()s numbered `first` to `first + held - 1`
// (from 0) waits on the journal thread until the test opens its latch, and says when it began.
// It counts the loop's drop_before() calls, and those made while a commit ran (the journal
// thread is then the log's only user: there must be none).
class HeldCommitLog : public testing::ForwardingCommitLog {
 public:
  explicit HeldCommitLog(storage::CommitLog& log, std::size_t held = 1, std::size_t first = 0)
      : ForwardingCommitLog(log), first_(first), latches_(held), began_(held) {
    for (std::promise<void>& latch : latches_) opened_.push_back(latch.get_future());
  }

  storage::CommittedWindow commit(std::vector<v1::JournalRecord> window) override {
    committing_ = true;
    if (const std::size_t n = commits_++; n >= first_ && n - first_ < latches_.size()) {
      began_[n - first_].set_value();
      opened_[n - first_].wait();
    }
    storage::CommittedWindow committed = ForwardingCommitLog::commit(std::move(window));
    committing_ = false;
    return committed;
  }
  std::size_t drop_before(storage::Position position) override {
    ++drops;
    if (committing_) ++drops_during_commits;
    return ForwardingCommitLog::drop_before(position);
  }

  // Blocks until commit n (from 0) is held.
  void wait_began(std::size_t n) { began_[n - first_].get_future().wait(); }
  void open(std::size_t n) { latches_[n - first_].set_value(); }

  std::atomic<int> drops{0};
  std::atomic<int> drops_during_commits{0};

 private:
  std::size_t first_;
  std::vector<std::promise<void>> latches_;
  std::vector<std::promise<void>> began_;
  std::vector<std::future<void>> opened_;
  std::size_t commits_ = 0;  // the journal thread's alone
  std::atomic<bool> committing_{false};
};

// A yoked server on its own thread with no pool yet, over `journal` behind a HeldCommitLog
// (`held` commits from number `first` wait for the test) and `snapshots`.
struct HeldCommitDaemon {
  HeldCommitDaemon(const DaemonConfig& config, storage::CommitLog& journal,
                   storage::SnapshotStore& snapshots, std::size_t held = 1, std::size_t first = 0)
      : log(journal, held, first),
        service(config, testing::fresh_state(config), log),
        server(config, service, snapshots),
        status(std::async(std::launch::async, [this] { return server.run(); })) {}

  HeldCommitLog log;
  PoolService service;
  YokedServer server;
  std::future<int> status;  // server.run()'s exit status
};

void ask_health(zmq::socket_t& socket, std::uint64_t id) {
  v1::QueryRequest request;
  request.set_version(1);
  request.set_request_id(id);
  request.mutable_health();
  socket.send(zmq::buffer(request.SerializeAsString()), zmq::send_flags::none);
}

// While a window syncs (its commit held), the loop answers queries and takes the next window's
// batches, checked on top of the syncing one (with max_events 1, it reads no further once the
// next window is full); the acknowledgements come once each is durable, in window order.
void serve_while_a_window_syncs(std::uint64_t max_events) {
  testing::TempDir dir;
  DaemonConfig config = server_config(dir.path());
  config.batching.max_events = max_events;
  auto journal = journal::JournalCommitLog::open(dir.path() / "journal", config.journal);
  SnapshotDirectory snapshots(dir.path() / "snapshots", config.snapshots.keep);
  HeldCommitDaemon yoked(config, *journal, snapshots);
  HeldCommitLog& log = yoked.log;

  zmq::context_t context(1);
  zmq::socket_t ingest = dealer(context, config.endpoints.ingest);
  zmq::socket_t query = dealer(context, config.endpoints.query);
  send_batch(ingest, {wire_add(1), wire_add(2), wire_set(1, 2, 5)}, from_client("a", 1, "A"));
  log.wait_began(0);  // A's first window is on the journal thread, held

  // Vertex 2 is only in the syncing window: the batch is checked on top of it.
  send_batch(ingest, {testing::wire_remove(2)}, from_client("a", 2, "A"));
  send_batch(ingest, {wire_add(7)}, from_client("b", 1, "B"));
  ask_health(query, 9);
  const v1::QueryReply answer = next_answer(query);
  EXPECT_EQ(answer.request_id(), 9u);
  EXPECT_TRUE(answer.has_health()) << answer.DebugString();

  log.open(0);
  const v1::Ack a1 = next_ack(ingest);
  ASSERT_TRUE(a1.has_accepted()) << a1.DebugString();
  EXPECT_EQ(a1.client_batch(), 1u);
  EXPECT_EQ(a1.accepted().seq(), 1u);
  const v1::Ack second = next_ack(ingest);
  const v1::Ack third = next_ack(ingest);
  const v1::Ack& a2 = second.pool() == "A" ? second : third;
  const v1::Ack& b1 = second.pool() == "A" ? third : second;
  ASSERT_TRUE(a2.has_accepted()) << a2.DebugString();
  EXPECT_EQ(a2.accepted().seq(), 2u);
  ASSERT_TRUE(b1.has_accepted()) << b1.DebugString();
  EXPECT_EQ(b1.accepted().seq(), 1u);

  ::kill(::getpid(), SIGTERM);
  EXPECT_EQ(yoked.status.get(), kYokedOk);
  EXPECT_EQ(yoked.service.progress("A")->seq, 2u);
  EXPECT_EQ(yoked.service.registry().find("A")->vertex_count(), 1u);
  EXPECT_TRUE(testing::pool_certified(*yoked.service.registry().find("A")));
  EXPECT_TRUE(testing::pool_certified(*yoked.service.registry().find("B")));
}

TEST(ServerRepairs, TheLoopServesWhileAWindowSyncs) { serve_while_a_window_syncs(10000); }

TEST(ServerRepairs, AFullWindowWaitsUnreadWhileTheOneBeforeSyncs) {
  serve_while_a_window_syncs(1);
}

// The next reply on `socket` within its bound, or nothing (a loop that waits does not answer).
std::optional<zmq::message_t> reply_within_bound(zmq::socket_t& socket) {
  zmq::message_t message;
  if (!socket.recv(message)) return std::nullopt;
  return message;
}

// A message that is no IngestRequest: refused at once, so its answer shows that the loop read
// every ingest message sent before it.
void send_unreadable(zmq::socket_t& ingest) {
  ingest.send(zmq::buffer(std::string_view("\xff\xff\xff")), zmq::send_flags::none);
}

// The daemon part of the test below: A's window held, B's batch joins the next, A's window
// triggers the snapshot, which seals B's (held); a query and C's batch meanwhile; then SIGTERM.
void serve_a_snapshot_waiting_for_a_sync(const DaemonConfig& config, storage::CommitLog& journal,
                                         SnapshotDirectory& snapshots) {
  HeldCommitDaemon yoked(config, journal, snapshots, 2);
  HeldCommitLog& log = yoked.log;

  zmq::context_t context(1);
  zmq::socket_t ingest = dealer(context, config.endpoints.ingest);
  zmq::socket_t query = dealer(context, config.endpoints.query);
  send_batch(ingest, {wire_add(1), wire_add(2), wire_set(1, 2, 5)}, from_client("a", 1, "A"));
  log.wait_began(0);  // A's window syncs, held
  send_batch(ingest, {wire_add(1), wire_add(2), wire_set(1, 2, 7)}, from_client("b", 1, "B"));
  send_unreadable(ingest);
  EXPECT_TRUE(next_ack(ingest).has_rejected());  // B's batch is in the open window
  log.open(0);
  const v1::Ack a1 = next_ack(ingest);  // then A's window triggers a snapshot, which seals B's
  EXPECT_TRUE(a1.has_accepted()) << a1.DebugString();
  log.wait_began(1);  // B's window syncs, held: the snapshot waits for it

  ask_health(query, 9);
  send_batch(ingest, {wire_add(1)}, from_client("c", 1, "C"));
  send_unreadable(ingest);
  const bool answered = reply_within_bound(query).has_value();
  EXPECT_TRUE(answered) << "the loop waited for the sync";
  // (A loop that waits answers nothing before the latch opens: one bound is enough.)
  const bool read = answered && reply_within_bound(ingest).has_value();
  EXPECT_TRUE(read) << "the loop read no batch during the sync";
  EXPECT_TRUE(snapshots.positions().empty());  // the snapshot has not started

  log.open(1);
  std::map<std::string, v1::Ack> acks;  // by pool; the refusal, if not read yet, by ""
  for (int left = read ? 2 : 3; left > 0; --left) {
    v1::Ack ack = next_ack(ingest);
    acks[ack.pool()] = std::move(ack);
  }
  EXPECT_TRUE(acks["B"].has_accepted()) << acks["B"].DebugString();
  EXPECT_TRUE(acks["C"].has_accepted()) << acks["C"].DebugString();
  EXPECT_EQ(log.drops_during_commits, 0);
  ::kill(::getpid(), SIGTERM);
  ASSERT_EQ(yoked.status.get(), kYokedOk);
}

// A snapshot due while a window syncs starts from that sync's completion instead of waiting for
// it on the loop: with the journal's second commit held (B's window, sealed by the snapshot
// that A's window triggered), a query is answered and batches are read meanwhile. The snapshot
// is named by the log's end after B's window (A and B at seq 1); C's batch, which came during
// the sync, is in a later window: the snapshot leaves it out, and recovery from that snapshot
// replays it from the journal.
TEST(ServerRepairs, ASnapshotWaitingForASyncHoldsNeitherQueriesNorBatches) {
  testing::TempDir dir;
  const DaemonConfig config = snapshot_each_window_config(dir.path());
  auto journal = journal::JournalCommitLog::open(dir.path() / "journal", config.journal);
  SnapshotDirectory snapshots(dir.path() / "snapshots", config.snapshots.keep);
  serve_a_snapshot_waiting_for_a_sync(config, *journal, snapshots);

  // The oldest snapshot: A and B at seq 1, not C.
  const std::vector<std::uint64_t> positions = snapshots.positions();
  ASSERT_GE(positions.size(), 2u);
  const storage::SnapshotContents first = snapshots.read(positions.back());
  ASSERT_EQ(first.pools.size(), 2u);
  EXPECT_EQ(first.pools[0].pool(), "A");
  EXPECT_EQ(first.pools[0].seq(), 1u);
  EXPECT_EQ(first.pools[0].weight(), 5);
  EXPECT_EQ(first.pools[1].pool(), "B");
  EXPECT_EQ(first.pools[1].seq(), 1u);
  EXPECT_EQ(first.pools[1].weight(), 7);

  // Recovered from that snapshot alone plus the journal after it: C's window is replayed, and
  // C's client mark with it (its retry is a duplicate).
  for (std::size_t i = 0; i + 1 < positions.size(); ++i) {
    std::filesystem::remove(snapshots.path_for(positions[i]));
  }
  RecoveryReport report;
  PoolService restarted(config, recover(config, *journal, snapshots, report), *journal);
  EXPECT_EQ(report.snapshot_position, positions.back());
  EXPECT_EQ(restarted.progress("A")->seq, 1u);
  EXPECT_EQ(restarted.progress("B")->seq, 1u);
  ASSERT_NE(restarted.progress("C"), nullptr);
  EXPECT_EQ(restarted.progress("C")->seq, 1u);
  EXPECT_EQ(restarted.registry().find("C")->vertex_count(), 1u);
  const std::optional<v1::Ack> retry =
      restarted.offer(1, testing::ingest_message({wire_add(1)}, from_client("c", 1, "C")));
  ASSERT_TRUE(retry.has_value());
  ASSERT_TRUE(retry->has_accepted()) << retry->DebugString();
  EXPECT_TRUE(retry->accepted().duplicate());
  EXPECT_EQ(retry->accepted().seq(), 1u);
}

// A snapshot directory whose first write() waits until the test opens its latch, and says
// when it began and when it returned (the writer thread then wakes the loop).
class HeldSnapshotStore : public storage::SnapshotStore {
 public:
  explicit HeldSnapshotStore(storage::SnapshotStore& inner)
      : inner_(inner), opened_(latch.get_future()) {}

  std::string describe() const override { return inner_.describe(); }
  std::string write(storage::Position position,
                    const std::vector<v1::SnapshotRecord>& pools) override {
    const bool first = writes_++ == 0;
    if (first) {
      began.set_value();
      opened_.wait();
    }
    std::string path = inner_.write(position, pools);
    if (first) returned.set_value();
    return path;
  }
  std::vector<storage::Position> positions() const override { return inner_.positions(); }
  storage::SnapshotContents read(storage::Position position) const override {
    return inner_.read(position);
  }
  std::optional<storage::Position> oldest_needed() const override { return inner_.oldest_needed(); }

  std::promise<void> latch;
  std::promise<void> began;
  std::promise<void> returned;

 private:
  storage::SnapshotStore& inner_;
  std::future<void> opened_;
  int writes_ = 0;  // the writer thread's alone
};

// A background snapshot whose write ends while a window syncs: its log trimming waits for that
// sync's completion (the journal thread is the log's only user meanwhile) instead of holding
// the loop for it, and happens then. With A's snapshot's write held and B's window's commit
// held, the write is let go; once it has returned (and a moment for its wake to reach the
// loop, which a loop that waits for the sync would then do) a query is answered. Then B's
// window commits and the log is trimmed, never during a commit.
TEST(ServerRepairs, AWrittenSnapshotsTrimmingWaitsForTheSyncWithoutHoldingTheLoop) {
  testing::TempDir dir;
  const DaemonConfig config = snapshot_each_window_config(dir.path());
  auto journal = journal::JournalCommitLog::open(dir.path() / "journal", config.journal);
  SnapshotDirectory directory(dir.path() / "snapshots", config.snapshots.keep);
  HeldSnapshotStore snapshots(directory);
  HeldCommitDaemon yoked(config, *journal, snapshots, 1, 1);  // B's window, the second
  HeldCommitLog& log = yoked.log;

  zmq::context_t context(1);
  zmq::socket_t ingest = dealer(context, config.endpoints.ingest);
  zmq::socket_t query = dealer(context, config.endpoints.query);
  send_batch(ingest, {wire_add(1), wire_add(2), wire_set(1, 2, 5)}, from_client("a", 1, "A"));
  EXPECT_TRUE(next_ack(ingest).has_accepted());  // A's window triggers a snapshot
  snapshots.began.get_future().wait();           // whose write is held
  send_batch(ingest, {wire_add(1), wire_add(2), wire_set(1, 2, 7)}, from_client("b", 1, "B"));
  log.wait_began(1);  // B's window syncs, held
  snapshots.latch.set_value();
  snapshots.returned.get_future().wait();
  std::this_thread::sleep_for(std::chrono::milliseconds(100));
  EXPECT_EQ(log.drops, 0);  // not while B's window syncs

  ask_health(query, 9);
  EXPECT_TRUE(reply_within_bound(query).has_value()) << "the loop waited for the sync";

  log.open(1);
  const v1::Ack b1 = next_ack(ingest);
  EXPECT_TRUE(b1.has_accepted()) << b1.DebugString();
  ask_health(query, 10);  // answered after the completion that sent B's ack
  EXPECT_TRUE(reply_within_bound(query).has_value());
  EXPECT_GE(log.drops, 1);  // the first snapshot's trimming, at that completion
  ::kill(::getpid(), SIGTERM);
  ASSERT_EQ(yoked.status.get(), kYokedOk);
  EXPECT_EQ(log.drops_during_commits, 0);
}

// [service] worker_nice reaches the server's repair workers: a task reads its own thread's
// niceness (the threads themselves: worker_niceness_test.cpp).
TEST(ServerRepairs, RepairWorkersRunAtTheConfiguredNiceness) {
  testing::TempDir dir;
  DaemonConfig config = server_config(dir.path());
  config.service.worker_nice = 3;
  auto log = journal::JournalCommitLog::open(dir.path() / "journal", config.journal);
  SnapshotDirectory snapshots(dir.path() / "snapshots", config.snapshots.keep);
  PoolService service(config, testing::fresh_state(config), *log);
  const int base = this_thread_niceness();
  YokedServer server(config, service, snapshots);
  std::promise<int> seen;
  server.repair_threads().run("A", [&seen] { seen.set_value(this_thread_niceness()); });
  EXPECT_EQ(seen.get_future().get(), std::min(base + 3, 19));
  EXPECT_EQ(this_thread_niceness(), base);
}

}  // namespace
}  // namespace yoke::daemon
