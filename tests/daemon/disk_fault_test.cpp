// The daemon's storage on a failing disk: a scripted workload (windows over two pools,
// snapshots and journal trimming, small segments) runs on the real journal and snapshot
// directory over a FaultyFileSystem that fails its N-th file call, for every N the workload
// makes (recovery's reads and writes included), then the real recovery rebuilds the service
// from what is on disk. Four ways to fail: the one call fails and the process restarts (the OS
// kept its page cache); the one call fails and the machine loses power (everything not synced
// is forgotten, and so are bytes whose write-back failed, even after a later sync returned 0);
// the disk fails for good from the N-th call, with or without a power loss. Also with ENOSPC
// and EINTR instead of EIO, with short writes, and followed by a restart where the clients
// resend and a power loss after it (DiskFaultsThenRetries).
//
// What must hold (DEVELOPERS.md, "A failing disk"): a failed commit acknowledges nothing of its
// window (refuse_window answers it UNAVAILABLE) and the log refuses every later commit (the
// daemon stops); a failed snapshot changes
// nothing else. After recovery the state is exactly the one after the acknowledged windows:
// nothing acknowledged lost, nothing unacknowledged applied; only when the disk refuses even
// the cut of the failed window may part of it come back (as the outcome UNAVAILABLE warns).
// Source of the expected states: the same script on a disk that does not fail; every
// recovered pool is also checked by the certificate checker and a static solve.
#include <algorithm>
#include <cstdint>
#include <iostream>
#include <map>
#include <memory>
#include <string>
#include <tuple>
#include <vector>

#include <gtest/gtest.h>

#include "daemon/journal/file_system.h"
#include "daemon/journal/journal_commit_log.h"
#include "daemon/service/recovery.h"
#include "daemon/service/snapshot_capture.h"
#include "daemon/service/wire_types.h"
#include "daemon/snapshots/snapshot_directory.h"
#include "daemon/storage/storage_error.h"
#include "service_test_util.h"
#include "tests/journal/faulty_file_system.h"

