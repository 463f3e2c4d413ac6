// The service as an instance of a cluster: which pools it serves (PoolRouting), the refusals
// of batches and queries for the others (NOT_OWNER with the serving instance's endpoints,
// UNKNOWN_POOL), gaining and giving up a pool at run time, and a window whose group the log
// does not accept for one pool (the log's ownership rule: another instance's claim came
// first). The log is the local journal; for the refused group, a CommitLog that passes every
// call to a real journal and marks one chosen pool's groups as not accepted, as a shared log
// reports a group written under an outdated epoch.
#include <gtest/gtest.h>

#include <set>
#include <stdexcept>

#include "daemon/journal/journal_commit_log.h"
#include "daemon/service/pool_routing.h"
#include "daemon/service/query_handler.h"
#include "service_test_util.h"
#include "yoke/v1/query.pb.h"

namespace yoke::daemon {
namespace {

using testing::from_client;
using testing::in_pool;
using testing::PoolView;
using testing::ServiceHarness;
using testing::TempDir;
using testing::view_of;
using testing::wire_set;

// Three instances: east (this one) owns quillory and stands by for harbour; west owns harbour
// and quillory-plain; north owns nothing.
DaemonConfig cluster_config(const std::string& instance = "east") {
  DaemonConfig config = testing::test_config({});
  ClusterSettings& cluster = config.cluster;
  cluster.backend = StorageBackend::jetstream;
  cluster.servers = {"nats://127.0.0.1:4222"};
  cluster.instance = instance;
  cluster.instances["east"] = {"tcp://10.0.0.1:7410", "tcp://10.0.0.1:7412",
                               "tcp://10.0.0.1:7411", {"quillory"}, {"harbour"}};
  cluster.instances["west"] = {"tcp://10.0.0.2:7410", "tcp://10.0.0.2:7412",
                               "tcp://10.0.0.2:7411", {"harbour", "quillory-plain"}, {"quillory"}};
  cluster.instances["north"] = {"ipc:///run/north-in", "ipc:///run/north-q",
                                "ipc:///run/north-pub", {}, {"quillory"}};
  return config;
}

const v1::Error& first_error(const v1::Ack& ack) {
  static const v1::Error none;
  return ack.has_rejected() && ack.rejected().errors_size() > 0 ? ack.rejected().errors(0) : none;
}

TEST(PoolRouting, TheLocalBackendServesEveryPool) {
  const PoolRouting routing;
  EXPECT_TRUE(routing.serves_every_pool());
  EXPECT_EQ(routing.serving("anything"), Serving::here);
  EXPECT_FALSE(routing.refusal("anything", Asked::ingest).has_value());
  EXPECT_TRUE(PoolRouting(DaemonConfig{}.cluster).serves_every_pool());
  PoolRouting changed;
  EXPECT_THROW(changed.serve_nobody("anything"), std::invalid_argument);
}

TEST(PoolRouting, ClusterPoolsAreServedByNobodyUntilTold) {
  PoolRouting routing(cluster_config().cluster);
  EXPECT_FALSE(routing.serves_every_pool());
  EXPECT_EQ(routing.instance(), "east");
  EXPECT_EQ(routing.serving("quillory"), Serving::nobody);
  EXPECT_EQ(routing.serving("harbour"), Serving::nobody);
  EXPECT_EQ(routing.serving("lagoon"), Serving::outside);
  EXPECT_TRUE(routing.served_here().empty());

  const auto outside = routing.refusal("lagoon", Asked::ingest);
  ASSERT_TRUE(outside.has_value());
  EXPECT_EQ(outside->code(), v1::Error::UNKNOWN_POOL);
  EXPECT_EQ(outside->message(), "no instance of the cluster owns pool lagoon");
  EXPECT_FALSE(outside->has_owner());

  const auto nobody = routing.refusal("quillory", Asked::ingest);
  ASSERT_TRUE(nobody.has_value());
  EXPECT_EQ(nobody->code(), v1::Error::NOT_OWNER);
  EXPECT_EQ(nobody->message(),
            "no instance serves pool quillory right now (a takeover is under way): retry shortly");
  EXPECT_FALSE(nobody->has_owner());

  routing.serve_here("quillory");
  routing.serve_elsewhere("harbour", "west");
  EXPECT_EQ(routing.serving("quillory"), Serving::here);
  EXPECT_FALSE(routing.refusal("quillory", Asked::query).has_value());
  EXPECT_EQ(routing.served_here(), std::vector<std::string>{"quillory"});
  EXPECT_EQ(routing.serving("harbour"), Serving::elsewhere);
  EXPECT_EQ(routing.serving_instance("harbour"), "west");
  EXPECT_EQ(routing.serving_instance("quillory"), std::nullopt);

  const auto ingest = routing.refusal("harbour", Asked::ingest);
  ASSERT_TRUE(ingest.has_value());
  EXPECT_EQ(ingest->code(), v1::Error::NOT_OWNER);
  EXPECT_EQ(ingest->message(),
            "pool harbour is served by instance west at tcp://10.0.0.2:7410, not here: send it "
            "there");
  EXPECT_EQ(ingest->owner().instance(), "west");
  EXPECT_EQ(ingest->owner().ingest(), "tcp://10.0.0.2:7410");
  EXPECT_EQ(ingest->owner().query(), "tcp://10.0.0.2:7412");
  EXPECT_EQ(ingest->owner().publish(), "tcp://10.0.0.2:7411");
  EXPECT_EQ(routing.refusal("harbour", Asked::query)->message(),
            "pool harbour is served by instance west at tcp://10.0.0.2:7412, not here: send it "
            "there");

  // A standby that took a pool over serves it, whoever owns it in the config.
  routing.serve_elsewhere("quillory", "north");
  EXPECT_EQ(routing.refusal("quillory", Asked::ingest)->owner().ingest(), "ipc:///run/north-in");
  routing.serve_nobody("harbour");
  EXPECT_EQ(routing.serving("harbour"), Serving::nobody);

  EXPECT_THROW(routing.serve_here("lagoon"), std::invalid_argument);
  EXPECT_THROW(routing.serve_elsewhere("harbour", "south"), std::invalid_argument);
  EXPECT_THROW(routing.serve_elsewhere("harbour", "east"), std::invalid_argument);
  EXPECT_EQ(routing.owner("west")->query(), "tcp://10.0.0.2:7412");
  EXPECT_FALSE(routing.owner("south").has_value());
}

class ClusterServiceTest : public ::testing::Test {
 protected:
  ClusterServiceTest() : harness_(cluster_config()) {}

