#include "service_state.h"

namespace yoke::daemon {

std::optional<PoolState> take_pool_state(ServiceState& state, const std::string& pool) {
  PoolState taken;
  taken.pool = state.registry.erase(pool);
  const auto progress = state.progress.find(pool);
  const bool had_progress = progress != state.progress.end();
  if (had_progress) {
    taken.progress = progress->second;
    state.progress.erase(progress);
  }
  taken.clients = state.ledger.clients_of(pool);
  state.ledger.erase_pool(pool);
  if (!taken.pool && !had_progress && taken.clients.empty()) return std::nullopt;
  return taken;
}

void put_pool_state(ServiceState& state, const std::string& pool, PoolState pool_state) {
  take_pool_state(state, pool);  // nothing of an older state stays beside the new one
  if (pool_state.pool) state.registry.put(pool, std::move(pool_state.pool));
  state.progress[pool] = pool_state.progress;
  for (auto& [client, mark] : pool_state.clients) state.ledger.restore(pool, client, std::move(mark));
}

}  // namespace yoke::daemon
