// A snapshot of every pool at one log position that does not hold the loop: each pool is
// captured between its windows as soon as it is free (at once, or when its repair in flight is
// collected: PoolService's collect listener; that repair saves the engine state on its worker,
// PoolService::capture_after_repair), and the file is written on a thread of its own.
// The loop learns "snapshot P written" (or failed) by `wake`. The local backend's timer and
// after_events snapshots use it; requested and final snapshots stay synchronous.
#pragma once

#include <chrono>
#include <cstdint>
#include <exception>
#include <functional>
#include <future>
#include <memory>
#include <set>
#include <string>
#include <vector>

#include <boost/asio/thread_pool.hpp>

#include "daemon/service/pool_service.h"
#include "daemon/storage/snapshot_store.h"

namespace yoke::daemon {

class BackgroundSnapshot {
 public:
  using Clock = std::chrono::steady_clock;
  struct Written {
    std::uint64_t position = 0;
    std::string path;
    std::vector<std::pair<std::string, std::uint64_t>> pool_seqs;  // of each record
    Clock::duration took{};
    std::exception_ptr failure;  // the write failed: nothing else holds
  };

  // `wake` runs on the writer's thread when a write ends (post to the loop from it). The
  // writer runs `nice_offset` nicer than the caller (`[service] worker_nice`).
  BackgroundSnapshot(PoolService& service, storage::SnapshotStore& store,
                     std::function<void()> wake, int nice_offset = 0);
  ~BackgroundSnapshot();  // waits for a write in progress
  BackgroundSnapshot(const BackgroundSnapshot&) = delete;
  BackgroundSnapshot& operator=(const BackgroundSnapshot&) = delete;

  // Started and its result not taken yet.
  bool busy() const { return started_; }
  // Starts a snapshot named by the log's end now: every pool not repairing is captured here.
  // Call on the loop with the window sealed (every batch in the ledger durable or held).
  // O(state of the free pools).
  void start();
  // `pool`'s repair was collected (PoolService's collect listener): captured now when the
  // snapshot waits for it; then, once every pool is captured, the write starts.
  void pool_collected(const std::string& pool, const PoolService::EngineCapture* engine);
  // The finished write's result, once (nothing while capturing or writing).
  std::optional<Written> take_result();
  // Blocks until the write has ended; every pool must have been captured (the caller settles
  // the repairs first). Then take_result() has it.
  void wait_written();
  // Pools still to capture.
  bool capturing() const { return started_ && !waiting_for_.empty(); }

 private:
  void start_write();

  PoolService& service_;
  storage::SnapshotStore& store_;
  std::function<void()> wake_;
  boost::asio::thread_pool writer_{1};
  bool started_ = false;
  bool writing_ = false;
  std::uint64_t position_ = 0;
  std::uint64_t wall_time_ = 0;
  Clock::time_point start_time_;
  std::set<std::string> waiting_for_;  // pools repairing at start, not captured yet
  std::vector<v1::SnapshotRecord> records_;
  std::future<void> written_;
  std::shared_ptr<Written> result_;
};

}  // namespace yoke::daemon