  PoolService& service() { return harness_.service(); }
  std::optional<v1::Ack> offer(Ticket ticket, const std::vector<v1::Event>& events,
                               const testing::BatchHeader& header) {
    return service().offer(ticket, testing::ingest_message(events, header));
  }

  ServiceHarness harness_;
};

TEST_F(ClusterServiceTest, BatchesForPoolsNotServedHereAreRefusedAndChangeNothing) {
  const std::uint64_t position = service().next_journal_position();
  // Nothing adopted yet: even the pool east owns is not served until its claim holds.
  auto ack = offer(1, {wire_set(1, 2, 5)}, from_client("van-7", 1, "quillory"));
  ASSERT_TRUE(ack.has_value());
  EXPECT_EQ(first_error(*ack).code(), v1::Error::NOT_OWNER);
  EXPECT_FALSE(first_error(*ack).has_owner());
  EXPECT_EQ(ack->pool(), "quillory");
  EXPECT_EQ(ack->client_id(), "van-7");

  ack = offer(2, {wire_set(1, 2, 5)}, in_pool("lagoon"));
  ASSERT_TRUE(ack.has_value());
  EXPECT_EQ(first_error(*ack).code(), v1::Error::UNKNOWN_POOL);
  EXPECT_EQ(first_error(*ack).message(), "no instance of the cluster owns pool lagoon");
  ack = offer(3, {wire_set(1, 2, 5)}, {});  // "default": no instance owns it either
  EXPECT_EQ(first_error(*ack).code(), v1::Error::UNKNOWN_POOL);

  std::vector<std::pair<Ticket, v1::Ack>> replies = service().serve_elsewhere("harbour", "west");
  EXPECT_TRUE(replies.empty());
  ack = offer(4, {wire_set(1, 2, 5)}, from_client("van-7", 3, "harbour"));
  ASSERT_TRUE(ack.has_value());
  EXPECT_EQ(first_error(*ack).code(), v1::Error::NOT_OWNER);
  EXPECT_EQ(first_error(*ack).owner().instance(), "west");
  EXPECT_EQ(first_error(*ack).owner().ingest(), "tcp://10.0.0.2:7410");

  // Nothing moved: no pool, no retry mark, no window, nothing in the log.
  EXPECT_EQ(service().registry().size(), 0u);
  EXPECT_EQ(service().ledger().size(), 0u);
  EXPECT_TRUE(service().window_empty());
  EXPECT_EQ(service().next_journal_position(), position);
  EXPECT_EQ(service().refusals().at(v1::Error::NOT_OWNER), 2u);
  EXPECT_EQ(service().refusals().at(v1::Error::UNKNOWN_POOL), 2u);
}

// Retiring a pool is a local-backend operation: a shared log keeps a pool's claims and
// subjects for good, so a daemon of a cluster refuses it clearly, even for a pool it serves.
TEST_F(ClusterServiceTest, RetirementIsRefusedAndChangesNothing) {
  service().adopt_pool("quillory", PoolState{});
  EXPECT_FALSE(offer(1, {wire_set(1, 2, 5)}, from_client("van-7", 1, "quillory")).has_value());
  harness_.close();
  const PoolView before = view_of(service(), "quillory");
  const std::uint64_t position = service().next_journal_position();
  for (const std::string pool : {"quillory", "harbour", "lagoon"}) {
    const auto ack = service().offer(2, testing::retire_message(pool, 0, "desk", 1));
    ASSERT_TRUE(ack.has_value());
    EXPECT_EQ(first_error(*ack).code(), v1::Error::RETIRE_NOT_SUPPORTED) << pool;
  }
  EXPECT_TRUE(service().window_empty());
  harness_.close();
  EXPECT_EQ(service().next_journal_position(), position);
  EXPECT_EQ(view_of(service(), "quillory"), before);
}

TEST_F(ClusterServiceTest, AnAdoptedPoolIsServedAndAGivenUpOneRefusesItsOpenWindow) {
  service().adopt_pool("quillory", PoolState{});  // no history: created by its first batch
  EXPECT_EQ(service().routing().served_here(), std::vector<std::string>{"quillory"});
  EXPECT_FALSE(offer(1, {wire_set(1, 2, 5)}, from_client("van-7", 1, "quillory")).has_value());
  testing::WindowResult window = harness_.close();
  ASSERT_EQ(window.acks.size(), 1u);
  EXPECT_TRUE(window.acks[0].second.has_accepted());
  EXPECT_EQ(view_of(service(), "quillory").weight, 5);

  // Two batches and a retry in the open window when the pool goes to north.
  EXPECT_FALSE(offer(2, {wire_set(3, 4, 7)}, from_client("van-7", 2, "quillory")).has_value());
  EXPECT_FALSE(offer(3, {wire_set(5, 6, 1)}, in_pool("quillory")).has_value());
  EXPECT_FALSE(offer(4, {wire_set(3, 4, 7)}, from_client("van-7", 2, "quillory")).has_value());
  EXPECT_THROW(service().adopt_pool("quillory", PoolState{}), std::logic_error);
  const std::uint64_t position = service().next_journal_position();
  std::vector<std::pair<Ticket, v1::Ack>> replies = service().serve_elsewhere("quillory", "north");
  ASSERT_EQ(replies.size(), 3u);
  std::set<Ticket> tickets;
  for (const auto& [ticket, ack] : replies) {
    tickets.insert(ticket);
    EXPECT_EQ(first_error(ack).code(), v1::Error::NOT_OWNER) << ack.ShortDebugString();
    EXPECT_EQ(first_error(ack).owner().instance(), "north");
    EXPECT_EQ(ack.pool(), "quillory");
  }
  EXPECT_EQ(tickets, (std::set<Ticket>{2, 3, 4}));
  EXPECT_TRUE(service().window_empty());
  EXPECT_EQ(service().window_events(), 0u);
  EXPECT_EQ(service().registry().find("quillory"), nullptr);
  EXPECT_EQ(service().progress("quillory"), nullptr);
  EXPECT_EQ(service().ledger().size(), 0u);
  window = harness_.close();  // nothing left to store
  EXPECT_TRUE(window.acks.empty());
  EXPECT_TRUE(window.diffs.empty());
  EXPECT_EQ(service().next_journal_position(), position);
  EXPECT_EQ(first_error(*offer(5, {wire_set(1, 2, 5)}, in_pool("quillory"))).owner().instance(),
            "north");
}

TEST_F(ClusterServiceTest, GivingUpAPoolBetweenSealAndApplyIsRefused) {
  service().adopt_pool("quillory", PoolState{});
  EXPECT_FALSE(offer(1, {wire_set(1, 2, 5)}, in_pool("quillory")).has_value());
  service().seal();
  EXPECT_THROW(service().serve_elsewhere("quillory", "west"), std::logic_error);
  service().apply();
  EXPECT_TRUE(service().serve_elsewhere("quillory", "west").empty());
  EXPECT_THROW(service().serve_elsewhere("lagoon", "west"), std::invalid_argument);
}

TEST_F(ClusterServiceTest, QueriesForPoolsNotServedHereAreRefused) {
  service().adopt_pool("quillory", PoolState{});
  service().serve_elsewhere("harbour", "west");
  EXPECT_FALSE(offer(1, {wire_set(1, 2, 5)}, in_pool("quillory")).has_value());
  harness_.close();
  int snapshots = 0;
  QueryHandler handler(
      service(), 4096,
      [&snapshots](bool, const std::string&) {
        ++snapshots;
        return v1::SnapshotTaken{};
      },
      [] { return v1::Health{}; });
  const auto ask = [&handler](const std::string& pool, bool snapshot = false) {
    v1::QueryRequest request;
    request.set_version(v1::PROTOCOL_VERSION_1);
    request.set_pool(pool);
    if (snapshot) {
      request.mutable_snapshot();
    } else {
      request.mutable_summary();
    }
    v1::QueryReply reply;
    EXPECT_TRUE(reply.ParseFromString(handler.handle(request.SerializeAsString())));
    return reply;
  };
  v1::QueryReply reply = ask("quillory");
  ASSERT_TRUE(reply.has_summary()) << reply.ShortDebugString();
  EXPECT_EQ(reply.summary().weight(), 5);

  reply = ask("harbour");
  ASSERT_TRUE(reply.has_error());
  EXPECT_EQ(reply.pool(), "harbour");
  EXPECT_EQ(reply.error().code(), v1::Error::NOT_OWNER);
  EXPECT_EQ(reply.error().message(),
            "pool harbour is served by instance west at tcp://10.0.0.2:7412, not here: send it "
            "there");
  EXPECT_EQ(reply.error().owner().query(), "tcp://10.0.0.2:7412");

  reply = ask("quillory-plain");
  EXPECT_EQ(reply.error().code(), v1::Error::NOT_OWNER);
  EXPECT_FALSE(reply.error().has_owner());
  reply = ask("lagoon");
  EXPECT_EQ(reply.error().code(), v1::Error::UNKNOWN_POOL);
  EXPECT_EQ(reply.error().message(), "no instance of the cluster owns pool lagoon");
  reply = ask("harbour", true);  // a snapshot of one pool served elsewhere
  EXPECT_EQ(reply.error().code(), v1::Error::NOT_OWNER);
  EXPECT_EQ(snapshots, 0);
}

// Passes everything to a real journal; the groups of `refused_pool` come back not accepted.
class ClaimLostLog : public testing::ForwardingCommitLog {
 public:
  ClaimLostLog(storage::CommitLog& inner, std::string refused_pool)
      : ForwardingCommitLog(inner), refused_pool_(std::move(refused_pool)) {}

