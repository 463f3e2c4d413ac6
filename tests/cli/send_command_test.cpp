// `yoke send` end to end against a scripted ingest peer (fake_daemon.h) on ipc:// in a temp
// dir. The peer keeps the daemon's retry ledger in small (EventBatch in events.proto: an applied
// number is a duplicate with its own seq, a lower one never applied is BATCH_SKIPPED,
// after_batch must name the last applied) and can be
// told to lose a request, lose a reply, or refuse a batch.
#include <gtest/gtest.h>

#include <chrono>
#include <functional>
#include <map>
#include <optional>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "fake_daemon.h"
#include "run_yoke.h"
#include "yoke/v1/ingest.pb.h"

namespace yoke::cli::testing {
namespace {

using yoke::v1::Error;
using yoke::v1::EventBatch;

// Three batches: lines 2-4, 5-7, and line 8 (committed by the end of the file).
constexpr const char* kScript =
    "# three batches\n"
    "set 1 2 5\n"
    "set 2 3 -4\n"
    "commit\n"
    "add 7\n"
    "unset 1 2\n"
    "commit\n"
    "remove 3\n";

// What the peer does with one arrival of a batch.
struct Fault {
  // refuse_unaddressed: a refusal that names no batch, as for a request the daemon could not
  // read or refused unread while shutting down.
  enum Kind { none, lose_request, lose_reply, refuse, refuse_unaddressed } kind = none;
  Error error;  // refuse, refuse_unaddressed
};

// `fault(batch, copy)`: the fault for the copy-th arrival (from 0) of the batch-th batch.
using FaultPlan = std::function<Fault(std::size_t batch, int copy)>;

Fault no_fault(std::size_t, int) { return {}; }

Fault refusal(Error::Code code, const std::string& message, std::optional<unsigned> index = {}) {
  Fault fault{Fault::refuse, {}};
  fault.error.set_code(code);
  fault.error.set_message(message);
  if (index) fault.error.set_event_index(*index);
  return fault;
}

// The ingest side of the daemon for one client in one pool.
class IngestModel {
 public:
  explicit IngestModel(FaultPlan plan) : plan_(std::move(plan)) {}

  std::optional<std::string> answer(const std::string& bytes) {
    yoke::v1::IngestRequest request;
    EXPECT_TRUE(request.ParseFromString(bytes));
    const EventBatch& batch = request.batch();
    if (first_number_ == 0) first_number_ = batch.client_batch();
    const auto index = static_cast<std::size_t>(batch.client_batch() - first_number_);
    const Fault fault = plan_(index, copies_[batch.client_batch()]++);
    if (fault.kind == Fault::lose_request) return std::nullopt;

    yoke::v1::IngestReply reply;
    reply.set_version(yoke::v1::PROTOCOL_VERSION_1);
    yoke::v1::Ack& ack = *reply.mutable_ack();
    if (fault.kind == Fault::refuse_unaddressed) {
      *ack.mutable_rejected()->add_errors() = fault.error;
      return reply.SerializeAsString();
    }
    ack.set_client_id(batch.client_id());
    ack.set_client_batch(batch.client_batch());
    ack.set_pool(batch.pool());
    if (fault.kind == Fault::refuse) {
      *ack.mutable_rejected()->add_errors() = fault.error;
    } else if (const auto applied = seqs_.find(batch.client_batch()); applied != seqs_.end()) {
      ack.mutable_accepted()->set_seq(applied->second);
      ack.mutable_accepted()->set_duplicate(true);
    } else if (batch.client_batch() <= last_batch_) {
      *ack.mutable_rejected()->add_errors() =
          refusal(Error::BATCH_SKIPPED, "the client went past this batch").error;
    } else if (batch.after_batch() != 0 && batch.after_batch() != last_batch_) {
      *ack.mutable_rejected()->add_errors() =
          refusal(Error::OUT_OF_ORDER, "batch does not follow the last applied").error;
    } else {
      last_batch_ = batch.client_batch();
      ack.mutable_accepted()->set_seq(++seq_);
      seqs_[last_batch_] = seq_;
    }
    if (fault.kind == Fault::lose_reply) return std::nullopt;
    return reply.SerializeAsString();
  }

