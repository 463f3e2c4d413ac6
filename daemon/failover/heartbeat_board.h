// What this daemon has heard from the other daemons of its cluster: when each one's last
// heartbeat arrived (by this process's steady clock, never the sender's) and what it said.
// Fed from the heartbeat subscription by the loop; read by the takeover rule. One thread.
#pragma once

#include <algorithm>
#include <chrono>
#include <map>
#include <string>

#include "yoke/v1/cluster.pb.h"

namespace yoke::failover {

using Clock = std::chrono::steady_clock;

class HeartbeatBoard {
 public:
  // Silence is counted from `listening_since` for a daemon never heard (this process cannot
  // know what happened before it listened).
  explicit HeartbeatBoard(Clock::time_point listening_since) : listening_since_(listening_since) {}

  // Records a heartbeat received at `at`. A beat older than the last one heard from the same
  // run of that daemon (beat numbers count up within a run) is ignored. O(log instances).
  void heard(const v1::Heartbeat& heartbeat, Clock::time_point at);

  // This process was stalled (paused, or its loop blocked) until `now`: beats that arrived
  // meanwhile may still sit unread in the connection, so silence is counted from `now` again
  // for everyone. O(1).
  void listen_again(Clock::time_point now) { listening_since_ = std::max(listening_since_, now); }

  // How long `instance` has been silent at `now`; duration::max() after it said it was leaving
  // (until it beats again). O(log instances).
  Clock::duration silent_for(const std::string& instance, Clock::time_point now) const;

  // The last heartbeat of `instance`, or nullptr if none was heard.
  const v1::Heartbeat* last(const std::string& instance) const;

 private:
  struct Heard {
    Clock::time_point at;
    v1::Heartbeat heartbeat;
  };
  Clock::time_point listening_since_;
  std::map<std::string, Heard, std::less<>> heard_;
};

}  // namespace yoke::failover
