// The thread that makes sealed windows durable off the loop: CommitLog::commit() of one window
// at a time (the records' serialization, the writes, the fdatasync), while the loop goes on
// accepting batches into the next window. The loop learns "window synced" (or failed) by
// `wake`, takes the result and does what follows a commit (PoolService::end_seal(), the acks,
// the repairs). Group commit stays group commit: what arrives during a sync is the next window.
//
// Threads: while a window is handed over and its result not taken (busy()), this thread is the
// only caller of the CommitLog; the loop touches the log (end_position(), drop_before()) only
// when it is not busy (wait() for it first). take() synchronizes with the commit's end.
#pragma once

#include <atomic>
#include <chrono>
#include <exception>
#include <functional>
#include <memory>
#include <optional>
#include <vector>

#include <boost/asio/thread_pool.hpp>

#include "daemon/service/sealed_records.h"
#include "daemon/storage/commit_log.h"
#include "yoke/v1/records.pb.h"

namespace yoke::daemon {

class JournalThread {
 public:
  using Clock = std::chrono::steady_clock;
  struct Synced {
    storage::CommittedWindow committed;
    std::exception_ptr failure;  // commit() threw: nothing of the window may be acknowledged
    Clock::time_point closed;    // commit()'s argument, handed back
    Clock::duration took{};      // of commit() alone, on this thread
  };

  // `log` must outlive the thread. `wake` runs on this thread when a commit ends (post to the
  // loop from it).
  JournalThread(storage::CommitLog& log, std::function<void()> wake);
  ~JournalThread();  // waits for the commit in flight (its result is dropped)
  JournalThread(const JournalThread&) = delete;
  JournalThread& operator=(const JournalThread&) = delete;

  // A window was handed over and its result is not taken yet.
  bool busy() const { return busy_; }
  // Busy, and the commit has ended: take() returns its result. One atomic load, so the loop
  // may ask between messages instead of waiting for `wake`'s turn behind a burst of them.
  bool ready() const { return busy_ && ended_.load(std::memory_order_acquire); }
  // Hands the window's records over for one commit (CommitLog::commit_encoded), their events
  // encoded on this thread, not on the loop. Not while busy() (std::logic_error).
  void commit(SealedRecords records, Clock::time_point closed);
  // Blocks until the window handed over is durable or has failed (nothing when not busy()).
  void wait();
  // The result once the commit has ended, once; nothing while it runs or when not busy().
  std::optional<Synced> take();

 private:
  storage::CommitLog& log_;
  std::function<void()> wake_;
  boost::asio::thread_pool thread_{1};
  bool busy_ = false;
  // Set by the thread when the commit has ended (result_ written), before `wake`; wait()
  // blocks on it (std::atomic::wait).
  std::atomic<bool> ended_{false};
  std::shared_ptr<Synced> result_;
};

}  // namespace yoke::daemon
