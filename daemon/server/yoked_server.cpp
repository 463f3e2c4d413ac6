#include "yoked_server.h"

#include <algorithm>
#include <exception>
#include <stdexcept>

#include <boost/asio/post.hpp>
#include <zmq_addon.hpp>

#include "daemon/config/endpoint_address.h"
#include "daemon/logging/log_event.h"
#include "daemon/metrics/http_endpoint.h"
#include "daemon/service/batch_decoder.h"
#include "daemon/service/snapshot_capture.h"
#include "daemon/service/unix_time.h"
#include "daemon/service/wire_types.h"
#include "daemon_metrics.h"
#include "service_notifier.h"
#include "yoke/v1/ingest.pb.h"
#include "yoke/v1/publish.pb.h"

namespace yoke::daemon {
namespace {

using Clock = std::chrono::steady_clock;

std::uint64_t micros(Clock::duration duration) {
  return static_cast<std::uint64_t>(
      std::chrono::duration_cast<std::chrono::microseconds>(duration).count());
}

// At a stop, the ingest socket is read for batches to refuse until it has been empty this long,
// and no longer than the limit in all.
constexpr std::chrono::milliseconds kDrainQuiet{50};
constexpr std::chrono::milliseconds kDrainLimit{500};

// Messages past this many bytes are dropped by ZeroMQ itself (the peer is disconnected): up to
// it, an oversized message is read and answered with OVERSIZED_MESSAGE.
std::int64_t hard_message_cap(std::uint64_t max_message_bytes) {
  return static_cast<std::int64_t>(2 * max_message_bytes + (1 << 20));
}

}  // namespace

YokedServer::YokedServer(const DaemonConfig& config, PoolService& service,
                         storage::SnapshotStore& snapshots)
    : YokedServer(config, service, &snapshots, nullptr) {}

YokedServer::YokedServer(const DaemonConfig& config, PoolService& service, ClusterHooks& cluster)
    : YokedServer(config, service, nullptr, &cluster) {}

YokedServer::YokedServer(const DaemonConfig& config, PoolService& service,
                         storage::SnapshotStore* snapshots, ClusterHooks* cluster)
    : config_(config),
      service_(service),
      snapshots_(snapshots),
      cluster_(cluster),
      zmq_context_(1),
      ingest_(zmq_context_, zmq::socket_type::router),
      publisher_(zmq_context_, zmq::socket_type::pub),
      query_(zmq_context_, zmq::socket_type::router),
      window_timer_(io_),
      snapshot_timer_(io_),
      cluster_timer_(io_),
      signals_(io_, SIGINT, SIGTERM),
      queries_(
          service, config.limits.max_message_bytes,
          [this](bool all_pools, const std::string& pool) {
            return take_snapshot(all_pools ? std::nullopt : std::optional<std::string>(pool));
          },
          [this] { return health(); }),
      metrics_(std::make_unique<DaemonMetrics>()),
      started_(Clock::now()) {
  const std::int64_t cap = hard_message_cap(config.limits.max_message_bytes);
  for (zmq::socket_t* socket : {&ingest_, &query_}) {
    socket->set(zmq::sockopt::maxmsgsize, cap);
    socket->set(zmq::sockopt::linger, 0);
    socket->set(zmq::sockopt::rcvhwm, 100000);
    socket->set(zmq::sockopt::sndhwm, 100000);
  }
  publisher_.set(zmq::sockopt::linger, 0);
  publisher_.set(zmq::sockopt::sndhwm, 100000);
  ingest_.bind(config.endpoints.ingest);
  publisher_.bind(config.endpoints.publish);
  query_.bind(config.endpoints.query);

  const auto metrics_address = parse_host_port(config.endpoints.metrics);
  http_ = std::make_unique<metrics::HttpEndpoint>(
      io_, *metrics_address,
      metrics::HttpHandlers{
          [this] { return metrics_->render(service_, Clock::now() - started_); },
          [this] {
            const v1::Health now = health();
            return metrics::HealthReport{now.ok(), now.status()};
          }});

  ingest_watcher_ = std::make_unique<ZmqSocketWatcher>(io_, ingest_, [this] { on_ingest_message(); });
  query_watcher_ = std::make_unique<ZmqSocketWatcher>(io_, query_, [this] { on_query_message(); });

  // The workers yield a shared core to this loop: it sends the acknowledgements.
  const int worker_nice = static_cast<int>(config.service.worker_nice);
  repairs_ = std::make_unique<RepairThreads>(
      RepairThreads::for_setting(config.service.repair_threads), worker_nice);
  service_.set_repair_listener(
      [this] { boost::asio::post(io_, [this] { on_repairs_finished(); }); });
  service_.set_repair_executor(repairs_.get());
  if (snapshots_ != nullptr) {
    background_ = std::make_unique<BackgroundSnapshot>(
        service_, *snapshots_,
        [this] { boost::asio::post(io_, [this] { on_snapshot_written(); }); }, worker_nice);
    service_.set_collect_listener(
        [this](const std::string& pool, PoolService::EngineCapture* engine) {
          background_->pool_collected(pool, engine);
        });
    // The cluster's log keeps its commits on the loop: the cluster part reads and writes it
    // between windows (claims, epochs), which a commit on another thread would race.
    journal_ = std::make_unique<JournalThread>(
        service_.log(), [this] { boost::asio::post(io_, [this] { on_window_synced(); }); });
  }
}

YokedServer::~YokedServer() {
  journal_.reset();  // a commit in flight ends first (a stop has waited for it already)
  repairs_->join();  // the repairs in flight end on the service's state, which outlives us
  service_.set_collect_listener(nullptr);  // no snapshot starts its write from here
  try {
    service_.finish_repairs();  // nothing is published any more: only the state is kept
  } catch (const std::exception& error) {
    log_event(LogLevel::error, "repair_failed", {{"reason", error.what()}});
  }
  service_.set_repair_executor(nullptr);
  service_.set_repair_listener(nullptr);
  background_.reset();  // waits for a write in progress
}

int YokedServer::run() {
  // systemd (Type=notify) learns here when the daemon serves and when it begins to stop.
  const ServiceNotifier manager = ServiceNotifier::from_environment();
  signals_.async_wait([this, manager](const boost::system::error_code& error, int signal) {
    if (error) return;
    log_event(LogLevel::info, "stopping", {{"signal", signal}});
    manager.stopping("stopping: closing the last window, writing a final snapshot");
    shut_down(kYokedOk);
  });
  ingest_watcher_->start();
  query_watcher_->start();
  if (snapshots_ != nullptr) {
    const std::vector<std::uint64_t> kept = snapshots_->positions();
    if (!kept.empty()) last_snapshot_position_ = kept.front();
  }
  arm_snapshot_timer();
  if (cluster_ != nullptr) arm_cluster_timer();
  log_event(LogLevel::info, "serving",
            {{"repair_threads", repairs_->threads()},
             {"worker_nice", config_.service.worker_nice},
             {"ingest", config_.endpoints.ingest},
             {"publish", config_.endpoints.publish},
             {"query", config_.endpoints.query},
             {"metrics", config_.endpoints.metrics}});
  // Every socket was bound by the constructor and recovery came before it.
  manager.ready("serving on " + config_.endpoints.ingest);
  io_.run();
  return exit_status_;
}

void YokedServer::on_ingest_message() {
  // A window synced meanwhile: its acks go now, not after the rest of this burst of messages.
  if (journal_ != nullptr && !stopping_ && journal_->ready()) {
    on_window_synced();
    if (stopping_) return;  // its journal failed: the stop answered the queued messages
  }
  Envelope frames;
  if (!zmq::recv_multipart(ingest_, std::back_inserter(frames), zmq::recv_flags::dontwait)) return;
  metrics_->ingest_message();
  if (frames.size() < 2) return;  // a ROUTER always prepends the peer's identity
  zmq::message_t payload = std::move(frames.back());
  frames.pop_back();  // what is left is the envelope: identity, and a delimiter from REQ peers

  if (stopping_) {
    v1::IngestReply reply;
    reply.set_version(v1::PROTOCOL_VERSION_1);
    *reply.mutable_ack() = unread_refusal("the daemon is shutting down");
    metrics_->acknowledged(reply.ack());
    this->reply(ingest_, frames, reply.SerializeAsString());
    return;
  }
  const Ticket ticket = next_ticket_++;
  // A new pool's big first batch is decoded on a worker: its bytes are moved there, not copied.
  std::optional<v1::Ack> ack = service_.offer(ticket, payload.to_string_view(), [&payload] {
    auto kept = std::make_shared<zmq::message_t>(std::move(payload));
    return PoolService::KeptMessage{kept, kept->to_string_view()};
  });
  if (ack) {
    log_refusal(*ack);
    metrics_->acknowledged(*ack);
    v1::IngestReply reply;
    reply.set_version(v1::PROTOCOL_VERSION_1);
    *reply.mutable_ack() = std::move(*ack);
    this->reply(ingest_, frames, reply.SerializeAsString());
    return;
  }
  waiting_.emplace(ticket, std::move(frames));
  // A retirement ends its window: the pool's next batch must find it gone.
  if (service_.window_events() >= config_.batching.max_events || service_.retire_waiting()) {
    close_window();
    if (journal_ != nullptr && journal_->busy() &&
        service_.window_events() >= config_.batching.max_events) {
      // Full while the window before it syncs: nothing more is read until that sync ends
      // (ZeroMQ's queue holds the rest, as when the loop synced itself), so a window stays
      // near max_events and a stuck disk cannot grow it without bound.
      ingest_watcher_->stop();
      ingest_paused_ = true;
    }
  } else {
    arm_window_timer();
  }
}

void YokedServer::log_refusal(const v1::Ack& ack) {
  if (!ack.has_rejected()) return;
  const v1::Error& first = ack.rejected().errors(0);
  if (refuses_unread_message(ack)) {
    log_event(LogLevel::warn, "message_rejected",
              {{"code", error_code_name(first.code())}, {"reason", first.message()}});
  } else {
    log_event(LogLevel::warn, "batch_rejected",
              {{"pool", ack.pool()},
               {"client_id", ack.client_id()},
               {"client_batch", ack.client_batch()},
               {"code", error_code_name(first.code())},
               {"reason", first.message()}});
  }
}

void YokedServer::reply(zmq::socket_t& socket, Envelope& envelope, const std::string& payload) {
  try {
    for (zmq::message_t& frame : envelope) socket.send(frame, zmq::send_flags::sndmore);
    socket.send(zmq::buffer(payload), zmq::send_flags::dontwait);
  } catch (const zmq::error_t& error) {
    // The peer is gone or its queue is full: it will retry, and the retry rule answers it.
    log_event(LogLevel::warn, "reply_dropped", {{"reason", error.what()}});
  }
}

void YokedServer::arm_window_timer() {
  if (window_timer_armed_) return;
  window_timer_armed_ = true;
  window_timer_.expires_after(std::chrono::microseconds(config_.batching.max_delay_us));
  window_timer_.async_wait([this](const boost::system::error_code& error) {
    window_timer_armed_ = false;
    if (!error) close_window();
  });
}

void YokedServer::close_window() {
  if (window_timer_armed_) {
    window_timer_.cancel();
    window_timer_armed_ = false;
  }
  if (service_.window_empty()) return;
  if (journal_ != nullptr && journal_->busy()) {
    close_after_sync_ = true;  // one window syncs at a time: this one follows it
    return;
  }
  close_after_sync_ = false;
  const Clock::time_point closed = Clock::now();
  events_since_snapshot_ += service_.window_events();
  if (journal_ != nullptr) {
    // Written and synced on the journal thread; on_window_synced() continues on the loop.
    journal_->commit(service_.begin_seal(), closed);
    return;
  }
  std::vector<std::pair<Ticket, v1::Ack>> acks;
  std::vector<std::string> lost;  // pools whose windows the shared log no longer counts
  try {
    acks = service_.seal(&lost);
  } catch (const std::exception& error) {
    on_commit_failed(error);
    return;
  }
  after_seal(closed, Clock::now() - closed, std::move(acks), lost);
}

void YokedServer::on_commit_failed(const std::exception& error) {
  if (cluster_ != nullptr) {
    // A replicated log that did not answer in time (a leader election): the window's fate
    // is unknown, so its pools are read from the log again and claimed anew; the batches
    // are refused (NOT_OWNER, retry) and their retries answered by the ledger later.
    log_event(LogLevel::error, "log_commit_failed", {{"reason", error.what()}});
    settle();  // the cluster part gives up every pool: no worker may hold one
    send_acks(cluster_->commit_failed(service_, Clock::now()));
    return;
  }
  // Nothing of this window is acknowledged: its batches get UNAVAILABLE (shut_down), and
  // the journal has cut them (journal.h); recovery keeps the acknowledged windows.
  log_event(LogLevel::critical, "journal_failed", {{"reason", error.what()}});
  journal_failed_ = true;
  shut_down(kYokedFailure);
}

void YokedServer::on_window_synced() {
  if (stopping_) return;  // a stop waits for the sync first: nothing is left to take
  std::optional<JournalThread::Synced> synced = journal_->take();
  if (!synced) return;  // taken already (finish_sync()), or still syncing
  if (synced->failure) {
    try {
      std::rethrow_exception(synced->failure);
    } catch (const std::exception& error) {
      on_commit_failed(error);
    }
    return;
  }
  after_seal(synced->closed, synced->took, service_.end_seal(synced->committed), {});
  if (stopping_) return;
  // The log is the loop's until the next window closes: snapshot work that waited for it.
  if (background_ != nullptr) {
    on_snapshot_written();
    start_snapshot_after_sync();
  }
  // Due while this one synced (its timer, max_events or a retirement): it closes now.
  if (!finishing_sync_ && !service_.window_empty() &&
      (close_after_sync_ || service_.window_events() >= config_.batching.max_events ||
       service_.retire_waiting())) {
    close_window();
  }
  if (ingest_paused_) {
    ingest_paused_ = false;
    ingest_watcher_->start();
  }
}

void YokedServer::finish_sync() {
  if (journal_ == nullptr || !journal_->busy()) return;
  journal_->wait();
  const bool outer = finishing_sync_;  // a settle() nested in the completion
  finishing_sync_ = true;
  on_window_synced();
  finishing_sync_ = outer;
  if (close_after_sync_ && !stopping_) arm_window_timer();  // not closed by the completion
}

void YokedServer::after_seal(Clock::time_point closed, Clock::duration sync_took,
                             std::vector<std::pair<Ticket, v1::Ack>> acks,
                             const std::vector<std::string>& lost) {
  metrics_->journal_synced(sync_took, acks.size());
  if (cluster_ != nullptr && !lost.empty()) {
    settle();
    cluster_->lost(service_, lost, Clock::now());
    // The refusals were written before the cluster part learnt who serves those pools now.
    for (auto& [ticket, ack] : acks) {
      if (!ack.has_rejected() || ack.rejected().errors(0).code() != v1::Error::NOT_OWNER) continue;
      if (auto refusal = service_.routing().refusal(ack.pool(), Asked::ingest)) {
        *ack.mutable_rejected()->mutable_errors(0) = std::move(*refusal);
      }
    }
  }
  send_acks(std::move(acks));

  service_.start_apply(closed);
  handle_repairs(service_.finish_repairs());  // retirements, and repairs already done
  // Not while a snapshot settles the windows (it is about to be written).
  if (!snapshotting_ && config_.snapshots.after_events > 0 &&
      events_since_snapshot_ >= config_.snapshots.after_events) {
    try {
      snapshot_in_background();
    } catch (const std::exception& failure) {
      log_event(LogLevel::error, "snapshot_failed", {{"reason", failure.what()}});
      events_since_snapshot_ = 0;  // try again after as many events, not after every window
    }
  }
}

void YokedServer::on_repairs_finished() {
  if (stopping_) return;
  try {
    handle_repairs(service_.finish_repairs());
  } catch (const std::exception& error) {
    // As when the loop repaired: a pool the engine could not repair stops the daemon; the
    // journal holds its batches, and recovery replays them.
    log_event(LogLevel::critical, "repair_failed", {{"reason", error.what()}});
    shut_down(kYokedFailure);
  }
}

void YokedServer::handle_repairs(PoolService::RepairsDone done) {
  for (std::size_t i = 0; i < done.diffs.size(); ++i) {
    v1::Diff& diff = done.diffs[i];
    metrics_->committed(diff);
    publish(diff, done.window_closed[i]);
    if (diff.retired()) {
      metrics_->pool_retired(diff.pool());
      log_event(LogLevel::info, "pool_retired", {{"pool", diff.pool()}, {"seq", diff.seq()}});
    }
    service_.reuse_diff(std::move(diff));  // its pair messages serve a later repair's diff
  }
  for (const auto& [ticket, ack] : done.replies) log_refusal(ack);
  send_acks(std::move(done.replies));
  answer_held_queries();
  if (service_.window_empty() || stopping_) return;
  if (service_.window_events() >= config_.batching.max_events || service_.retire_waiting()) {
    // Not from here: close_window() itself hands repairs over and collects.
    boost::asio::post(io_, [this] {
      if (!stopping_) close_window();
    });
  } else {
    arm_window_timer();
  }
}

void YokedServer::answer_held_queries() {
  bool answered = false;
  for (auto it = held_queries_.begin(); it != held_queries_.end();) {
    if (service_.repairing(it->first) || prices_first(it->first, it->second)) {
      ++it;
      continue;
    }
    for (HeldQuery& held : it->second) answer_query(held.envelope, held.payload);
    answered = true;
    it = held_queries_.erase(it);
  }
  if (answered) query_watcher_->poke();
}

bool YokedServer::prices_first(const std::string& pool, const std::vector<HeldQuery>& held) {
  const bool explains = std::any_of(held.begin(), held.end(),
                                    [](const HeldQuery& query) { return query.reads_prices; });
  if (!explains || !service_.prices_on_worker(pool)) return false;
  service_.drain(pool);
  return true;
}

void YokedServer::settle() {
  finish_sync();
  service_.wait_repairs();
  on_repairs_finished();  // a failed repair stops the daemon here too
}

void YokedServer::settle_all() {
  for (;;) {
    settle();
    if (stopping_ || (service_.window_empty() && !service_.repairs_in_flight())) return;
    close_window();
  }
}

void YokedServer::send_acks(std::vector<std::pair<Ticket, v1::Ack>> acks) {
  for (auto& [ticket, ack] : acks) {
    const auto peer = waiting_.find(ticket);
    if (peer == waiting_.end()) continue;
    metrics_->acknowledged(ack);
    v1::IngestReply reply;
    reply.set_version(v1::PROTOCOL_VERSION_1);
    *reply.mutable_ack() = std::move(ack);
    this->reply(ingest_, peer->second, reply.SerializeAsString());
    waiting_.erase(peer);
  }
  ingest_watcher_->poke();
}

void YokedServer::publish(v1::Diff& diff, Clock::time_point closed) {
  const Clock::time_point now = Clock::now();
  diff.mutable_timings()->set_commit_to_publish_us(micros(now - closed));
  diff.mutable_timings()->set_publish_unix_us(unix_time_us());
  // A retired pool's progress is gone with it: progress_of would make it again.
  if (!diff.retired()) service_.progress_of(diff.pool()).last_timings = diff.timings();
  v1::Publication publication;
  publication.set_version(v1::PROTOCOL_VERSION_1);
  publication.mutable_diff()->Swap(&diff);  // not copied: lent for the serialization
  const std::string bytes = publication.SerializeAsString();
  diff.Swap(publication.mutable_diff());
  try {
    publisher_.send(zmq::buffer(diff.pool()), zmq::send_flags::sndmore);
    publisher_.send(zmq::buffer(bytes), zmq::send_flags::dontwait);
  } catch (const zmq::error_t& error) {
    log_event(LogLevel::warn, "publish_failed", {{"pool", diff.pool()}, {"reason", error.what()}});
  }
  if (cluster_ != nullptr) cluster_->published(diff, bytes);
  metrics_->published(Clock::now() - closed);
}

void YokedServer::on_query_message() {
  Envelope frames;
  if (!zmq::recv_multipart(query_, std::back_inserter(frames), zmq::recv_flags::dontwait)) return;
  if (frames.size() < 2) return;
  zmq::message_t payload = std::move(frames.back());
  frames.pop_back();
  if (const auto read = QueryHandler::pool_read_by(payload.to_string_view());
      read && (service_.repairing(read->pool) ||
               (read->reads_prices && service_.prices_on_worker(read->pool)))) {
    // A worker holds that pool's state (a repair, or the search that makes an explanation's
    // prices): answered once its jobs are collected, and its batches wait meanwhile, so that
    // no further repair of it is handed over.
    held_queries_[read->pool].push_back({std::move(frames), std::move(payload), read->reads_prices});
    service_.drain(read->pool);
    return;
  }
  answer_query(frames, payload);
  query_watcher_->poke();
}

void YokedServer::answer_query(Envelope& envelope, const zmq::message_t& payload) {
  std::string kind;
  const std::string answer = queries_.handle(payload.to_string_view(), &kind);
  metrics_->query(kind);
  reply(query_, envelope, answer);
}

void YokedServer::snapshot_in_background() {
  if (background_ == nullptr) {
    take_snapshot();
    return;
  }
  // One at a time: a trigger meanwhile is taken when this one is written (on_snapshot_written).
  if (background_->busy() || start_after_sync_ || journal_failed_ || stopping_) return;
  events_since_snapshot_ = 0;
  // The ledger may hold batches of the open window: sealed first, so that every mark it
  // holds of a pool free now is durable (the batches of pools repairing wait, unchecked).
  // Not inside finish_sync(), whose caller closes the next window itself (a stop refuses it).
  if (!finishing_sync_) close_window();
  // The snapshot is named by the log's end, the loop's again once the sync is over: it starts
  // from that sync's completion (on_window_synced), and the loop serves meanwhile.
  start_after_sync_ = true;
  start_snapshot_after_sync();
}

void YokedServer::start_snapshot_after_sync() {
  if (!start_after_sync_ || journal_->busy()) return;
  start_after_sync_ = false;
  if (journal_failed_ || stopping_) return;
  // A window that waited for the sync stays open: its marks are above its pools' seqs, which
  // the snapshot leaves out (snapshot_mark), and its pools' states do not hold it yet.
  try {
    background_->start();
  } catch (const std::exception& failure) {
    // The journal still holds everything: a failed snapshot costs restart time, not data.
    log_event(LogLevel::error, "snapshot_failed", {{"reason", failure.what()}});
  }
}

void YokedServer::on_snapshot_written() {
  if (background_ == nullptr || stopping_) return;
  // The log is the journal thread's while a window syncs (drop_before below): the result then
  // waits for the sync's completion, which comes back here.
  if (journal_->busy()) return;
  std::optional<BackgroundSnapshot::Written> written = background_->take_result();
  if (!written) return;
  if (written->failure) {
    try {
      std::rethrow_exception(written->failure);
    } catch (const std::exception& failure) {
      // The journal still holds everything: a failed snapshot costs restart time, not data.
      log_event(LogLevel::error, "snapshot_failed", {{"reason", failure.what()}});
    }
    return;
  }
  for (const auto& [pool, seq] : written->pool_seqs) {
    if (service_.progress(pool) != nullptr) service_.progress_of(pool).last_snapshot_seq = seq;
  }
  last_snapshot_position_ = written->position;
  std::size_t dropped = 0;
  if (const auto oldest = snapshots_->oldest_needed()) dropped = service_.log().drop_before(*oldest);
  metrics_->snapshot_written(written->took);
  log_event(LogLevel::info, "snapshot_written",
            {{"path", written->path},
             {"pools", written->pool_seqs.size()},
             {"journal_position", written->position},
             {"segments_dropped", dropped},
             {"ms", micros(written->took) / 1000}});
  // A trigger skipped while this one was in progress is taken now.
  if (!snapshotting_ && config_.snapshots.after_events > 0 &&
      events_since_snapshot_ >= config_.snapshots.after_events) {
    snapshot_in_background();
  }
}

void YokedServer::finish_background_snapshot() {
  if (background_ == nullptr || !background_->busy()) return;
  while (background_->capturing() && !stopping_) settle();
  if (background_->capturing()) return;  // stopped: a repair failed; the snapshot is dropped
  background_->wait_written();
  finish_sync();  // the log is the loop's again: the completion takes the result
  on_snapshot_written();
}

v1::SnapshotTaken YokedServer::take_snapshot(const std::optional<std::string>& only_pool) {
  // One snapshot at a time, in position order: a background one in progress is finished
  // first (and starts no other: snapshotting_), one waiting for a sync to start is dropped
  // (this one is newer). The ledger may hold batches of the open window, and workers the
  // pools: seal and apply everything first.
  snapshotting_ = true;
  start_after_sync_ = false;
  finish_background_snapshot();
  settle_all();
  snapshotting_ = false;
  if (journal_failed_) {
    // The retry ledger holds batches that never became durable: a snapshot of it would
    // answer their retries as duplicates. Only the journal on disk may be trusted now.
    throw std::runtime_error("no snapshot after a journal failure");
  }
  const Clock::time_point start = Clock::now();
  if (cluster_ != nullptr) {
    v1::SnapshotTaken taken = cluster_->snapshot(service_, only_pool);
    if (!only_pool) {
      // One pool's snapshot leaves the others to the timer: it must not look idle.
      events_since_snapshot_ = 0;
      last_snapshot_position_ = service_.next_journal_position();
    }
    metrics_->snapshot_written(Clock::now() - start);
    log_event(LogLevel::info, "snapshot_written",
              {{"pools", taken.pools_size()}, {"ms", micros(Clock::now() - start) / 1000}});
    return taken;
  }
  events_since_snapshot_ = 0;
  const std::vector<v1::SnapshotRecord> records = capture_snapshot(service_);
  const std::string path = snapshots_->write(service_.next_journal_position(), records);
  last_snapshot_position_ = service_.next_journal_position();
  v1::SnapshotTaken taken;
  taken.set_path(path);
  for (const v1::SnapshotRecord& record : records) {
    service_.progress_of(record.pool()).last_snapshot_seq = record.seq();
    if (only_pool && record.pool() != *only_pool) continue;  // written, but not asked about
    v1::SnapshotTaken::Entry& entry = *taken.add_pools();
    entry.set_pool(record.pool());
    entry.set_seq(record.seq());
    entry.set_incarnation(record.incarnation());
  }
  // Log entries older than the oldest kept snapshot are no longer needed by any fallback.
  std::size_t dropped = 0;
  if (const auto oldest = snapshots_->oldest_needed()) dropped = service_.log().drop_before(*oldest);
  metrics_->snapshot_written(Clock::now() - start);
  log_event(LogLevel::info, "snapshot_written",
            {{"path", path},
             {"pools", records.size()},
             {"journal_position", service_.next_journal_position()},
             {"segments_dropped", dropped},
             {"ms", micros(Clock::now() - start) / 1000}});
  return taken;
}

void YokedServer::arm_snapshot_timer() {
  snapshot_timer_.expires_after(std::chrono::seconds(config_.snapshots.interval_seconds));
  snapshot_timer_.async_wait([this](const boost::system::error_code& error) {
    if (error || stopping_) return;
    try {
      // Idle since the last snapshot: the newest file already holds this state.
      if (!service_.window_empty() || service_.syncing() ||
          last_snapshot_position_ != service_.next_journal_position()) {
        snapshot_in_background();
      }
    } catch (const std::exception& failure) {
      // The journal still holds everything: a failed snapshot costs restart time, not data.
      log_event(LogLevel::error, "snapshot_failed", {{"reason", failure.what()}});
    }
    arm_snapshot_timer();
  });
}

void YokedServer::arm_cluster_timer() {
  cluster_timer_.expires_after(cluster_->tick_interval());
  cluster_timer_.async_wait([this](const boost::system::error_code& error) {
    if (error || stopping_) return;
    // A claim or a lost pool changes what the window may hold, and which pools there are.
    settle_all();
    try {
      std::vector<v1::Diff> diffs = cluster_->tick(service_, Clock::now());
      const Clock::time_point now = Clock::now();
      for (v1::Diff& diff : diffs) publish(diff, now);
    } catch (const std::exception& failure) {
      log_event(LogLevel::error, "cluster_tick_failed", {{"reason", failure.what()}});
    }
    arm_cluster_timer();
  });
}

v1::Health YokedServer::health() const {
  v1::Health health;
  health.set_ok(!stopping_ && !journal_failed_);
  health.set_status(journal_failed_ ? "the journal cannot be written"
                    : stopping_     ? "shutting down"
                                    : "ok");
  health.set_uptime_s(static_cast<std::uint64_t>(
      std::chrono::duration_cast<std::chrono::seconds>(Clock::now() - started_).count()));
  health.set_pools(static_cast<std::uint32_t>(service_.registry().size()));
  health.set_daemon_version(YOKE_VERSION);
  return health;
}

void YokedServer::shut_down(int status) {
  if (stopping_) return;
  if (status != kYokedOk) {
    // The repairs in flight are of durable windows: their diffs and held work are collected
    // (the held batches are then refused below) before the cluster part is told.
    try {
      settle();
    } catch (const std::exception& error) {
      log_event(LogLevel::error, "repair_failed", {{"reason", error.what()}});
    }
    if (stopping_) return;
  }
  if (status == kYokedOk) {
    try {
      close_window();
      take_snapshot();
    } catch (const std::exception& error) {
      log_event(LogLevel::error, "final_snapshot_failed", {{"reason", error.what()}});
      status = kYokedFailure;
    }
    if (stopping_) return;  // the last window's commit failed: that stop has been made
  }
  if (cluster_ != nullptr) cluster_->leave(service_);
  stopping_ = true;
  exit_status_ = status;
  refuse_in_flight(journal_failed_ ? "the journal cannot be written: the batch was not applied "
                                     "(resend it once the daemon is back)"
                                   : "the daemon is shutting down: the batch was not applied "
                                     "(resend it once the daemon is back)");
  // The last window's acknowledgements and diffs may still sit in ZeroMQ's queues: give them a
  // moment to leave when the sockets close (a lost ack only costs the client a retry).
  for (zmq::socket_t* socket : {&ingest_, &publisher_, &query_}) {
    socket->set(zmq::sockopt::linger, 1000);
  }
  signals_.cancel();
  window_timer_.cancel();
  snapshot_timer_.cancel();
  cluster_timer_.cancel();
  ingest_watcher_->stop();
  query_watcher_->stop();
  http_->stop();
  io_.stop();
}

void YokedServer::refuse_in_flight(const std::string& reason) {
  std::vector<std::pair<Ticket, v1::Ack>> refusals =
      service_.refuse_window(make_error(v1::Error::UNAVAILABLE, reason));
  if (!refusals.empty()) {
    log_event(LogLevel::warn, "window_refused", {{"batches", refusals.size()}, {"reason", reason}});
  }
  send_acks(std::move(refusals));
  std::size_t drained = 0;
  const Clock::time_point give_up = Clock::now() + kDrainLimit;
  Clock::time_point quiet_until = Clock::now() + kDrainQuiet;
  try {
    drain_ingest(reason, give_up, quiet_until, drained);
  } catch (const zmq::error_t& error) {
    log_event(LogLevel::warn, "drain_failed", {{"reason", error.what()}});
  }
  if (drained > 0) log_event(LogLevel::warn, "unread_refused", {{"messages", drained}});
}

void YokedServer::drain_ingest(const std::string& reason, Clock::time_point give_up,
                               Clock::time_point quiet_until, std::size_t& drained) {
  for (;;) {
    const Clock::time_point now = Clock::now();
    const Clock::time_point until = std::min(give_up, quiet_until);
    if (now >= until) break;
    zmq::pollitem_t item{ingest_.handle(), 0, ZMQ_POLLIN, 0};
    zmq::poll(&item, 1, std::chrono::duration_cast<std::chrono::milliseconds>(until - now));
    Envelope frames;
    while (zmq::recv_multipart(ingest_, std::back_inserter(frames), zmq::recv_flags::dontwait)) {
      if (frames.size() >= 2) {
        metrics_->ingest_message();
        frames.pop_back();  // the message, unread
        v1::IngestReply answer;
        answer.set_version(v1::PROTOCOL_VERSION_1);
        *answer.mutable_ack() = unread_refusal(reason);
        metrics_->acknowledged(answer.ack());
        reply(ingest_, frames, answer.SerializeAsString());
        ++drained;
      }
      frames.clear();
      quiet_until = Clock::now() + kDrainQuiet;
    }
  }
}

v1::Ack YokedServer::unread_refusal(const std::string& reason) {
  v1::Ack ack;
  *ack.mutable_rejected()->add_errors() = make_error(v1::Error::UNAVAILABLE, reason);
  return ack;
}

}  // namespace yoke::daemon
