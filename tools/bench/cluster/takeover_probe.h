// Two pieces of the takeover measurement (the third is the standby's log, daemon_log.h): when
// the owner last said it was alive (its heartbeats, heard on core NATS as the standby hears
// them), and a client that resends one batch to the standby until it is acknowledged.
#pragma once

#include <atomic>
#include <chrono>
#include <cstdint>
#include <memory>
#include <mutex>
#include <optional>
#include <string>
#include <thread>
#include <vector>

#include <zmq.hpp>

#include "daemon/cluster/nats_connection.h"
#include "tools/bench/cluster/daemon_log.h"
#include "tools/bench/daemon/ingest_load.h"

namespace yoke::bench {

// Listens to `<prefix>.beat.<instance>` on its own thread (polled every millisecond) and
// remembers when the last beat arrived. Connects at construction (throws ClusterError).
class BeatWatch {
 public:
  BeatWatch(const std::vector<std::string>& servers, const std::string& subject);
  ~BeatWatch();
  BeatWatch(const BeatWatch&) = delete;
  BeatWatch& operator=(const BeatWatch&) = delete;

  // The arrival of the newest beat so far; nullopt before the first.
  std::optional<WallClock::time_point> last_beat() const;
  std::uint64_t beats() const { return beats_; }

 private:
  void run(const std::string& subject);
  std::unique_ptr<cluster::NatsConnection> connection_;
  std::atomic<bool> stopping_{false};
  std::atomic<std::uint64_t> beats_{0};
  mutable std::mutex mutex_;
  std::optional<WallClock::time_point> last_;
  std::thread thread_;
};

struct ResendResult {
  std::chrono::steady_clock::time_point acknowledged;
  std::uint64_t seq = 0;
  bool duplicate = false;   // the batch had been applied before the failure
  int not_owner = 0;        // NOT_OWNER refusals before the acknowledgement
  int silent = 0;           // tries that got no answer within the try's wait
};

// Sends `batch` to `endpoint` and again every `retry` while the answer is NOT_OWNER or none
// comes, until it is acknowledged. Throws on any other refusal, or after `limit`.
ResendResult resend_until_acknowledged(zmq::context_t& context, const std::string& endpoint,
                                       const EncodedBatch& batch, std::chrono::milliseconds retry,
                                       std::chrono::seconds limit);

}  // namespace yoke::bench