  storage::CommittedWindow commit(std::vector<v1::JournalRecord> window) override {
    storage::CommittedWindow committed = ForwardingCommitLog::commit(std::move(window));
    for (storage::CommittedGroup& group : committed.groups) {
      if (group.pool == refused_pool_) group.accepted = false;
    }
    last_ = committed;
    return committed;
  }

  void refuse(std::string pool) { refused_pool_ = std::move(pool); }
  const storage::CommittedWindow& last() const { return last_; }

 private:
  std::string refused_pool_;
  storage::CommittedWindow last_;
};

TEST(ClusterServiceSeal, APoolWhoseGroupTheLogRefusedIsLostAndNothingOfItIsApplied) {
  TempDir dir;
  const DaemonConfig config = cluster_config("west");
  const auto journal = journal::JournalCommitLog::open(dir.path(), config.journal);
  ClaimLostLog log(*journal, "");
  PoolService service(config, testing::fresh_state(config), log);
  service.adopt_pool("harbour", PoolState{});
  service.adopt_pool("quillory-plain", PoolState{});

  const auto offer = [&service](Ticket ticket, const std::vector<v1::Event>& events,
                                const testing::BatchHeader& header) {
    return service.offer(ticket, testing::ingest_message(events, header));
  };
  EXPECT_FALSE(offer(1, {wire_set(1, 2, 5)}, from_client("tug-1", 1, "harbour")));
  EXPECT_FALSE(offer(2, {wire_set(1, 2, 3)}, from_client("tug-1", 1, "quillory-plain")));
  std::vector<std::string> lost;
  testing::WindowResult first{service.seal(&lost), service.apply()};
  EXPECT_TRUE(lost.empty());
  EXPECT_EQ(first.acks.size(), 2u);
  const PoolView plain_before = view_of(service, "quillory-plain");
  ASSERT_EQ(log.last().groups.size(), 2u);
  EXPECT_EQ(service.progress("harbour")->last_position, log.last().groups[0].position);

  // harbour's next window goes to the log after another instance's claim: refused.
  log.refuse("harbour");
  EXPECT_FALSE(offer(3, {wire_set(3, 4, 9)}, from_client("tug-1", 2, "harbour")));
  EXPECT_FALSE(offer(4, {wire_set(5, 6, 9)}, in_pool("harbour")));
  EXPECT_FALSE(offer(5, {wire_set(1, 2, 4)}, from_client("tug-1", 2, "quillory-plain")));
  EXPECT_FALSE(offer(6, {wire_set(3, 4, 9)}, from_client("tug-1", 2, "harbour")));  // a retry
  const std::vector<std::pair<Ticket, v1::Ack>> acks = service.seal(&lost);
  const std::vector<v1::Diff> diffs = service.apply();
  EXPECT_EQ(lost, std::vector<std::string>{"harbour"});

  std::map<Ticket, v1::Ack> by_ticket(acks.begin(), acks.end());
  ASSERT_EQ(by_ticket.size(), 4u);
  for (const Ticket ticket : {3, 4, 6}) {
    const v1::Error& error = first_error(by_ticket[ticket]);
    EXPECT_EQ(error.code(), v1::Error::NOT_OWNER) << by_ticket[ticket].ShortDebugString();
    EXPECT_FALSE(error.has_owner());  // nobody known to serve it yet
    EXPECT_EQ(by_ticket[ticket].pool(), "harbour");
  }
  ASSERT_TRUE(by_ticket[5].has_accepted()) << by_ticket[5].ShortDebugString();
  EXPECT_EQ(by_ticket[5].accepted().seq(), 2u);

  // Only the accepted pool was applied and published; the lost one's state is gone.
  ASSERT_EQ(diffs.size(), 1u);
  EXPECT_EQ(diffs[0].pool(), "quillory-plain");
  EXPECT_NE(view_of(service, "quillory-plain"), plain_before);
  EXPECT_EQ(service.progress("quillory-plain")->last_position, log.last().groups[1].position);
  EXPECT_EQ(service.registry().find("harbour"), nullptr);
  EXPECT_EQ(service.progress("harbour"), nullptr);
  EXPECT_FALSE(service.ledger().last("harbour", "tug-1").has_value());
  EXPECT_EQ(service.ledger().last("quillory-plain", "tug-1")->seq, 2u);
  EXPECT_EQ(service.routing().serving("harbour"), Serving::nobody);
  EXPECT_EQ(service.routing().served_here(), std::vector<std::string>{"quillory-plain"});
  EXPECT_EQ(first_error(*offer(7, {wire_set(1, 2, 5)}, in_pool("harbour"))).code(),
            v1::Error::NOT_OWNER);
  EXPECT_TRUE(testing::pool_certified(*service.registry().find("quillory-plain")));
}

}  // namespace
}  // namespace yoke::daemon
