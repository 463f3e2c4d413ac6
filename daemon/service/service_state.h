// Everything the service holds about its pools (what recovery rebuilds), and one pool's part
// of it, moved out or in whole: a daemon of a cluster gains and loses pools while it runs.
#pragma once

#include <map>
#include <memory>
#include <optional>
#include <string>
#include <utility>
#include <vector>

#include "daemon/pools/pool_registry.h"
#include "daemon/pools/retry_ledger.h"
#include "pool_progress.h"

namespace yoke::daemon {

struct ServiceState {
  PoolRegistry registry;
  std::map<std::string, PoolProgress> progress;
  RetryLedger ledger;
};

// One pool's whole state: the engine's pool (nullptr for a pool that has applied nothing),
// its progress, and its clients' retry marks by client id.
struct PoolState {
  std::unique_ptr<Pool> pool;
  PoolProgress progress;
  std::vector<std::pair<std::string, RetryMark>> clients;
};

// Removes everything `state` holds of `pool` and returns it; nothing when it holds nothing
// of it. O(log pools + the pool's client marks).
std::optional<PoolState> take_pool_state(ServiceState& state, const std::string& pool);

// Puts one pool's state into `state`, replacing whatever it held of that pool. O(log pools +
// the pool's client marks).
void put_pool_state(ServiceState& state, const std::string& pool, PoolState pool_state);

}  // namespace yoke::daemon
