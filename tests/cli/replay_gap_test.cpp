// `yoke replay DATA_DIR` reads a log by recovery's rules (daemon/recovery/group_sequence.h): a
// journal with a record missing (a gap in the pool's seqs) stops the replay with an error that
// names the pool and the missing seq, after the commits before it; the daemon's recovery
// refuses the same journal with the same words. The journals are written through the local
// commit log (daemon/journal), as yoked writes them, one window per commit.
#include <gtest/gtest.h>

#include <cstdint>
#include <string>
#include <vector>

#include "daemon/journal/journal_commit_log.h"
#include "daemon/recovery/group_sequence.h"
#include "daemon/recovery/recovery_error.h"
#include "daemon/service/wire_types.h"
#include "yoke/pool.h"
#include "run_yoke.h"

namespace yoke::cli::testing::journal_gap {
namespace {

// A record of pool "default" at `seq` setting edge {seq, seq + 1} to weight seq + 1 (the
// first also says how the pool was made).
v1::JournalRecord record_at(std::uint64_t seq) {
  v1::JournalRecord record;
  record.set_pool("default");
  record.set_seq(seq);
  record.set_client_id("quillory-desk");
  record.set_client_batch(seq);
  record.set_wall_time_unix_us(1'800'000'000'000'000 + seq);
  if (seq == 1) *record.mutable_created() = daemon::pool_config(Pool(Mode::max_weight));
  const Event event{EventKind::set_edge, seq, seq + 1, static_cast<Weight>(seq + 1)};
  *record.add_events() = daemon::to_wire(event);
  return record;
}

// Writes one window per entry of `windows`, each holding the records of those seqs.
void write_journal(const TempDir& dir, const std::vector<std::vector<std::uint64_t>>& windows) {
  auto journal = journal::JournalCommitLog::open(dir.path() / "data" / "journal");
  for (const std::vector<std::uint64_t>& seqs : windows) {
    std::vector<v1::JournalRecord> window;
    for (const std::uint64_t seq : seqs) window.push_back(record_at(seq));
    journal->commit(window);
  }
}

// What the shared rule says of the group [seqs] after `last_seq` (recovery's words).
std::string rule_says(const std::vector<std::uint64_t>& seqs, std::uint64_t last_seq,
                      std::uint64_t position) {
  daemon::CommitGroup group;
  group.pool = "default";
  group.position = position;
  for (const std::uint64_t seq : seqs) group.records.push_back(record_at(seq));
  try {
    daemon::place_group(group, last_seq, true);
  } catch (const daemon::RecoveryError& error) {
    return error.what();
  }
  return "no error";
}

TEST(ReplayGap, ARecordMissingBetweenWindowsStopsTheReplayNamingPoolAndSeq) {
  TempDir dir;
  write_journal(dir, {{1}, {2}, {4}, {5}});  // seq 3 was lost
  const std::string data = dir.file("data");
  const RunResult result = run_yoke(dir, {"replay", data});
  EXPECT_EQ(result.exit_code, 2) << result.err;
  // The commits before the gap are replayed and printed; nothing after it.
  EXPECT_NE(result.out.find("commit 2 weight 3 pairs 1"), std::string::npos) << result.out;
  EXPECT_EQ(result.out.find("commit 3 "), std::string::npos) << result.out;
  EXPECT_NE(result.err.find("pool default"), std::string::npos) << result.err;
  EXPECT_NE(result.err.find("seq 3 is missing (the record after seq 2 is seq 4)"),
            std::string::npos)
      << result.err;
  // The words recovery refuses the same group with, after the data directory's name.
  EXPECT_EQ(result.err, "error: " + data + ": " + rule_says({4}, 2, 3) + "\n");

  // --until before the gap replays what is whole.
  const RunResult until = run_yoke(dir, {"replay", data, "--until", "2"});
  EXPECT_EQ(until.exit_code, 0) << until.err;
  EXPECT_NE(until.out.find("commit 2 weight 3 pairs 1 repair_us"), std::string::npos);

  // The postmortem answers read the log the same way.
  const RunResult history = run_yoke(dir, {"replay", data, "--history", "2"});
  EXPECT_EQ(history.exit_code, 2);
  EXPECT_NE(history.err.find("seq 3 is missing"), std::string::npos) << history.err;
}

TEST(ReplayGap, ARecordMissingInsideAWindowIsNamedToo) {
  TempDir dir;
  write_journal(dir, {{1, 2}, {3, 5}});  // seq 4 was lost from the second window
  const RunResult result = run_yoke(dir, {"replay", dir.file("data"), "--all-pools"});
  EXPECT_EQ(result.exit_code, 2) << result.err;
  EXPECT_NE(result.err.find("pool default: seq 4 is missing (the record after seq 3 is seq 5)"),
            std::string::npos)
      << result.err;
}

TEST(ReplayGap, AJournalWithoutTheFirstRecordAndNoSnapshotIsRefused) {
  TempDir dir;
  write_journal(dir, {{2}, {3}});
  const RunResult result = run_yoke(dir, {"replay", dir.file("data")});
  EXPECT_EQ(result.exit_code, 2);
  EXPECT_NE(result.err.find("starts at seq 2 of pool default"), std::string::npos) << result.err;
}

}  // namespace
}  // namespace yoke::cli::testing::journal_gap
