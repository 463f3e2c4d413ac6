// A SIGKILLed stream leader: publishing stalls for the election, then succeeds; afterwards
// every acknowledged message is in the log once, at its acknowledged sequence, in order, and
// every node holds the same log (each read while it leads the stream).
#include <gtest/gtest.h>

#include <chrono>
#include <condition_variable>
#include <cstdio>
#include <map>
#include <mutex>
#include <thread>

#include "daemon/cluster/cluster_error.h"
#include "daemon/cluster/leader_stepdown.h"
#include "daemon/cluster/log_publisher.h"
#include "daemon/cluster/message_lookup.h"
#include "daemon/cluster/stream_status.h"
#include "tests/cluster/cluster_test_util.h"
#include "tools/nats_cluster/local_nats_cluster.h"

namespace yoke::cluster {
namespace {

using std::chrono::milliseconds;
using testing::connection_to;
using testing::log_stream;
using testing::read_to_end;
using Clock = std::chrono::steady_clock;

constexpr const char* failover_stream = "FAILOVER";
constexpr const char* failover_subject = "failover.pool";

struct Acknowledged {
  std::uint64_t sequence;
  std::string data;
};

// Publishes until acknowledged, each attempt with its own payload (no message ids on 2.9: a
// timed-out attempt may be in the log, so it must not look like the retry). Returns the
// acknowledgement; counts the attempts that failed.
Acknowledged publish_until_acknowledged(NatsConnection& connection, int entry, int& failed,
                                        Clock::duration limit,
                                        const std::string& subject = failover_subject) {
  const auto deadline = Clock::now() + limit;
  for (int attempt = 0;; ++attempt) {
    const std::string data = "entry " + std::to_string(entry) + " attempt " +
                             std::to_string(attempt);
    try {
      const std::uint64_t sequence = publish_and_wait(
          connection, subject, {{"yoke-entry", std::to_string(entry)}}, data, milliseconds(1000));
      return {sequence, data};
    } catch (const ClusterError& error) {
      ++failed;
      const bool transient = error.kind() == ClusterErrorKind::timeout ||
                             error.kind() == ClusterErrorKind::no_responders ||
                             error.kind() == ClusterErrorKind::other;
      if (!transient || Clock::now() > deadline) throw;
      std::this_thread::sleep_for(milliseconds(20));
    }
  }
}

// One node's copy of the log: the node is made the stream's leader (step-downs until the
// election picks it), then every message is read by sequence, which the leader answers from
// its own store.
std::vector<LogMessage> node_copy(nats_cluster::LocalNatsCluster& cluster,
                                  NatsConnection& connection, int node,
                                  std::uint64_t last_sequence) {
  const auto deadline = Clock::now() + std::chrono::seconds(60);
  while (cluster.stream_leader(failover_stream, milliseconds(20000)) != node) {
    if (Clock::now() > deadline) {
      ADD_FAILURE() << cluster.server_name(node) << " never became the leader";
      return {};
    }
    step_down_leader(connection, failover_stream);
    std::this_thread::sleep_for(milliseconds(50));
  }
  std::vector<LogMessage> copy;
  for (std::uint64_t sequence = 1; sequence <= last_sequence; ++sequence) {
    if (auto message = message_at(connection, failover_stream, sequence)) {
      copy.push_back(std::move(*message));
    }
  }
  // Still the leader: the copy is this node's.
  EXPECT_EQ(cluster.stream_leader(failover_stream, milliseconds(20000)), node);
  return copy;
}

TEST(LeaderFailover, AcknowledgedMessagesSurviveALeaderKillOnEveryNode) {
  nats_cluster::LocalNatsCluster cluster;
  NatsConnection connection(connection_to(cluster.client_urls()));
  ensure_stream(connection, log_stream(failover_stream, {"failover.>"}));

  std::vector<Acknowledged> acknowledged;
  int failed = 0;
  int entry = 0;
  for (; entry < 40; ++entry) {
    acknowledged.push_back(
        publish_until_acknowledged(connection, entry, failed, std::chrono::seconds(10)));
  }
  ASSERT_EQ(failed, 0) << "publishes failed on a healthy cluster";
  // A reader that follows the log across the kill (as a standby will).
  LogReader follower(connection, {failover_stream, failover_subject, 1});
  std::vector<LogMessage> followed;
  while (followed.size() < acknowledged.size()) {
    auto message = follower.next(milliseconds(5000));
    ASSERT_TRUE(message.has_value()) << "the reader stalled on a healthy cluster";
    followed.push_back(std::move(*message));
  }

  const int leader = cluster.stream_leader(failover_stream, milliseconds(10000));
  const auto killed_at = Clock::now();
  cluster.kill(leader);
  acknowledged.push_back(
      publish_until_acknowledged(connection, entry++, failed, std::chrono::seconds(40)));
  const double stall = std::chrono::duration<double>(Clock::now() - killed_at).count();
  std::printf("[ measure  ] publish stall after SIGKILL of stream leader %s: %.2f s, "
              "%d failed attempts\n",
              cluster.server_name(leader).c_str(), stall, failed);
  const int new_leader = cluster.stream_leader(failover_stream, milliseconds(20000));
  EXPECT_NE(new_leader, leader);
  for (int more = 0; more < 40; ++more, ++entry) {
    acknowledged.push_back(
        publish_until_acknowledged(connection, entry, failed, std::chrono::seconds(20)));
  }

  // Acknowledged sequences rise: the log's order is the acknowledgement order.
  for (std::size_t k = 1; k < acknowledged.size(); ++k) {
    EXPECT_LT(acknowledged[k - 1].sequence, acknowledged[k].sequence);
  }

  // The killed node comes back and catches up.
  cluster.restart(leader);
  const std::uint64_t last = stream_status(connection, failover_stream).last_sequence;
  EXPECT_GE(last, acknowledged.back().sequence);
  const auto catch_up_deadline = Clock::now() + std::chrono::seconds(30);
  for (int node = 0; node < cluster.size(); ++node) {
    for (;;) {
      const auto view = cluster.stream_view(node, failover_stream);
      if (view && view->last_sequence == last) break;
      ASSERT_LT(Clock::now(), catch_up_deadline)
          << cluster.server_name(node) << " did not catch up to " << last;
      std::this_thread::sleep_for(milliseconds(50));
    }
  }

  // The leader's log, through an ordered consumer: every acknowledged message once, at its
  // sequence, in order; nothing else but failed attempts.
  const std::vector<LogMessage> log = read_to_end(connection, failover_stream, failover_subject);
  std::map<std::string, int> copies;
  for (const LogMessage& message : log) ++copies[message.data];
  std::size_t next = 0;
  for (const LogMessage& message : log) {
    if (next < acknowledged.size() && message.sequence == acknowledged[next].sequence) {
      EXPECT_EQ(message.data, acknowledged[next].data);
      ++next;
    } else {
      EXPECT_EQ(copies[message.data], 1) << "a failed attempt stored twice: " << message.data;
    }
  }
  EXPECT_EQ(next, acknowledged.size()) << "an acknowledged message is missing";
  for (const Acknowledged& ack : acknowledged) EXPECT_EQ(copies[ack.data], 1) << ack.data;
  ASSERT_FALSE(log.empty());
  EXPECT_EQ(log.back().sequence, last);

  // The reader that was open across the kill: the rest of the log, once, in order (libnats
  // recreates its consumer when the server holding it died).
  const auto follow_deadline = Clock::now() + std::chrono::seconds(60);
  while (followed.empty() || followed.back().sequence < last) {
    ASSERT_LT(Clock::now(), follow_deadline) << "the reader never caught up";
    if (auto message = follower.next(milliseconds(1000))) followed.push_back(std::move(*message));
  }
  ASSERT_EQ(followed.size(), log.size());
  for (std::size_t k = 0; k < log.size(); ++k) {
    EXPECT_EQ(followed[k].sequence, log[k].sequence);
    EXPECT_EQ(followed[k].data, log[k].data);
  }

  // Every node's own copy, read while that node leads, equals the log.
  for (int node = 0; node < cluster.size(); ++node) {
    const std::vector<LogMessage> copy = node_copy(cluster, connection, node, last);
    ASSERT_EQ(copy.size(), log.size()) << "on " << cluster.server_name(node);
    for (std::size_t k = 0; k < log.size(); ++k) {
      EXPECT_EQ(copy[k].sequence, log[k].sequence) << cluster.server_name(node);
      EXPECT_EQ(copy[k].subject, log[k].subject) << cluster.server_name(node);
      EXPECT_EQ(copy[k].data, log[k].data) << cluster.server_name(node);
      EXPECT_EQ(copy[k].headers, log[k].headers) << cluster.server_name(node);
    }
  }
}

}  // namespace
}  // namespace yoke::cluster

