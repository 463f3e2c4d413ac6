// The pieces the takeover measurement is made of: when the owner last said it was alive (its
// heartbeats, heard on core NATS like the standby hears them), a client that resends one batch
// to the standby until it is acknowledged, and the standby's own account of the takeover (its
// `pool_taken` log line).
#pragma once

#include <atomic>
#include <chrono>
#include <cstdint>
#include <filesystem>
#include <memory>
#include <mutex>
#include <optional>
#include <string>
#include <thread>

#include <zmq.hpp>

#include "daemon/cluster/nats_connection.h"
#include "tools/bench/daemon/ingest_load.h"

namespace yoke::bench {

using WallClock = std::chrono::system_clock;

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

struct TakeoverRecord {
  WallClock::time_point logged;  // the line's time: the pool is served from then on
  std::uint64_t silent_ms = 0;   // how long the standby had not heard the owner when it claimed
  std::uint64_t seq = 0;         // the pool's seq the standby took over at
  std::uint64_t epoch = 0;       // the claim's stream sequence
};

// The first `pool_taken` line for `pool` in a yoked JSON log; nullopt when there is none.
std::optional<TakeoverRecord> read_takeover(const std::filesystem::path& log,
                                            const std::string& pool);

}  // namespace yoke::bench
