// The daemon's background threads run nicer than the loop ([service] worker_nice): each repair
// worker and the snapshot writer read their own niceness (getpriority on their thread id)
// inside a task, and the thread that made them keeps its own. They carry names (top -H).
#include <algorithm>
#include <latch>
#include <memory>
#include <mutex>
#include <string>
#include <vector>

#include <pthread.h>

#include <gtest/gtest.h>
#include <boost/asio/post.hpp>
#include <boost/asio/thread_pool.hpp>

#include "daemon/server/background_snapshot.h"
#include "daemon/server/repair_threads.h"
#include "daemon/server/thread_niceness.h"
#include "service_test_util.h"

namespace yoke::daemon {
namespace {

// What a thread made here at niceness `base` runs at after `offset` is added.
int expected_niceness(int base, int offset) { return std::min(base + offset, 19); }

std::string this_thread_name() {
  char name[16] = {};
  ::pthread_getname_np(::pthread_self(), name, sizeof name);
  return name;
}

// Runs one task per pool on `threads`, each holding its worker until all have started (so
// every worker runs one), and returns what `read` read on each worker's thread. Joins them.
template <typename Read>
auto read_on_each_worker(RepairThreads& threads, Read read) {
  const std::size_t workers = threads.threads();
  auto all_started = std::make_shared<std::latch>(static_cast<std::ptrdiff_t>(workers));
  std::mutex mutex;
  std::vector<decltype(read())> seen;
  for (std::size_t i = 0; i < workers; ++i) {
    threads.run("pool-" + std::to_string(i), [&mutex, &seen, &read, all_started] {
      auto value = read();
      {
        const std::lock_guard lock(mutex);
        seen.push_back(std::move(value));
      }
      all_started->arrive_and_wait();
    });
  }
  threads.join();
  return seen;
}

std::vector<int> worker_niceness(RepairThreads& threads) {
  return read_on_each_worker(threads, [] { return this_thread_niceness(); });
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

TEST(WorkerNiceness, RepairWorkersAreNamedForTop) {
  RepairThreads threads(2, 3);
  const std::vector<std::string> names = read_on_each_worker(threads, this_thread_name);
  ASSERT_EQ(names.size(), 2u);
  for (const std::string& name : names) EXPECT_EQ(name, "yoked-repair");
}

TEST(WorkerNiceness, AThreadKeepsTheFirst15BytesOfItsName) {
  boost::asio::thread_pool pool(1);
  prepare_pool_threads(pool, 1, "yoked-a-name-too-long-for-linux", 0);
  std::string seen;
  boost::asio::post(pool, [&seen] { seen = this_thread_name(); });
  pool.join();
  EXPECT_EQ(seen, "yoked-a-name-to");  // Linux's limit: 16 bytes with the terminating zero
}

// A snapshot store that records the niceness of the thread its write() runs on.
class NicenessRecordingStore final : public storage::SnapshotStore {
 public:
  std::string describe() const override { return "niceness recorder"; }
  std::string write(storage::Position /*position*/,
                    const std::vector<v1::SnapshotRecord>& /*pools*/) override {
    write_niceness = this_thread_niceness();
    write_thread = this_thread_name();
    return "recorded";
  }
  std::vector<storage::Position> positions() const override { return {}; }
  storage::SnapshotContents read(storage::Position /*position*/) const override {
    throw std::logic_error("not stored");
  }
  std::optional<storage::Position> oldest_needed() const override { return std::nullopt; }

  int write_niceness = -100;
  std::string write_thread;
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
  EXPECT_EQ(store.write_thread, "yoked-snapshot");
}

}  // namespace
}  // namespace yoke::daemon
