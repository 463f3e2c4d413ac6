#include "background_snapshot.h"

#include <algorithm>
#include <utility>

#include <boost/asio/post.hpp>

#include "daemon/service/snapshot_capture.h"
#include "daemon/service/unix_time.h"
#include "thread_niceness.h"

namespace yoke::daemon {

BackgroundSnapshot::BackgroundSnapshot(PoolService& service, storage::SnapshotStore& store,
                                       std::function<void()> wake, int nice_offset)
    : service_(service), store_(store), wake_(std::move(wake)) {
  prepare_pool_threads(writer_, 1, "yoked-snapshot", nice_offset);
}

BackgroundSnapshot::~BackgroundSnapshot() { writer_.join(); }

void BackgroundSnapshot::start() {
  started_ = true;
  writing_ = false;
  position_ = service_.next_journal_position();
  wall_time_ = unix_time_us();
  start_time_ = Clock::now();
  records_.clear();
  waiting_.clear();
  capture_failure_ = nullptr;
  for (const std::string& name : service_.registry().names()) {
    // Everything but the engine is read here, at the position: a later window's ledger work
    // (close_group) happens before the capture of a repairing pool comes back.
    std::optional<v1::SnapshotRecord> heading = record_heading(
        service_, name, service_.journalled_seq(name), position_, wall_time_);
    if (!heading) continue;
    if (service_.capture_on_worker(name)) {
      waiting_.emplace(name, std::move(*heading));
    } else {  // free (the inline executor, or retiring in the open window): saved here
      complete(std::move(*heading), PoolService::capture_engine(*service_.registry().find(name)));
    }
  }
  if (waiting_.empty()) start_write();
}

void BackgroundSnapshot::pool_collected(const std::string& pool,
                                        PoolService::EngineCapture* engine) {
  if (!started_ || writing_) return;
  const auto waiting = waiting_.find(pool);
  if (waiting == waiting_.end()) return;
  v1::SnapshotRecord heading = std::move(waiting->second);
  waiting_.erase(waiting);
  complete(std::move(heading), std::move(*engine));
  if (waiting_.empty()) start_write();
}

void BackgroundSnapshot::complete(v1::SnapshotRecord heading, PoolService::EngineCapture engine) {
  if (engine.failure) {
    if (!capture_failure_) capture_failure_ = engine.failure;
    return;
  }
  add_engine_part(heading, std::move(engine));
  records_.push_back(std::move(heading));
}

void BackgroundSnapshot::start_write() {
  writing_ = true;
  // Name order, as capture_snapshot() writes them.
  std::sort(records_.begin(), records_.end(),
            [](const v1::SnapshotRecord& a, const v1::SnapshotRecord& b) {
              return a.pool() < b.pool();
            });
  result_ = std::make_shared<Written>();
  result_->position = position_;
  for (const v1::SnapshotRecord& record : records_) {
    result_->pool_seqs.emplace_back(record.pool(), record.seq());
  }
  auto done = std::make_shared<std::promise<void>>();
  written_ = done->get_future();
  auto records = std::make_shared<std::vector<v1::SnapshotRecord>>(std::move(records_));
  records_.clear();
  boost::asio::post(writer_, [this, records, done, result = result_, start = start_time_,
                               failure = capture_failure_] {
    try {
      if (failure) std::rethrow_exception(failure);  // a pool is missing: nothing is written
      result->path = store_.write(result->position, *records);
    } catch (...) {
      result->failure = std::current_exception();
    }
    result->took = Clock::now() - start;
    done->set_value();
    wake_();
  });
}

std::optional<BackgroundSnapshot::Written> BackgroundSnapshot::take_result() {
  if (!started_ || !writing_) return std::nullopt;
  if (written_.wait_for(std::chrono::seconds(0)) != std::future_status::ready) return std::nullopt;
  started_ = false;
  writing_ = false;
  return std::move(*result_);
}

void BackgroundSnapshot::wait_written() {
  if (writing_) written_.wait();
}

}  // namespace yoke::daemon