namespace yoke::cluster {
namespace {

// The server a connection talks to dies: libnats reconnects to another one of the list, says
// so through on_event (on its own thread), and publishing goes on.
TEST(LeaderFailover, AConnectionMovesToAnotherServerWhenItsServerDies) {
  nats_cluster::LocalNatsCluster cluster;
  std::mutex mutex;
  std::condition_variable changed;
  std::vector<ConnectionEvent> events;
  ConnectionSettings settings = connection_to(cluster.client_urls());
  settings.on_event = [&](const ConnectionEvent& event) {
    std::lock_guard lock(mutex);
    events.push_back(event);
    changed.notify_all();
  };
  NatsConnection connection(settings);
  ensure_stream(connection, log_stream("MOVING", {"moving.>"}));
  publish_and_wait(connection, "moving.a", {}, "before", milliseconds(5000));
  // The list's order is kept: the first server is the one in use.
  ASSERT_EQ(connection.connected_url(), cluster.client_url(0));

  cluster.kill(0);
  {
    std::unique_lock lock(mutex);
    ASSERT_TRUE(changed.wait_for(lock, std::chrono::seconds(20), [&] {
      return events.size() >= 2;
    })) << "no disconnected and reconnected events";
    EXPECT_EQ(events[0].kind, ConnectionEventKind::disconnected);
    EXPECT_EQ(events[1].kind, ConnectionEventKind::reconnected);
    EXPECT_NE(events[1].detail, cluster.client_url(0));
  }
  EXPECT_TRUE(connection.is_connected());
  EXPECT_NE(connection.connected_url(), cluster.client_url(0));
  int failed = 0;
  const Acknowledged after =
      publish_until_acknowledged(connection, 1, failed, std::chrono::seconds(40), "moving.a");
  // Attempts that timed out may be in the log before it; none can follow it.
  EXPECT_GE(after.sequence, 2u) << "failed attempts: " << failed;
  EXPECT_EQ(stream_status(connection, "MOVING").last_sequence, after.sequence);
}

// One publish while the stream has no leader (its leader SIGKILLed, the election under way):
// nobody takes the subject, and publish_and_wait sends the message again until the new leader
// stores it, within its timeout, instead of failing at once. A message nobody took was not
// stored, so exactly one copy is in the log.
TEST(LeaderFailover, APublishDuringTheElectionWaitsForTheNewLeader) {
  nats_cluster::LocalNatsCluster cluster;
  {
    NatsConnection setup(connection_to(cluster.client_urls()));
    ensure_stream(setup, log_stream("ELECTION", {"election.>"}));
    publish_and_wait(setup, "election.a", {}, "before", milliseconds(5000));
  }
  const int leader = cluster.stream_leader("ELECTION", milliseconds(10000));
  const int survivor = (leader + 1) % cluster.size();
  // Connected to a node that lives on, so only the election is in the way.
  NatsConnection connection(connection_to({cluster.client_url(survivor)}));
  cluster.kill(leader);
  std::this_thread::sleep_for(milliseconds(300));  // the dead leader's routes are gone
  const auto started = Clock::now();
  const std::uint64_t sequence =
      publish_and_wait(connection, "election.a", {}, "during", milliseconds(30000));
  std::printf("[ measure  ] one publish across the election of a new stream leader: %.2f s\n",
              std::chrono::duration<double>(Clock::now() - started).count());
  EXPECT_EQ(sequence, 2u);
  EXPECT_NE(cluster.stream_leader("ELECTION", milliseconds(20000)), leader);
  const StreamStatus status = stream_status(connection, "ELECTION");
  EXPECT_EQ(status.messages, 2u);
  EXPECT_EQ(status.last_sequence, 2u);
}

}  // namespace
}  // namespace yoke::cluster
