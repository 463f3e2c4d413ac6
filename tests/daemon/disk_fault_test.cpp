// The daemon's storage on a failing disk: a scripted workload (windows over two pools,
// snapshots and journal trimming, small segments) runs on the real journal and snapshot
// directory over a FaultyFileSystem that fails its N-th file call, for every N the workload
// makes, then the real recovery rebuilds the service from what is on disk. Four ways to fail:
// the one call fails and the process restarts (the OS kept its page cache); the one call fails
// and the machine loses power (everything not synced is forgotten); the disk fails for good
// from the N-th call, with or without a power loss.
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
                      std::vector<ServiceView>* after_each = nullptr) {
  Outcome outcome{first, false, {}};
  std::unique_ptr<journal::JournalCommitLog> log;
  std::unique_ptr<PoolService> service;
  try {
    log = journal::JournalCommitLog::open(config.data_dir / "journal", config.journal);
    const SnapshotDirectory store(config.data_dir / "snapshots", kSnapshotsKept);
    RecoveryReport report;
    service = std::make_unique<PoolService>(config, recover(config, *log, store, report), *log);
  } catch (const std::exception& error) {
    outcome.stopped = true;  // the daemon does not start
    outcome.failure = error.what();
    return outcome;
  }
  SnapshotDirectory snapshots(config.data_dir / "snapshots", kSnapshotsKept);
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
    for (const auto& [unused, ack] : acks) EXPECT_TRUE(ack.has_accepted()) << ack.ShortDebugString();
    service->apply();
    outcome.windows_acknowledged = w + 1;
    if (after_each != nullptr) after_each->push_back(view_of_service(*service));
    if ((w + 1) % kSnapshotEvery == 0) {
      try {
        snapshots.write(service->next_journal_position(), capture_snapshot(*service));
        if (const auto oldest = snapshots.oldest_needed()) log->drop_before(*oldest);
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
ServiceView recover_view(const DaemonConfig& config, ::testing::AssertionResult& certified) {
  const auto log = journal::JournalCommitLog::open(config.data_dir / "journal", config.journal);
  const SnapshotDirectory snapshots(config.data_dir / "snapshots", kSnapshotsKept);
  RecoveryReport report;
  PoolService service(config, recover(config, *log, snapshots, report), *log);
  for (const std::string& name : service.registry().names()) {
    if (const Pool* pool = service.registry().find(name); pool != nullptr && pool->vertex_count() > 0) {
      if (auto check = testing::pool_certified(*pool); !check) certified = check << " (" << name << ")";
    }
  }
  return view_of_service(service);
}

struct FaultMode {
  const char* name;
  bool persistent;  // the disk fails from the N-th call on
  bool power_loss;  // everything not synced is forgotten before the restart
};

void PrintTo(const FaultMode& mode, std::ostream* out) { *out << mode.name; }

class DiskFaults : public ::testing::TestWithParam<FaultMode> {};

TEST_P(DiskFaults, AtEveryCallNothingAcknowledgedIsLostAndNothingElseApplied) {
  const FaultMode mode = GetParam();
  testing::ScriptSpec spec;
  spec.windows = 14;
  const std::vector<ScriptWindow> script = testing::random_script(spec, 4101);
  // The disk fails in the second run of the daemon, which starts from the first run's
  // snapshots and journal (its torn tail included): recovery's calls are injection points too.
  constexpr std::size_t kFirstRun = 5;
  const auto first_run = [&](const DaemonConfig& config, std::vector<ServiceView>* states) {
    FaultyFileSystem no_faults;  // its syncs are modelled: fast
    const journal::ScopedFileSystem installed(no_faults);
    const Outcome outcome = serve_windows(config, script, 0, kFirstRun, states);
    ASSERT_EQ(outcome.windows_acknowledged, kFirstRun) << outcome.failure;
    tear_journal_tail(config.data_dir);
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
    for (const std::string& call : files.trace()) ++kinds[call.substr(0, call.find(' '))];
  }
  ASSERT_EQ(expected.size(), script.size() + 1);
  // Every kind of call the journal and the snapshots make is an injection point.
  for (const char* kind : {"open", "write", "sync", "sync-directory", "rename", "remove", "truncate"}) {
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
    const Outcome outcome = serve_windows(config, script, kFirstRun, script.size());
    const std::string point = "call " + std::to_string(n) + " (" + files.trace().at(n - 1) + ")";
    ASSERT_TRUE(files.failed()) << point;
    if (outcome.stopped) ++stopped;
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
                      FaultMode{"GoneThenRestart", true, false}),
    [](const ::testing::TestParamInfo<FaultMode>& param_info) {
      return std::string(param_info.param.name);
    });

}  // namespace
}  // namespace yoke::daemon
