// The query and control socket's requests (proto/yoke/v1/query.proto), answered from the
// service's current state: every reply that describes a pool carries the seq it describes.
// A request about a pool the service does not serve (its PoolRouting) is refused as a batch
// would be (NOT_OWNER with the query endpoint of the instance serving it, UNKNOWN_POOL).
#pragma once

#include <cstdint>
#include <functional>
#include <optional>
#include <string>
#include <string_view>

#include "pool_service.h"
#include "yoke/v1/query.pb.h"

namespace yoke::daemon {

class QueryHandler {
 public:
  // Writes a snapshot now (every pool, or the named one's file set) and says what it wrote.
  // May throw std::exception: the reply is then an INTERNAL error.
  using SnapshotNow = std::function<v1::SnapshotTaken(bool all_pools, const std::string& pool)>;
  using HealthNow = std::function<v1::Health()>;

  QueryHandler(PoolService& service, std::size_t max_message_bytes, SnapshotNow snapshot_now,
               HealthNow health_now);

  // One request's bytes in, the serialized QueryReply out. Never throws for bad input. When
  // `kind` is given it receives what was asked, for metrics: "summary", ..., "health", or
  // "unknown" (no kind this daemon knows), "malformed" (unreadable), "oversized".
  std::string handle(std::string_view message, std::string* kind = nullptr);

  // The pool whose engine state answering `message` reads (a well-formed request of version 1
  // about one pool, snapshots aside: they wait for every pool themselves), and whether it
  // reads the prices (explain: with the phantom vertex they may cost a search first,
  // Pool::certificate_prices_due); nothing otherwise. A server whose repairs run on worker
  // threads holds such a request while that pool's repair is in flight
  // (PoolService::repairing), and while its prices are made (PoolService::prices_on_worker).
  // O(message).
  struct PoolRead {
    std::string pool;
    bool reads_prices = false;
  };
  static std::optional<PoolRead> pool_read_by(std::string_view message);

  // Alternatives listed when a request asks for 0, and the most it may ask for.
  static constexpr std::uint32_t kDefaultAlternatives = 5;
  static constexpr std::uint32_t kMostAlternatives = 1000;

 private:
  v1::QueryReply answer(const v1::QueryRequest& request);

  PoolService& service_;
  std::size_t max_message_bytes_;
  SnapshotNow snapshot_now_;
  HealthNow health_now_;
};

}  // namespace yoke::daemon
