#include "takeover_rule.h"

#include <algorithm>

namespace yoke::failover {
namespace {

// 0 for the configured owner, 1.. for the standbys; nullopt for an instance with no role.
std::optional<std::size_t> rank_of(const PoolStanding& pool, const std::string& self) {
  if (self == pool.configured_owner) return 0;
  const auto it = std::find(pool.standbys.begin(), pool.standbys.end(), self);
  if (it == pool.standbys.end()) return std::nullopt;
  return static_cast<std::size_t>(it - pool.standbys.begin()) + 1;
}

}  // namespace

std::optional<std::string> claim_reason(const PoolStanding& pool, const std::string& self,
                                        const HeartbeatBoard& board, const TakeoverTimes& times,
                                        Clock::time_point now) {
  if (pool.served_here) return std::nullopt;
  const std::optional<std::size_t> rank = rank_of(pool, self);
  if (!rank) return std::nullopt;
  if (pool.serving == self) return std::string("restart");
  if (!pool.serving && *rank == 0) return std::string("start");

  const std::string& silent_one = pool.serving ? *pool.serving : pool.configured_owner;
  const Clock::duration patience =
      times.takeover + static_cast<Clock::rep>(*rank) * times.heartbeat;
  if (board.silent_for(silent_one, now) < patience) return std::nullopt;
  return std::string(pool.serving ? "takeover" : "start");
}

}  // namespace yoke::failover