namespace yoke::daemon {
namespace {

using journal::testing::FaultyFileSystem;
using testing::PoolView;
using testing::ScriptWindow;
using testing::TempDir;

constexpr std::size_t kSnapshotEvery = 3;  // windows
constexpr std::size_t kSnapshotsKept = 2;

// One pool as a client can observe it, retry marks included.
struct ObservedPool {
  PoolView view;
  std::vector<std::pair<std::string, std::uint64_t>> marks;  // (client, last batch number)
  friend bool operator==(const ObservedPool&, const ObservedPool&) = default;
};
using ServiceView = std::map<std::string, ObservedPool>;

ServiceView view_of_service(PoolService& service) {
  ServiceView view;
  for (const std::string& name : service.registry().names()) {
    const PoolProgress* progress = service.progress(name);
    if (progress == nullptr || progress->seq == 0) continue;
    ObservedPool& pool = view[name];
    pool.view = testing::view_of(service, name);
    for (const auto& [client, applied] : service.ledger().clients_of(name)) {
      pool.marks.emplace_back(client, applied.highest().batch_number);
    }
  }
  return view;
}

std::string describe(const ServiceView& view) {
  std::string text;
  for (const auto& [name, pool] : view) {
    text += name + ": seq " + std::to_string(pool.view.seq) + " weight " +
            std::to_string(pool.view.weight) + " pairs " + std::to_string(pool.view.pairs) +
            " marks " + std::to_string(pool.marks.size()) + "; ";
  }
  return text.empty() ? "(no pool)" : text;
}

DaemonConfig fault_config(const std::filesystem::path& data_dir) {
  DaemonConfig config = testing::test_config(data_dir);
  // Group commit as the daemon runs by default; segments of 2 KiB so that the script starts
  // several and the snapshots drop some.
  config.journal = journal::testing::small_segments(2048, journal::Durability::group);
  return config;
}

// (pool, client id, client batch) -> the seq its acknowledgement named.
using AckedSeqs = std::map<std::tuple<std::string, std::string, std::uint64_t>, std::uint64_t>;

std::tuple<std::string, std::string, std::uint64_t> key_of(const v1::Ack& ack) {
  return {ack.pool(), ack.client_id(), ack.client_batch()};
}

// What the workload saw.
struct Outcome {
  std::size_t windows_acknowledged = 0;
  bool stopped = false;  // a commit failed: the daemon stops
  std::string failure;
};

// Serves windows first .. last - 1 of the script from the data directory as yoked does: opens
// the journal, recovers, then the daemon's rules on a failing disk, as YokedServer applies
// them: a failed commit stops it (its window answered UNAVAILABLE, never acknowledged), a
// failed snapshot is logged and serving goes on. Every object holding a file is destroyed on
// return. `after_each` gets the state after each window acknowledged.
Outcome serve_windows(const DaemonConfig& config, const std::vector<ScriptWindow>& script,
                      std::size_t first, std::size_t last,
                      std::vector<ServiceView>* after_each = nullptr,
                      std::size_t snapshots_kept = kSnapshotsKept, AckedSeqs* acked = nullptr) {
  Outcome outcome{first, false, {}};
  std::unique_ptr<journal::JournalCommitLog> log;
  std::unique_ptr<SnapshotDirectory> snapshots;
  std::unique_ptr<PoolService> service;
  try {
    log = journal::JournalCommitLog::open(config.data_dir / "journal", config.journal);
    snapshots = std::make_unique<SnapshotDirectory>(config.data_dir / "snapshots", snapshots_kept);
    RecoveryReport report;
    service =
        std::make_unique<PoolService>(config, recover(config, *log, *snapshots, report), *log);
  } catch (const std::exception& error) {
    outcome.stopped = true;  // the daemon does not start
    outcome.failure = error.what();
    return outcome;
  }
  Ticket ticket = 1;
  for (std::size_t w = first; w < last; ++w) {
    for (const testing::ScriptBatch& batch : script[w]) {
      const auto ack = service->offer(ticket++, testing::ingest_message(batch.events, batch.header));
      EXPECT_FALSE(ack) << "window " << w << " answered at once: " << ack->ShortDebugString();
    }
    std::vector<std::pair<Ticket, v1::Ack>> acks;
    try {
      acks = service->seal();
    } catch (const storage::LogError& error) {
      outcome.stopped = true;
      outcome.failure = error.what();
      // The server answers the window's batches UNAVAILABLE, each naming its batch.
      const auto refusals =
          service->refuse_window(make_error(v1::Error::UNAVAILABLE, "the journal failed"));
      EXPECT_EQ(refusals.size(), script[w].size());
      for (std::size_t i = 0; i < refusals.size() && i < script[w].size(); ++i) {
        const v1::Ack& ack = refusals[i].second;
        EXPECT_TRUE(ack.has_rejected() && ack.rejected().errors(0).code() == v1::Error::UNAVAILABLE)
            << ack.ShortDebugString();
        EXPECT_EQ(ack.client_id(), script[w][i].header.client_id);
        EXPECT_EQ(ack.client_batch(), script[w][i].header.client_batch);
      }
      EXPECT_TRUE(service->window_empty());
      // The log refuses every later commit: nothing more can be acknowledged.
      EXPECT_FALSE(service->offer(ticket++, testing::ingest_message({testing::wire_add(100000)},
                                                                     testing::in_pool("default"))));
      EXPECT_THROW(service->seal(), storage::LogError);
      return outcome;
    }
    EXPECT_EQ(acks.size(), script[w].size());
    for (const auto& [unused, ack] : acks) {
      EXPECT_TRUE(ack.has_accepted()) << ack.ShortDebugString();
      if (acked != nullptr) (*acked)[key_of(ack)] = ack.accepted().seq();
    }
    service->apply();
    outcome.windows_acknowledged = w + 1;
    if (after_each != nullptr) after_each->push_back(view_of_service(*service));
    if ((w + 1) % kSnapshotEvery == 0) {
      try {
        snapshots->write(service->next_journal_position(), capture_snapshot(*service));
        if (const auto oldest = snapshots->oldest_needed()) log->drop_before(*oldest);
      } catch (const storage::LogError&) {
        // The journal still holds everything: a failed snapshot costs restart time only.
      }
    }
  }
  return outcome;
}

// A write the disk tore as the machine stopped, never acknowledged: the next start cuts it.
void tear_journal_tail(const std::filesystem::path& data_dir) {
  const auto segments = journal::testing::segment_files(data_dir / "journal");
  ASSERT_FALSE(segments.empty());
  std::string bytes = journal::testing::read_file(segments.back());
  bytes += std::string(11, '\x5a');
  journal::testing::write_file(segments.back(), bytes);
}

// Recovers from the data directory with the real code, as a restarted daemon does.
ServiceView recover_view(const DaemonConfig& config, ::testing::AssertionResult& certified,
                         std::size_t snapshots_kept = kSnapshotsKept) {
  const auto log = journal::JournalCommitLog::open(config.data_dir / "journal", config.journal);
  const SnapshotDirectory snapshots(config.data_dir / "snapshots", snapshots_kept);
  RecoveryReport report;
  PoolService service(config, recover(config, *log, snapshots, report), *log);
  for (const std::string& name : service.registry().names()) {
    if (const Pool* pool = service.registry().find(name); pool != nullptr && pool->vertex_count() > 0) {
      if (auto check = testing::pool_certified(*pool); !check) certified = check << " (" << name << ")";
    }
  }
  return view_of_service(service);
}

// The disk fails in the second run of the daemon, which starts from the first run's
// snapshots and journal (its torn tail included): recovery's calls are injection points too.
constexpr std::size_t kFirstRun = 5;

void serve_first_run(const DaemonConfig& config, const std::vector<ScriptWindow>& script,
                     std::vector<ServiceView>* states, std::size_t snapshots_kept = kSnapshotsKept,
                     AckedSeqs* acked = nullptr) {
  FaultyFileSystem no_faults;  // its syncs are modelled: fast
  const journal::ScopedFileSystem installed(no_faults);
  const Outcome outcome =
      serve_windows(config, script, 0, kFirstRun, states, snapshots_kept, acked);
  ASSERT_EQ(outcome.windows_acknowledged, kFirstRun) << outcome.failure;
  tear_journal_tail(config.data_dir);
}

struct FaultMode {
  const char* name;
  bool persistent;  // the disk fails from the N-th call on
  bool power_loss;  // everything not synced is forgotten before the restart
  int error = EIO;  // the failed calls' errno
};

// The kind of call a trace line names ("write /x/y" -> "write").
std::string kind_of(const std::string& call) { return call.substr(0, call.find(' ')); }

// Calls the daemon retries when interrupted (posix_file.cpp); any other failed call fails.
bool retried_when_interrupted(const std::string& kind) {
  return kind == "open" || kind == "write" || kind == "read";
}

void PrintTo(const FaultMode& mode, std::ostream* out) { *out << mode.name; }

class DiskFaults : public ::testing::TestWithParam<FaultMode> {};

TEST_P(DiskFaults, AtEveryCallNothingAcknowledgedIsLostAndNothingElseApplied) {
  const FaultMode mode = GetParam();
  testing::ScriptSpec spec;
  spec.windows = 14;
  const std::vector<ScriptWindow> script = testing::random_script(spec, 4101);
  const auto first_run = [&](const DaemonConfig& config, std::vector<ServiceView>* states) {
    serve_first_run(config, script, states);
  };

  // The reference: the same runs on a disk that does not fail, the state after each window.
  std::vector<ServiceView> expected{ServiceView{}};
  std::uint64_t calls = 0;
  std::map<std::string, std::size_t> kinds;  // injection points by kind of call
  {
    TempDir dir;
    const DaemonConfig config = fault_config(dir.path());
    first_run(config, &expected);
    FaultyFileSystem files;
    const journal::ScopedFileSystem installed(files);
    const Outcome clean = serve_windows(config, script, kFirstRun, script.size(), &expected);
    ASSERT_FALSE(clean.stopped) << clean.failure;
    ASSERT_EQ(clean.windows_acknowledged, script.size());
    calls = files.calls();
    for (const std::string& call : files.trace()) ++kinds[kind_of(call)];
  }
  ASSERT_EQ(expected.size(), script.size() + 1);
  // Every kind of call the journal and the snapshots make is an injection point (write-back
  // only comes with snapshots above 256 KiB: SnapshotFaults below).
  for (const char* kind :
       {"open", "write", "read", "sync", "sync-directory", "rename", "remove", "truncate"}) {
    EXPECT_GT(kinds[kind], 0u) << kind;
  }

  std::size_t stopped = 0;
  std::size_t kept_failed_window = 0;
  for (std::uint64_t n = 1; n <= calls; ++n) {
    TempDir dir;
    const DaemonConfig config = fault_config(dir.path());
    first_run(config, nullptr);
    FaultyFileSystem files;
    const journal::ScopedFileSystem installed(files);
    files.fail_at(n, mode.persistent);
    files.fail_with(mode.error);
    const Outcome outcome = serve_windows(config, script, kFirstRun, script.size());
    const std::string point = "call " + std::to_string(n) + " (" + files.trace().at(n - 1) + ")";
    ASSERT_TRUE(files.failed()) << point;
    if (outcome.stopped) ++stopped;
    if (mode.error == EINTR && retried_when_interrupted(kind_of(files.trace().at(n - 1)))) {
      // Retried: the interruption changes nothing.
      EXPECT_FALSE(outcome.stopped) << point << ": " << outcome.failure;
      EXPECT_EQ(outcome.windows_acknowledged, script.size()) << point;
    }
    if (mode.power_loss) {
      files.crash();
    } else {
      files.fail_at(0);
    }
    ::testing::AssertionResult certified = ::testing::AssertionSuccess();
    ServiceView recovered;
    try {
      recovered = recover_view(config, certified);
    } catch (const std::exception& error) {
      FAIL() << point << ": recovery failed: " << error.what();
    }
    EXPECT_TRUE(certified) << point;
    const std::size_t k = outcome.windows_acknowledged;
    if (recovered == expected[k]) continue;
    // The one way more may come back: the disk refused even the cut of the failed window,
    // and the process restarted with the OS's copy of it.
    const bool may_keep_failed_window = mode.persistent && !mode.power_loss && outcome.stopped;
    ASSERT_TRUE(may_keep_failed_window)
        << point << ": after " << k << " acknowledged windows recovery holds "
        << describe(recovered) << "; expected " << describe(expected[k]);
    ASSERT_LT(k, script.size()) << point;
    ++kept_failed_window;
    for (const auto& [name, pool] : recovered) {
      const std::uint64_t before = expected[k].contains(name) ? expected[k].at(name).view.seq : 0;
      const std::uint64_t after =
          expected[k + 1].contains(name) ? expected[k + 1].at(name).view.seq : 0;
      EXPECT_GE(pool.view.seq, before) << point << ": pool " << name << " lost acknowledged batches";
      EXPECT_LE(pool.view.seq, after) << point << ": pool " << name << " applied batches never sent";
    }
    for (const auto& [name, pool] : expected[k]) {
      EXPECT_TRUE(recovered.contains(name)) << point << ": pool " << name << " lost";
    }
  }
  // Failed commits and failed starts stop the daemon; a failed snapshot alone does not.
  EXPECT_GT(stopped, 0u);
  if (!mode.persistent) {
    EXPECT_LT(stopped, calls);
  }
  std::cout << "[ fault    ] " << mode.name << ": " << calls << " injection points, " << stopped
            << " stopped the daemon, " << kept_failed_window
            << " restarted with part of the failed window\n";
}

INSTANTIATE_TEST_SUITE_P(
    Modes, DiskFaults,
    ::testing::Values(FaultMode{"OnceThenRestart", false, false},
                      FaultMode{"OnceThenPowerLoss", false, true},
                      FaultMode{"GoneThenPowerLoss", true, true},
                      FaultMode{"GoneThenRestart", true, false},
                      // Other errnos: a full disk is a failure like EIO; an interrupted open,
                      // write or read is tried again, an interrupted sync fails.
                      FaultMode{"NoSpaceOnceThenRestart", false, false, ENOSPC},
                      FaultMode{"InterruptedOnceThenPowerLoss", false, true, EINTR}),
    [](const ::testing::TestParamInfo<FaultMode>& param_info) {
      return std::string(param_info.param.name);
    });

// write(2) may write fewer bytes than asked without an error (a signal, a full pipe, some file
// systems near full): the journal and the snapshots go on with the rest (write_all). The whole
// workload on a disk whose every write takes at most 7 bytes, then a power loss: exactly the
// fault-free state. Source of the expected state: the same script on an ordinary disk.
TEST(DiskFaults, ShortWritesChangeNothing) {
  testing::ScriptSpec spec;
  spec.windows = 10;
  const std::vector<ScriptWindow> script = testing::random_script(spec, 4103);
  std::vector<ServiceView> expected{ServiceView{}};
  {
    TempDir dir;
    const DaemonConfig config = fault_config(dir.path());
    serve_first_run(config, script, &expected);
    FaultyFileSystem files;
    const journal::ScopedFileSystem installed(files);
    serve_windows(config, script, kFirstRun, script.size(), &expected);
  }
  TempDir dir;
  const DaemonConfig config = fault_config(dir.path());
  FaultyFileSystem files;
  const journal::ScopedFileSystem installed(files);
  files.shorten_writes(7);
  const Outcome first = serve_windows(config, script, 0, kFirstRun);
  ASSERT_EQ(first.windows_acknowledged, kFirstRun) << first.failure;
  files.crash();
  files.shorten_writes(7);
  const Outcome second = serve_windows(config, script, kFirstRun, script.size());
  ASSERT_EQ(second.windows_acknowledged, script.size()) << second.failure;
  EXPECT_FALSE(files.failed());
  files.crash();
  ::testing::AssertionResult certified = ::testing::AssertionSuccess();
  const ServiceView recovered = recover_view(config, certified);
  EXPECT_TRUE(certified);
  EXPECT_TRUE(recovered == expected.back())
      << "recovered " << describe(recovered) << "; expected " << describe(expected.back());
}

// A first start makes the data directory's journal and snapshots directories; their entries
// must be durable before anything in them is relied on: with one snapshot kept, the journal is
// trimmed behind a snapshot, and a power loss that took the snapshots directory would take the
// only way back to the trimmed records. Every window acknowledged, then a power loss:
// exactly the fault-free state. Source: the same script on a disk that keeps everything.
TEST(DiskFaults, APowerLossAfterAFirstStartKeepsTheDirectoriesItMade) {
  testing::ScriptSpec spec;
  spec.windows = 16;
  const std::vector<ScriptWindow> script = testing::random_script(spec, 4104);
  std::vector<ServiceView> expected{ServiceView{}};
  {
    TempDir dir;
    FaultyFileSystem files;
    const journal::ScopedFileSystem installed(files);
    serve_windows(fault_config(dir / "state"), script, 0, script.size(), &expected, 1);
  }
  TempDir dir;
  const DaemonConfig config = fault_config(dir / "state");  // made by the start
  FaultyFileSystem files;
  const journal::ScopedFileSystem installed(files);
  const Outcome outcome = serve_windows(config, script, 0, script.size(), nullptr, 1);
  ASSERT_EQ(outcome.windows_acknowledged, script.size()) << outcome.failure;
  const std::string trimmed = "remove " + (config.data_dir / "journal").string() + "/";
  ASSERT_TRUE(std::any_of(files.trace().begin(), files.trace().end(), [&](const std::string& call) {
    return call.starts_with(trimmed);
  })) << "the journal was not trimmed behind a snapshot";
  files.crash();
  ::testing::AssertionResult certified = ::testing::AssertionSuccess();
  ServiceView recovered;
  try {
    recovered = recover_view(config, certified, 1);
  } catch (const std::exception& error) {
    FAIL() << "recovery after a power loss failed: " << error.what();
  }
  EXPECT_TRUE(certified);
  EXPECT_TRUE(recovered == expected.back())
      << "recovered " << describe(recovered) << "; expected " << describe(expected.back());
}

// A snapshot above 256 KiB is written back a piece at a time (write_paced); a piece whose
// write-back fails fails the snapshot: the file's fdatasync would return 0 over it (the kernel
// reports the error once), and the journal would then be trimmed behind a snapshot that a power
// loss damages.
TEST(SnapshotFaults, AFailedWriteBackFailsTheSnapshotAndKeepsTheOneBefore) {
  TempDir dir;
  FaultyFileSystem files;
  const journal::ScopedFileSystem installed(files);
  v1::SnapshotRecord record;
  record.set_pool("default");
  record.set_seq(4);
  record.set_engine_state(std::string(600 * 1024, '\x3c'));
  SnapshotDirectory snapshots(dir.path(), 1);
  snapshots.write(10, {record});
  std::size_t write_backs = 0;
  std::uint64_t first_write_back = 0;
  for (std::size_t i = 0; i < files.trace().size(); ++i) {
    if (kind_of(files.trace()[i]) != "write-back") continue;
    ++write_backs;
    if (first_write_back == 0) first_write_back = i + 1;
  }
  ASSERT_EQ(write_backs, 2u);       // 600 KiB: two whole pieces of 256 KiB
  files.fail_at(first_write_back);  // the next snapshot's calls go the same way
  EXPECT_THROW(snapshots.write(20, {record}), storage::LogError);
  EXPECT_EQ(files.trace().at(files.calls() - 1).substr(0, 10), "write-back");
  files.crash();
  EXPECT_EQ(snapshots.positions(), std::vector<storage::Position>{10});
  EXPECT_EQ(snapshots.read(10).pools.at(0).engine_state(), record.engine_state());
}

// After the failure the daemon restarts on a healthy disk and every client sends again what it
// was not told about, from the last window it was told about: the retries of acknowledged
// batches are answered as duplicates naming the seqs their acknowledgements named, the rest is
// applied once, and the run ends in the state of the script on a disk that never failed. Then
// the machine loses power: everything that third run acknowledged is still there. Snapshots:
// the newest one only (`[snapshots] keep = 1`), so that a snapshot believed durable is the only
// way back to what the journal dropped after it.
struct ResendOutcome {
  ServiceView view;
  std::size_t windows_acknowledged = 0;
};

ResendOutcome resend_windows(const DaemonConfig& config, const std::vector<ScriptWindow>& script,
                             std::size_t first, std::size_t acknowledged, const AckedSeqs& acked,
                             bool may_keep_failed_window, const std::string& point) {
  ResendOutcome outcome;
  const auto log = journal::JournalCommitLog::open(config.data_dir / "journal", config.journal);
  SnapshotDirectory snapshots(config.data_dir / "snapshots", 1);
  RecoveryReport report;
  PoolService service(config, recover(config, *log, snapshots, report), *log);
  // Each answer: acknowledged batches again as duplicates with their seqs; others fresh, or
  // duplicates only of the failed window when part of it may have been kept.
  const auto check = [&](std::size_t w, const v1::Ack& ack) {
    ASSERT_TRUE(ack.has_accepted()) << point << ", window " << w << ": " << ack.ShortDebugString();
    const auto before = acked.find(key_of(ack));
    if (before != acked.end()) {
      EXPECT_TRUE(ack.accepted().duplicate()) << point << ": " << ack.ShortDebugString();
      EXPECT_EQ(ack.accepted().seq(), before->second) << point << ": " << ack.ShortDebugString();
    } else if (ack.accepted().duplicate()) {
      EXPECT_TRUE(may_keep_failed_window && w == acknowledged)
          << point << ": never acknowledged yet applied: " << ack.ShortDebugString();
    }
  };
  Ticket ticket = 1;
  for (std::size_t w = first; w < script.size(); ++w) {
    for (const testing::ScriptBatch& batch : script[w]) {
      if (const auto ack =
              service.offer(ticket++, testing::ingest_message(batch.events, batch.header))) {
        check(w, *ack);
      }
    }
    for (const auto& [unused, ack] : service.seal()) check(w, ack);
    service.apply();
    outcome.windows_acknowledged = w + 1;
    if ((w + 1) % kSnapshotEvery == 0) {
      snapshots.write(service.next_journal_position(), capture_snapshot(service));
      if (const auto oldest = snapshots.oldest_needed()) log->drop_before(*oldest);
    }
  }
  outcome.view = view_of_service(service);
  return outcome;
}

class DiskFaultsThenRetries : public ::testing::TestWithParam<FaultMode> {};

TEST_P(DiskFaultsThenRetries, RetriesGetTheirSeqsAndWhatIsAcknowledgedSurvivesAPowerLoss) {
  const FaultMode mode = GetParam();
  testing::ScriptSpec spec;
  spec.windows = 10;
  std::vector<ScriptWindow> script = testing::random_script(spec, 4102);
  // Only a batch with a client id can be sent again safely: the script's anonymous batches get
  // one of their own.
  std::uint64_t anonymous = 0;
  for (ScriptWindow& window : script) {
    for (testing::ScriptBatch& batch : window) {
      if (!batch.header.client_id.empty()) continue;
      batch.header.client_id = "courier-9";
      batch.header.client_batch = ++anonymous;
    }
  }
  constexpr std::size_t kKept = 1;

  std::vector<ServiceView> expected{ServiceView{}};
  std::uint64_t calls = 0;
  {
    TempDir dir;
    const DaemonConfig config = fault_config(dir.path());
    serve_first_run(config, script, &expected, kKept);
    FaultyFileSystem files;
    const journal::ScopedFileSystem installed(files);
    const Outcome clean = serve_windows(config, script, kFirstRun, script.size(), &expected, kKept);
    ASSERT_EQ(clean.windows_acknowledged, script.size()) << clean.failure;
    calls = files.calls();
  }
  for (std::uint64_t n = 1; n <= calls; ++n) {
    TempDir dir;
    const DaemonConfig config = fault_config(dir.path());
    AckedSeqs acked;
    serve_first_run(config, script, nullptr, kKept, &acked);
    FaultyFileSystem files;
    const journal::ScopedFileSystem installed(files);
    files.fail_at(n, mode.persistent);
    files.fail_with(mode.error);
    const Outcome outcome =
        serve_windows(config, script, kFirstRun, script.size(), nullptr, kKept, &acked);
    const std::string point = "call " + std::to_string(n) + " (" + files.trace().at(n - 1) + ")";
    if (mode.power_loss) {
      files.crash();
    } else {
      files.fail_at(0);  // the disk is back; the OS kept its cache
    }
    const std::size_t k = outcome.windows_acknowledged;
    const bool may_keep_failed_window = mode.persistent && !mode.power_loss && outcome.stopped;
    // The clients send again from the last window they were told about.
    ResendOutcome resent;
    try {
      resent = resend_windows(config, script, k == 0 ? 0 : k - 1, k, acked, may_keep_failed_window,
                              point);
    } catch (const std::exception& error) {
      FAIL() << point << ": the restart on a healthy disk failed: " << error.what();
    }
    ASSERT_EQ(resent.windows_acknowledged, script.size()) << point;
    EXPECT_TRUE(resent.view == expected.back())
        << point << ": after the retries " << describe(resent.view) << "; expected "
        << describe(expected.back());
    // Power loss after the retries: all of them were acknowledged, none may go.
    files.crash();
    ::testing::AssertionResult certified = ::testing::AssertionSuccess();
    ServiceView recovered;
    try {
      recovered = recover_view(config, certified, kKept);
    } catch (const std::exception& error) {
      FAIL() << point << ": recovery after the retries and a power loss failed: " << error.what();
    }
    EXPECT_TRUE(certified) << point;
    ASSERT_TRUE(recovered == resent.view)
        << point << ": after a power loss recovery holds " << describe(recovered)
        << "; the retries' run acknowledged " << describe(resent.view);
  }
  std::cout << "[ fault    ] " << mode.name << ": " << calls << " injection points, retried\n";
}

INSTANTIATE_TEST_SUITE_P(
    Modes, DiskFaultsThenRetries,
    ::testing::Values(FaultMode{"OnceThenRestart", false, false},
                      FaultMode{"OnceThenPowerLoss", false, true},
                      FaultMode{"GoneThenPowerLoss", true, true},
                      FaultMode{"GoneThenRestart", true, false}),
    [](const ::testing::TestParamInfo<FaultMode>& param_info) {
      return std::string(param_info.param.name);
    });

}  // namespace
}  // namespace yoke::daemon