 private:
  FaultPlan plan_;
  std::uint64_t first_number_ = 0;
  std::map<std::uint64_t, int> copies_;
  std::uint64_t last_batch_ = 0;
  std::uint64_t seq_ = 0;
  std::map<std::uint64_t, std::uint64_t> seqs_;  // every batch applied -> its seq
};

struct SendRun {
  RunResult result;
  std::vector<EventBatch> arrivals;  // every copy the peer received, in order
  std::chrono::milliseconds elapsed{0};
};

SendRun send_script(const std::string& script, FaultPlan plan,
                    const std::vector<std::string>& extra = {}) {
  TempDir dir;
  const std::string endpoint = "ipc://" + dir.file("ingest");
  IngestModel model(std::move(plan));
  FakeRouter peer(endpoint, [&model](const std::string& bytes) { return model.answer(bytes); });
  std::vector<std::string> args = {"send", dir.write("shift.events", script), "--ingest",
                                   endpoint};
  args.insert(args.end(), extra.begin(), extra.end());
  SendRun run;
  const auto start = std::chrono::steady_clock::now();
  run.result = run_yoke(dir, args);
  run.elapsed = std::chrono::duration_cast<std::chrono::milliseconds>(
      std::chrono::steady_clock::now() - start);
  for (const std::string& bytes : peer.requests()) {
    yoke::v1::IngestRequest request;
    EXPECT_TRUE(request.ParseFromString(bytes));
    run.arrivals.push_back(request.batch());
  }
  // Errors name the script by its path; tests compare against a stable name.
  const std::string path = dir.file("shift.events");
  for (std::size_t at; (at = run.result.err.find(path)) != std::string::npos;) {
    run.result.err.replace(at, path.size(), "SCRIPT");
  }
  return run;
}

// The batch numbers of the arrivals, relative to the first one's.
std::vector<std::uint64_t> arrival_order(const SendRun& run) {
  std::vector<std::uint64_t> order;
  for (const EventBatch& batch : run.arrivals) {
    order.push_back(batch.client_batch() - run.arrivals.front().client_batch());
  }
  return order;
}

nlohmann::json output(const SendRun& run) { return nlohmann::json::parse(run.result.out); }

TEST(SendCommand, SendsOneBatchPerCommitAndPrintsTheSeqs) {
  const SendRun run = send_script(kScript, no_fault);
  ASSERT_EQ(run.result.exit_code, 0) << run.result.err;
  EXPECT_EQ(run.result.out,
            "{\"pool\":\"default\",\"batches\":3,\"events\":5,\"first_seq\":1,\"last_seq\":3,"
            "\"duplicates\":0}\n");
  EXPECT_EQ(run.result.err, "");
  ASSERT_EQ(run.arrivals.size(), 3u);

  // Numbers start at the Unix time in microseconds (checked to within a day) and chain.
  const std::uint64_t first = run.arrivals[0].client_batch();
  const auto now_us = static_cast<std::uint64_t>(
      std::chrono::duration_cast<std::chrono::microseconds>(
          std::chrono::system_clock::now().time_since_epoch())
          .count());
  EXPECT_LT(now_us - first, std::uint64_t{86400} * 1000000);
  for (std::size_t i = 0; i < 3; ++i) {
    EXPECT_EQ(run.arrivals[i].client_batch(), first + i);
    EXPECT_EQ(run.arrivals[i].after_batch(), i == 0 ? 0 : first + i - 1);
    EXPECT_EQ(run.arrivals[i].pool(), "default");
    EXPECT_EQ(run.arrivals[i].client_id().rfind("yoke-send-", 0), 0u);
  }

  // The events, field by field; v and w stay 0 where the kind has none.
  using yoke::v1::Event;
  const auto& b0 = run.arrivals[0].events();
  ASSERT_EQ(b0.size(), 2);
  EXPECT_EQ(b0[0].kind(), Event::SET_EDGE);
  EXPECT_EQ(b0[0].u(), 1u);
  EXPECT_EQ(b0[0].v(), 2u);
  EXPECT_EQ(b0[0].w(), 5);
  EXPECT_EQ(b0[1].w(), -4);
  const auto& b1 = run.arrivals[1].events();
  ASSERT_EQ(b1.size(), 2);
  EXPECT_EQ(b1[0].kind(), Event::ADD_VERTEX);
  EXPECT_EQ(b1[0].u(), 7u);
  EXPECT_EQ(b1[0].v(), 0u);
  EXPECT_EQ(b1[1].kind(), Event::UNSET_EDGE);
  EXPECT_EQ(b1[1].w(), 0);
  const auto& b2 = run.arrivals[2].events();
  ASSERT_EQ(b2.size(), 1);
  EXPECT_EQ(b2[0].kind(), Event::REMOVE_VERTEX);
  EXPECT_EQ(b2[0].u(), 3u);
}

TEST(SendCommand, PassesPoolAndClientIdAndSendsEmptyCommits) {
  const SendRun run = send_script("commit\nset 1 2 3\n", no_fault,
                                  {"--pool", "harbour", "--client-id", "crane-7"});
  ASSERT_EQ(run.result.exit_code, 0) << run.result.err;
  EXPECT_EQ(output(run)["pool"], "harbour");
  EXPECT_EQ(output(run)["batches"], 2);
  ASSERT_EQ(run.arrivals.size(), 2u);
  EXPECT_EQ(run.arrivals[0].events_size(), 0);  // `commit` with nothing before it, as in replay
  EXPECT_EQ(run.arrivals[1].client_id(), "crane-7");
  EXPECT_EQ(run.arrivals[1].pool(), "harbour");
}

TEST(SendCommand, ARejectedEventIsReportedAtItsLine) {
  // Batch 2's second event (line 6) is refused; batch 3 is then out of order and not news.
  const SendRun run = send_script(kScript, [](std::size_t batch, int) {
    return batch == 1 ? refusal(Error::UNKNOWN_EDGE, "no edge {1, 2}", 1) : Fault{};
  });
  EXPECT_EQ(run.result.exit_code, 2);
  EXPECT_EQ(run.result.out, "");
  EXPECT_EQ(run.result.err,
            "error: SCRIPT:6: batch 2 rejected by the daemon: UNKNOWN_EDGE: no edge {1, 2}\n");
}

TEST(SendCommand, ARejectedBatchWithoutEventIsReportedAtItsCommit) {
  const SendRun at_commit = send_script(kScript, [](std::size_t batch, int) {
    return batch == 1 ? refusal(Error::POOL_LIMIT_EXCEEDED, "too many vertices") : Fault{};
  });
  EXPECT_EQ(at_commit.result.exit_code, 2);
  EXPECT_EQ(at_commit.result.err,
            "error: SCRIPT:7: batch 2 rejected by the daemon: POOL_LIMIT_EXCEEDED: too many "
            "vertices\n");
  // The batch the end of the file closes has no commit line: its last event's line.
  const SendRun at_end = send_script(kScript, [](std::size_t batch, int) {
    return batch == 2 ? refusal(Error::TOO_MANY_EVENTS, "too many") : Fault{};
  });
  EXPECT_EQ(at_end.result.err,
            "error: SCRIPT:8: batch 3 rejected by the daemon: TOO_MANY_EVENTS: too many\n");
}

TEST(SendCommand, ALostRequestIsResentUnderItsNumber) {
  const SendRun run = send_script(
      kScript, [](std::size_t batch, int copy) {
        return batch == 2 && copy == 0 ? Fault{Fault::lose_request, {}} : Fault{};
      },
      {"--timeout-ms", "1000"});
  ASSERT_EQ(run.result.exit_code, 0) << run.result.err;
  EXPECT_EQ(arrival_order(run), (std::vector<std::uint64_t>{0, 1, 2, 2}));
  EXPECT_EQ(run.arrivals[3].after_batch(), run.arrivals[1].client_batch());
  EXPECT_EQ(output(run)["last_seq"], 3);
  EXPECT_EQ(output(run)["duplicates"], 0);
}

TEST(SendCommand, ALostReplyEndsInADuplicateAcknowledgement) {
  const SendRun run = send_script(
      kScript, [](std::size_t batch, int copy) {
        return batch == 0 && copy == 0 ? Fault{Fault::lose_reply, {}} : Fault{};
      },
      {"--timeout-ms", "1000", "--in-flight", "1"});
  ASSERT_EQ(run.result.exit_code, 0) << run.result.err;
  EXPECT_EQ(arrival_order(run), (std::vector<std::uint64_t>{0, 0, 1, 2}));
  EXPECT_EQ(output(run)["first_seq"], 1);
  EXPECT_EQ(output(run)["last_seq"], 3);
  EXPECT_EQ(output(run)["duplicates"], 1);
}

TEST(SendCommand, OutOfOrderResendsFromTheOldestUnacknowledged) {
  // Batch 2's first copy is refused as out of order; batch 3's first copy, sent before the
  // refusal came back, is then out of order too. The client resends 2 and 3 once, at the
  // refusal (the minute-long timeout never comes into it), and ignores the stale refusal of
  // 3's first copy.
  const SendRun run = send_script(
      kScript, [](std::size_t batch, int copy) {
        return batch == 1 && copy == 0 ? refusal(Error::OUT_OF_ORDER, "lost predecessor")
                                       : Fault{};
      },
      {"--timeout-ms", "60000"});
  ASSERT_EQ(run.result.exit_code, 0) << run.result.err;
  EXPECT_EQ(arrival_order(run), (std::vector<std::uint64_t>{0, 1, 2, 1, 2}));
  EXPECT_LT(run.elapsed, std::chrono::seconds(30));
  EXPECT_EQ(run.arrivals[3].after_batch(), run.arrivals[0].client_batch());
  EXPECT_EQ(output(run)["first_seq"], 1);
  EXPECT_EQ(output(run)["last_seq"], 3);
}

TEST(SendCommand, UnavailableUntilTheRetriesRunOutIsExit4) {
  const SendRun run = send_script(
      kScript, [](std::size_t, int) { return refusal(Error::UNAVAILABLE, "journal full"); },
      {"--retries", "2", "--in-flight", "1"});
  EXPECT_EQ(run.result.exit_code, 4);
  EXPECT_EQ(run.arrivals.size(), 3u);  // the first batch, then two retries
  EXPECT_EQ(run.result.err,
            "error: SCRIPT:4: batch 1 rejected by the daemon: UNAVAILABLE: journal full (still "
            "refused after 2 retries)\n");
}

TEST(SendCommand, AnUnaddressedUnavailableIsLeftToTheTimeout) {
  Fault shutting_down = refusal(Error::UNAVAILABLE, "the daemon is shutting down");
  shutting_down.kind = Fault::refuse_unaddressed;
  const SendRun recovers = send_script(
      kScript,
      [&](std::size_t batch, int copy) {
        return batch == 0 && copy == 0 ? shutting_down : Fault{};
      },
      {"--timeout-ms", "1000", "--in-flight", "1"});
  ASSERT_EQ(recovers.result.exit_code, 0) << recovers.result.err;
  EXPECT_EQ(arrival_order(recovers), (std::vector<std::uint64_t>{0, 0, 1, 2}));

  const SendRun gives_up = send_script(
      kScript, [&](std::size_t, int) { return shutting_down; },
      {"--timeout-ms", "50", "--retries", "1"});
  EXPECT_EQ(gives_up.result.exit_code, 4);
  EXPECT_NE(gives_up.result.err.find(
                "after 1 retries (last answer: UNAVAILABLE: the daemon is shutting down)\n"),
            std::string::npos)
      << gives_up.result.err;
}

TEST(SendCommand, ARequestTheDaemonCannotReadIsExit2) {
  Fault unreadable = refusal(Error::OVERSIZED_MESSAGE, "message of 9 MB exceeds 4 MB");
  unreadable.kind = Fault::refuse_unaddressed;
  const SendRun run = send_script(kScript, [&](std::size_t, int) { return unreadable; });
  EXPECT_EQ(run.result.exit_code, 2);
  EXPECT_EQ(run.result.err.rfind("error: SCRIPT: the daemon at ipc://", 0), 0u) << run.result.err;
  EXPECT_NE(run.result.err.find(
                " could not read a batch: OVERSIZED_MESSAGE: message of 9 MB exceeds 4 MB\n"),
            std::string::npos)
      << run.result.err;
}

TEST(SendCommand, NoDaemonIsExit4AfterTheRetries) {
  TempDir dir;
  const std::string endpoint = "ipc://" + dir.file("nobody");
  const RunResult result =
      run_yoke(dir, {"send", dir.write("s.events", kScript), "--ingest", endpoint,
                     "--timeout-ms", "50", "--retries", "2"});
  EXPECT_EQ(result.exit_code, 4);
  EXPECT_EQ(result.err, "error: no acknowledgement from " + endpoint + " after 2 retries\n");
}

TEST(SendCommand, AnEmptyScriptNeedsNoDaemon) {
  TempDir dir;
  const RunResult result = run_yoke(
      dir, {"send", dir.write("s.events", "# nothing\n"), "--ingest", "ipc://" + dir.file("x")});
  EXPECT_EQ(result.exit_code, 0) << result.err;
  EXPECT_EQ(result.out,
            "{\"pool\":\"default\",\"batches\":0,\"events\":0,\"first_seq\":null,"
            "\"last_seq\":null,\"duplicates\":0}\n");
}

TEST(SendCommand, AMalformedScriptOrOptionIsExit2) {
  TempDir dir;
  const RunResult script = run_yoke(dir, {"send", dir.write("s.events", "set 1 1 3\n")});
  EXPECT_EQ(script.exit_code, 2);
  EXPECT_NE(script.err.find("s.events:1: self loop"), std::string::npos) << script.err;
  const RunResult empty_id =
      run_yoke(dir, {"send", dir.file("s.events"), "--client-id", ""});
  EXPECT_EQ(empty_id.exit_code, 2);
  const RunResult no_window =
      run_yoke(dir, {"send", dir.file("s.events"), "--in-flight", "0"});
  EXPECT_EQ(no_window.exit_code, 2);
}

}  // namespace
}  // namespace yoke::cli::testing
