#include "background_snapshot.h"

#include <algorithm>

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
  waiting_for_.clear();
  for (const std::string& name : service_.registry().names()) {
    if (service_.capture_after_repair(name)) {
      waiting_for_.insert(name);
    } else if (auto record = capture_pool_at(service_, name, position_, wall_time_)) {
      records_.push_back(std::move(*record));
    }
  }
  if (waiting_for_.empty()) start_write();
}

void BackgroundSnapshot::pool_collected(const std::string& pool,
                                        const PoolService::EngineCapture* engine) {
  if (!started_ || writing_ || waiting_for_.erase(pool) == 0) return;
  if (auto record = capture_pool_at(service_, pool, position_, wall_time_, engine)) {
    records_.push_back(std::move(*record));
  }
  if (waiting_for_.empty()) start_write();
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
  boost::asio::post(writer_, [this, records, done, result = result_, start = start_time_] {
    try {
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
