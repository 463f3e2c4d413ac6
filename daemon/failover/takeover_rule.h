// When a daemon claims a pool: the one decision of failover that is made by time rather than
// by the log. Safety never depends on it (the log's rule decides which claim counts, and a
// deposed owner can no longer have a window counted); it only decides how soon service
// resumes and how rarely two daemons claim at once. Pure: the caller supplies the clock.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "heartbeat_board.h"

namespace yoke::failover {

// One pool as this daemon sees it.
struct PoolStanding {
  std::string pool;
  std::string configured_owner;       // [cluster.instances.*] owns
  std::vector<std::string> standbys;  // stands_by, in instance name order
  // The instance whose claim is in force by the log; nullopt before any claim was accepted.
  std::optional<std::string> serving;
  bool served_here = false;  // this process serves it now (its claim is in force and it loaded it)
};

struct TakeoverTimes {
  Clock::duration heartbeat;  // the heartbeat interval
  Clock::duration takeover;   // silence after which a pool's server is presumed gone
};

// The reason to claim `pool` now ("start", "restart" or "takeover"), or nullopt to wait:
// - the configured owner claims a pool nobody serves, or one the log says it served in an
//   earlier run of this process ("restart"), at once;
// - whoever may serve the pool (its configured owner or a standby) claims it from a silent
//   server once the silence reaches takeover + rank x heartbeat, rank being its place in
//   [owner, standbys...]: the standbys' claims are staggered so that one normally wins alone,
//   and a live server is never challenged (a returning owner stands by until its pool's
//   server goes silent);
// - a standby claims a pool nobody ever served once its configured owner was silent as long.
// O(standbys + log instances).
std::optional<std::string> claim_reason(const PoolStanding& pool, const std::string& self,
                                        const HeartbeatBoard& board, const TakeoverTimes& times,
                                        Clock::time_point now);

}  // namespace yoke::failover
