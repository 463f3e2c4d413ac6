// A snapshot of every pool at one log position that does not hold the loop. At start() the
// loop gathers each pool's heading (seq, retry marks, position, wall time: record_heading) and
// asks for its engine state to be saved on a worker (PoolService::capture_on_worker: right
// after the pool's last repair in flight, or by a capture-only job on a free pool's strand,
// which the pool's later windows queue behind); PoolService's collect listener hands each
// capture back (pool_collected), and once all are in the file is written on a thread of its
// own. The loop learns "snapshot P written" (or failed) by `wake`. The local backend's timer
// and after_events snapshots use it; requested and final snapshots stay synchronous.
#pragma once

#include <chrono>
#include <cstdint>
#include <exception>
#include <functional>
#include <future>
#include <map>
#include <memory>
#include <optional>
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
  // Starts a snapshot named by the log's end now. Call on the loop with no window syncing or
  // sealed and not applied (every batch in the ledger durable, held, or in the open window).
  // O(pools + client marks) with worker threads; with the inline executor (and for a pool
  // retiring in the open window) the engine states are saved here, O(their states).
  void start();
  // A job of `pool` was collected with its capture (PoolService's collect listener; never
  // null): when the snapshot waits for the pool, it completes the pool's record (its contents
  // are taken); once every pool is in, the write starts. A failed capture fails the snapshot.
  void pool_collected(const std::string& pool, PoolService::EngineCapture* engine);
  // The finished write's result, once (nothing while capturing or writing).
  std::optional<Written> take_result();
  // Blocks until the write has ended; every pool must have been captured (the caller settles
  // the repairs first). Then take_result() has it.
  void wait_written();
  // Pools still to capture.
  bool capturing() const { return started_ && !waiting_.empty(); }

 private:
  void start_write();
  // Adds a pool's engine part to its heading, or keeps the capture's failure.
  void complete(v1::SnapshotRecord heading, PoolService::EngineCapture engine);

  PoolService& service_;
  storage::SnapshotStore& store_;
  std::function<void()> wake_;
  boost::asio::thread_pool writer_{1};
  bool started_ = false;
  bool writing_ = false;
  std::uint64_t position_ = 0;
  std::uint64_t wall_time_ = 0;
  Clock::time_point start_time_;
  // Pools asked at start() and not captured yet, by name, with their headings.
  std::map<std::string, v1::SnapshotRecord> waiting_;
  std::vector<v1::SnapshotRecord> records_;  // complete
  std::exception_ptr capture_failure_;       // the first capture that failed
  std::future<void> written_;
  std::shared_ptr<Written> result_;
};

}  // namespace yoke::daemon
