#include "journal_thread.h"

#include <stdexcept>
#include <utility>

#include <boost/asio/post.hpp>

#include "thread_niceness.h"

namespace yoke::daemon {

JournalThread::JournalThread(storage::CommitLog& log, std::function<void()> wake)
    : log_(log), wake_(std::move(wake)) {
  prepare_pool_threads(thread_, 1, "yoked-journal", 0);  // the acks wait for it: not nicer
}

JournalThread::~JournalThread() { thread_.join(); }

void JournalThread::commit(SealedRecords records, Clock::time_point closed) {
  if (busy_) throw std::logic_error("a window is syncing already: one at a time");
  busy_ = true;
  ended_.store(false, std::memory_order_relaxed);  // no commit runs: nobody else writes it
  result_ = std::make_shared<Synced>();
  result_->closed = closed;
  auto window = std::make_shared<SealedRecords>(std::move(records));
  boost::asio::post(thread_, [this, window, result = result_] {
    const Clock::time_point start = Clock::now();
    try {
      // The events written straight as bytes, here, not on the loop.
      result->committed = log_.commit_encoded(std::move(*window).encode());
    } catch (...) {
      result->failure = std::current_exception();
    }
    result->took = Clock::now() - start;
    *window = SealedRecords();  // the events' copies too
    ended_.store(true, std::memory_order_release);
    ended_.notify_all();
    if (wake_) wake_();
  });
}

void JournalThread::wait() {
  if (busy_) ended_.wait(false, std::memory_order_acquire);
}

std::optional<JournalThread::Synced> JournalThread::take() {
  if (!ready()) return std::nullopt;
  busy_ = false;
  Synced synced = std::move(*result_);
  result_.reset();
  return synced;
}

}  // namespace yoke::daemon
