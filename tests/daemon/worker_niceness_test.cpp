// The daemon's background threads run nicer than the loop ([service] worker_nice): each repair
// worker and the snapshot writer read their own niceness (getpriority on their thread id)
// inside a task, and the thread that made them keeps its own.
#include <algorithm>
#include <latch>
#include <memory>
#include <mutex>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "daemon/server/background_snapshot.h"
#include "daemon/server/repair_threads.h"
#include "daemon/server/thread_niceness.h"
#include "service_test_util.h"

namespace yoke::daemon {
namespace {

// What a thread made here at niceness `base` runs at after `offset` is added.
int expected_niceness(int base, int offset) { return std::min(base + offset, 19); }

// Runs one task per pool on `threads`, each holding its worker until all have started (so
// every worker runs one), and returns the niceness each read for its own thread. Joins them.
std::vector<int> worker_niceness(RepairThreads& threads) {
  const std::size_t workers = threads.threads();
  auto all_started = std::make_shared<std::latch>(static_cast<std::ptrdiff_t>(workers));
  std::mutex mutex;
  std::vector<int> seen;
  for (std::size_t i = 0; i < workers; ++i) {
    threads.run("pool-" + std::to_string(i), [&mutex, &seen, all_started] {
      const int niceness = this_thread_niceness();
      {
        const std::lock_guard lock(mutex);
        seen.push_back(niceness);
      }
      all_started->arrive_and_wait();
    });
  }
  threads.join();
  return seen;
}

TEST(WorkerNiceness, RepairWorkersRunAtTheLoopsNicenessPlusTheOffset) {
  const int base = this_thread_niceness();
  RepairThreads threads(3, 4);
  EXPECT_EQ(this_thread_niceness(), base);  // the maker keeps its own
  const std::vector<int> seen = worker_niceness(threads);
  ASSERT_EQ(seen.size(), 3u);
  for (const int niceness : seen) EXPECT_EQ(niceness, expected_niceness(base, 4));
}

TEST(WorkerNiceness, OffsetZeroLeavesTheWorkersAsNiceAsTheirMaker) {
  const int base = this_thread_niceness();
  RepairThreads threads(2, 0);
  for (const int niceness : worker_niceness(threads)) EXPECT_EQ(niceness, base);
}

TEST(WorkerNiceness, TheNicenessStopsAt19) {
  const int base = this_thread_niceness();
  RepairThreads threads(2, 19);
  for (const int niceness : worker_niceness(threads)) {
    EXPECT_EQ(niceness, expected_niceness(base, 19));
    if (base >= 0) {
      EXPECT_EQ(niceness, 19);
    }
  }
  EXPECT_EQ(this_thread_niceness(), base);
}

// A snapshot store that records the niceness of the thread its write() runs on.
class NicenessRecordingStore final : public storage::SnapshotStore {
 public:
  std::string describe() const override { return "niceness recorder"; }
  std::string write(storage::Position /*position*/,
                    const std::vector<v1::SnapshotRecord>& /*pools*/) override {
    write_niceness = this_thread_niceness();
    return "recorded";
  }
  std::vector<storage::Position> positions() const override { return {}; }
  storage::SnapshotContents read(storage::Position /*position*/) const override {
    throw std::logic_error("not stored");
  }
  std::optional<storage::Position> oldest_needed() const override { return std::nullopt; }

  int write_niceness = -100;
};

TEST(WorkerNiceness, TheSnapshotWriterRunsAtTheLoopsNicenessPlusTheOffset) {
  testing::ServiceHarness harness;
  NicenessRecordingStore store;
  const int base = this_thread_niceness();
  BackgroundSnapshot background(
      harness.service(), store, [] {}, 7);
  EXPECT_EQ(this_thread_niceness(), base);
  background.start();  // no pool repairs: the write starts at once
  background.wait_written();
  const auto written = background.take_result();
  ASSERT_TRUE(written.has_value());
  EXPECT_FALSE(written->failure);
  EXPECT_EQ(written->path, "recorded");
  EXPECT_EQ(store.write_niceness, expected_niceness(base, 7));
}

}  // namespace
}  // namespace yoke::daemon
