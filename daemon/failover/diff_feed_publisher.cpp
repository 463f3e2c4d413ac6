#include "diff_feed_publisher.h"

#include <algorithm>
#include <cstdlib>
#include <memory>
#include <thread>

#include "daemon/cluster/cluster_error.h"
#include "daemon/cluster/log_message.h"
#include "daemon/cluster/subject_purge.h"
#include "daemon/jetstream/diff_feed_message.h"
#include "daemon/logging/log_event.h"

namespace yoke::failover {
namespace {

using daemon::LogLevel;
using daemon::log_event;

// Where the callbacks' closures stay reachable until the process exits (see AckRelay).
std::mutex parked_relays_mutex;
std::vector<std::shared_ptr<void>>& parked_relays() {
  static auto* relays = new std::vector<std::shared_ptr<void>>();  // reachable until exit
  return *relays;
}

std::string failure_text(const jsPubAckErr& failure) {
  std::string text = natsStatus_GetText(failure.Err);
  if (failure.ErrText != nullptr && *failure.ErrText != '\0') text += std::string(": ") + failure.ErrText;
  if (failure.ErrCode != 0) text += " (JetStream error " + std::to_string(failure.ErrCode) + ")";
  return text;
}

}  // namespace

DiffFeedPublisher::DiffFeedPublisher(cluster::NatsConnection& connection, DiffFeedSettings settings)
    : connection_(connection),
      settings_(std::move(settings)),
      subjects_(settings_.subject_prefix),
      relay_(nullptr) {
  auto relay = std::make_shared<AckRelay>();
  relay->publisher = this;
  relay_ = relay.get();
  {
    const std::lock_guard<std::mutex> lock(parked_relays_mutex);
    parked_relays().push_back(std::move(relay));
  }
  jsOptions options;
  jsOptions_Init(&options);
  options.Wait = settings_.publish_timeout.count();
  options.PublishAsync.AckHandler = &DiffFeedPublisher::on_ack;
  options.PublishAsync.AckHandlerClosure = relay_;
  jsCtx* raw = nullptr;
  cluster::throw_on_failure(natsConnection_JetStream(&raw, connection_.native(), &options),
                            "open a JetStream context for the diff feed");
  context_.reset(raw);
}

DiffFeedPublisher::~DiffFeedPublisher() {
  {
    const std::lock_guard<std::mutex> lock(mutex_);
    closing_ = true;  // acknowledgements from now on send nothing more
  }
  jsPubOptions options;
  jsPubOptions_Init(&options);
  options.MaxWait = settings_.publish_timeout.count();
  js_PublishAsyncComplete(context_.get(), &options);
  {
    const std::lock_guard<std::mutex> lock(relay_->mutex);  // waits for a running callback
    relay_->publisher = nullptr;
  }
  context_.reset();
}

DiffFeedPublisher::Lane& DiffFeedPublisher::lane_of(const std::string& pool) {
  auto [it, added] = lanes_.try_emplace(pool);
  if (added) {
    it->second.subject = subjects_.of_diffs(pool);
    pool_of_subject_[it->second.subject] = pool;
  }
  return it->second;
}

std::optional<std::uint64_t> DiffFeedPublisher::resume(const std::string& pool) {
  std::string subject;
  {
    const std::lock_guard<std::mutex> lock(mutex_);
    Lane& lane = lane_of(pool);
    lane.queue.clear();
    lane.in_flight = false;  // an acknowledgement still coming is ignored (no queue front)
    lane.failed = false;
    lane.late = false;
    lane.resumed = false;
    lane.stored.clear();
    lane.snapshot_seqs.clear();
    subject = lane.subject;
  }
  std::optional<jetstream::StoredDiff> last;
  try {
    last = jetstream::last_stored_diff(connection_, settings_.stream, subject);
  } catch (const std::exception& error) {
    log_event(LogLevel::warn, "diff_feed_unread", {{"pool", pool}, {"reason", error.what()}});
    return std::nullopt;
  }
  const std::lock_guard<std::mutex> lock(mutex_);
  Lane& lane = lane_of(pool);
  lane.resumed = true;
  lane.stored_seq = last ? last->seq : 0;
  if (last) lane.stored.emplace_back(last->seq, last->stream_sequence);
  return lane.stored_seq;
}

void DiffFeedPublisher::publish(const std::string& pool, std::uint64_t seq,
                                std::uint64_t prev_seq, std::string publication,
                                Clock::time_point window_closed) {
  log_notes();
  const std::lock_guard<std::mutex> lock(mutex_);
  if (closing_) return;
  Lane& lane = lane_of(pool);
  const std::uint64_t last = lane.queue.empty() ? lane.stored_seq : lane.queue.back().seq;
  // Before resume() has read the subject, nothing is known stored: queue everything; pump()
  // drops what turns out to be stored.
  if (lane.resumed || !lane.queue.empty()) {
    if (seq <= last) return;  // stored or queued already (a takeover's republication)
    if (prev_seq != last) {
      log_event(LogLevel::warn, "diff_feed_gap",
                {{"pool", pool}, {"from_seq", last + 1}, {"to_seq", prev_seq},
                 {"reason", "this daemon does not hold these diffs"}});
    }
  }
  lane.queue.push_back(Queued{seq, prev_seq, std::move(publication), window_closed});
  if (lane.queue.size() > settings_.max_queued) {
    const Queued dropped = std::move(lane.queue.front());
    lane.queue.pop_front();
    log_event(LogLevel::warn, "diff_feed_gap",
              {{"pool", pool}, {"from_seq", dropped.prev_seq + 1}, {"to_seq", dropped.seq},
               {"reason", "too many diffs waiting for the stream"}});
    if (lane.in_flight) lane.in_flight = false;  // its acknowledgement no longer matches
  }
  if (lane.resumed && !lane.in_flight && !lane.failed && !lane.late) send_front(pool, lane);
}

void DiffFeedPublisher::send_front(const std::string& pool, Lane& lane) {
  if (closing_ || lane.queue.empty()) return;
  const Queued& front = lane.queue.front();
  if (Clock::now() - front.checked_at > settings_.stale_after) {
    lane.late = true;  // pump() checks the claims and the subject first
    return;
  }
  natsMsg* raw = nullptr;
  try {
    raw = cluster::make_nats_message(lane.subject, jetstream::diff_feed_headers(front.seq),
                                     front.publication)
              .release();
  } catch (const std::exception& error) {
    fail_front(pool, lane, error.what());
    return;
  }
  jsPubOptions options;
  jsPubOptions_Init(&options);
  options.MaxWait = settings_.publish_timeout.count();
  // Stored only if the subject still ends where this daemon last saw it: a daemon that stalled
  // past a claim cannot add a diff behind its successor's (the stream refuses it, and pump()
  // then finds the pool served elsewhere). A subject read as empty is expected still empty,
  // so that a pool's very first diff is not stored behind a successor's either.
  if (lane.stored.empty()) {
    options.ExpectNoMessage = true;
  } else {
    options.ExpectLastSubjectSeq = lane.stored.back().second;
  }
  const natsStatus status = js_PublishMsgAsync(context_.get(), &raw, &options);
  natsMsg_Destroy(raw);  // no effect when the library took the message
  if (status != NATS_OK) {
    fail_front(pool, lane, std::string("publish: ") + natsStatus_GetText(status));
    return;
  }
  lane.in_flight = true;
}

void DiffFeedPublisher::fail_front(const std::string& pool, Lane& lane, std::string reason) {
  lane.in_flight = false;
  lane.failed = true;
  ++lane.failures;
  lane.retry_at = Clock::now() + settings_.retry_after;
  notes_.push_back(Note{pool, lane.queue.empty() ? 0 : lane.queue.front().seq, std::move(reason)});
}

void DiffFeedPublisher::on_ack(jsCtx*, natsMsg* message, jsPubAck* ack, jsPubAckErr* failure,
                               void* closure) {
  auto* relay = static_cast<AckRelay*>(closure);
  {
    const std::lock_guard<std::mutex> lock(relay->mutex);
    if (relay->publisher != nullptr) relay->publisher->acknowledged(message, ack, failure);
  }
  natsMsg_Destroy(message);
}

void DiffFeedPublisher::acknowledged(natsMsg* message, const jsPubAck* ack,
                                     const jsPubAckErr* failure) {
  const char* subject = natsMsg_GetSubject(message);
  const char* seq_text = nullptr;
  if (subject == nullptr || natsMsgHeader_Get(message, jetstream::kDiffSeqHeader, &seq_text) != NATS_OK) {
    return;
  }
  const std::uint64_t seq = std::strtoull(seq_text, nullptr, 10);
  const std::lock_guard<std::mutex> lock(mutex_);
  const auto pool = pool_of_subject_.find(subject);
  if (pool == pool_of_subject_.end()) return;
  Lane& lane = lanes_.at(pool->second);
  // A diff sent before resume() or forget() reset the pool: nothing here waits for it.
  if (!lane.in_flight || lane.queue.empty() || lane.queue.front().seq != seq) return;
  if (ack == nullptr) {
    fail_front(pool->second, lane,
               failure != nullptr ? failure_text(*failure) : std::string("no acknowledgement"));
    return;
  }
  lane.in_flight = false;
  lane.stored_seq = seq;
  lane.stored.emplace_back(seq, ack->Sequence);
  lane.queue.pop_front();
  send_front(pool->second, lane);
}

void DiffFeedPublisher::drop_stored(Lane& lane, std::uint64_t stored_seq) {
  lane.stored_seq = std::max(lane.stored_seq, stored_seq);
  while (!lane.queue.empty() && lane.queue.front().seq <= lane.stored_seq) lane.queue.pop_front();
}

void DiffFeedPublisher::log_notes() {
  std::vector<Note> notes;
  {
    const std::lock_guard<std::mutex> lock(mutex_);
    notes.swap(notes_);
  }
  for (const Note& note : notes) {
    log_event(LogLevel::warn, "diff_publish_failed",
              {{"pool", note.pool}, {"seq", note.seq}, {"reason", note.reason}});
  }
}

void DiffFeedPublisher::pump(Clock::time_point now) {
  log_notes();
  std::vector<std::pair<std::string, std::string>> to_check;  // (pool, subject)
  {
    const std::lock_guard<std::mutex> lock(mutex_);
    if (closing_) return;
    for (auto& [pool, lane] : lanes_) {
      if (lane.in_flight || lane.queue.empty()) continue;
      const bool waiting = lane.failed || lane.late || !lane.resumed;
      if (waiting && now >= lane.retry_at) to_check.emplace_back(pool, lane.subject);
    }
  }
  for (const auto& [pool, subject] : to_check) {
    std::optional<jetstream::StoredDiff> last;
    try {
      if (settings_.still_serving && !settings_.still_serving(pool)) {
        const std::lock_guard<std::mutex> lock(mutex_);
        Lane& lane = lane_of(pool);
        if (!lane.queue.empty()) {
          log_event(LogLevel::info, "diff_not_stored",
                    {{"pool", pool}, {"from_seq", lane.queue.front().seq},
                     {"to_seq", lane.queue.back().seq},
                     {"reason", "the pool is served elsewhere now"}});
        }
        lane.queue.clear();
        lane.failed = false;
        lane.late = false;
        continue;
      }
      last = jetstream::last_stored_diff(connection_, settings_.stream, subject);
    } catch (const std::exception& error) {
      const std::lock_guard<std::mutex> lock(mutex_);
      lane_of(pool).retry_at = now + settings_.retry_after;
      log_event(LogLevel::warn, "diff_feed_unread", {{"pool", pool}, {"reason", error.what()}});
      continue;
    }
    const std::lock_guard<std::mutex> lock(mutex_);
    Lane& lane = lane_of(pool);
    if (lane.in_flight) continue;  // reset meanwhile (resume() or forget())
    const bool was_resumed = lane.resumed;
    lane.resumed = true;
    lane.failed = false;
    lane.late = false;
    // The subject's end as read now is what the next diff expects (send_front): a stream made
    // again from nothing holds none of the stream sequences this daemon remembers.
    if (!last) {
      lane.stored.clear();
    } else {
      if (!lane.stored.empty() && lane.stored.back().second > last->stream_sequence) {
        lane.stored.clear();
      }
      if (lane.stored.empty() || lane.stored.back().second < last->stream_sequence) {
        lane.stored.emplace_back(last->seq, last->stream_sequence);
      }
      drop_stored(lane, last->seq);
    }
    if (!lane.queue.empty() && lane.queue.front().prev_seq != lane.stored_seq && was_resumed) {
      log_event(LogLevel::warn, "diff_feed_gap",
                {{"pool", pool}, {"from_seq", lane.stored_seq + 1},
                 {"to_seq", lane.queue.front().prev_seq},
                 {"reason", "this daemon does not hold these diffs"}});
    }
    const Clock::time_point checked = Clock::now();
    for (Queued& queued : lane.queue) queued.checked_at = checked;
    log_event(LogLevel::info, "diff_feed_resent",
              {{"pool", pool}, {"stored_seq", lane.stored_seq}, {"queued", lane.queue.size()}});
    send_front(pool, lane);
  }
}

void DiffFeedPublisher::forget(const std::string& pool) {
  const std::lock_guard<std::mutex> lock(mutex_);
  const auto it = lanes_.find(pool);
  if (it == lanes_.end()) return;
  Lane& lane = it->second;
  lane.queue.clear();
  lane.in_flight = false;
  lane.failed = false;
  lane.late = false;
  lane.resumed = false;
  lane.stored.clear();
  lane.snapshot_seqs.clear();
}

void DiffFeedPublisher::snapshot_written(const std::string& pool, std::uint64_t seq) {
  std::string subject;
  std::uint64_t below = 0;
  {
    const std::lock_guard<std::mutex> lock(mutex_);
    Lane& lane = lane_of(pool);
    lane.snapshot_seqs.push_back(seq);
    while (lane.snapshot_seqs.size() > settings_.snapshots_kept) lane.snapshot_seqs.pop_front();
    if (lane.snapshot_seqs.size() < settings_.snapshots_kept || lane.stored.empty()) return;
    const std::uint64_t covered = lane.snapshot_seqs.front();
    // Keep the first stored diff past the covered seq, and always the newest one.
    std::size_t keep_from = lane.stored.size() - 1;
    for (std::size_t i = 0; i < lane.stored.size(); ++i) {
      if (lane.stored[i].first > covered) {
        keep_from = i;
        break;
      }
    }
    if (keep_from == 0) return;
    below = lane.stored[keep_from].second;
    lane.stored.erase(lane.stored.begin(),
                      lane.stored.begin() + static_cast<std::ptrdiff_t>(keep_from));
    subject = lane.subject;
  }
  try {
    cluster::purge_subject_below(connection_, settings_.stream, subject, below);
  } catch (const std::exception& error) {
    // Kept a while longer: the next snapshot's trim purges below a later diff.
    log_event(LogLevel::warn, "diff_feed_trim_failed", {{"pool", pool}, {"reason", error.what()}});
  }
}

DiffFeedStatus DiffFeedPublisher::status(const std::string& pool) const {
  const std::lock_guard<std::mutex> lock(mutex_);
  DiffFeedStatus status;
  const auto it = lanes_.find(pool);
  if (it == lanes_.end()) return status;
  status.resumed = it->second.resumed;
  status.stored_seq = it->second.stored_seq;
  status.queued = it->second.queue.size();
  status.failing = it->second.failed;
  status.failures = it->second.failures;
  return status;
}

bool DiffFeedPublisher::settle(std::chrono::milliseconds timeout) {
  const Clock::time_point deadline = Clock::now() + timeout;
  while (true) {
    {
      const std::lock_guard<std::mutex> lock(mutex_);
      bool quiet = true;
      for (const auto& [pool, lane] : lanes_) {
        if (!lane.queue.empty()) quiet = false;
      }
      if (quiet) return true;
    }
    if (Clock::now() >= deadline) return false;
    pump(Clock::now());
    std::this_thread::sleep_for(std::chrono::milliseconds(5));
  }
}

}  // namespace yoke::failover
