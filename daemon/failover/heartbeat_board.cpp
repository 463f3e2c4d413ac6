#include "heartbeat_board.h"

#include <algorithm>

namespace yoke::failover {

void HeartbeatBoard::heard(const v1::Heartbeat& heartbeat, Clock::time_point at) {
  const std::string& instance = heartbeat.owner().instance();
  auto it = heard_.find(instance);
  if (it == heard_.end()) {
    heard_.emplace(instance, Heard{heartbeat.leaving() ? Clock::time_point{} : at, heartbeat});
    return;
  }
  // A restart begins counting again at 1: a smaller beat is new when it was sent later.
  const v1::Heartbeat& before = it->second.heartbeat;
  const bool same_run_older = heartbeat.beat() <= before.beat() &&
                              heartbeat.sent_unix_us() <= before.sent_unix_us();
  if (same_run_older) return;
  it->second = Heard{std::max(at, it->second.at), heartbeat};
  if (heartbeat.leaving()) it->second.at = Clock::time_point{};  // silent from now on
}

Clock::duration HeartbeatBoard::silent_for(const std::string& instance,
                                           Clock::time_point now) const {
  const auto it = heard_.find(instance);
  if (it != heard_.end() && it->second.heartbeat.leaving()) return Clock::duration::max();
  const Clock::time_point since =
      it == heard_.end() ? listening_since_ : std::max(listening_since_, it->second.at);
  return now > since ? now - since : Clock::duration::zero();
}

const v1::Heartbeat* HeartbeatBoard::last(const std::string& instance) const {
  const auto it = heard_.find(instance);
  return it == heard_.end() ? nullptr : &it->second.heartbeat;
}

}  // namespace yoke::failover
