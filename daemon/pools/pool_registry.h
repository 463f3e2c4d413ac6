// The daemon's pools by name. A pool is created on first use, with the mode and limits the
// config declares for that name or else the default ones. Declared pools are reserved against
// the daemon's cap on pools: pools the config does not name share the slots left over
// (may_create), so a flood of throwaway names cannot take a declared pool's place.
#pragma once

#include <map>
#include <memory>
#include <string>
#include <vector>

#include "yoke/pool.h"

namespace yoke::daemon {

struct PoolSettings {
  Mode mode = Mode::max_weight;
  PoolLimits limits;
  Weight churn_bonus = 0;  // Pool's churn control; 0: none
};

// Throws InputError when the engine refuses `settings` (limits out of its ranges, or weights
// that cannot stay exact with the mode, the vertices and the churn bonus): the check a pool
// made with them would make, run at start-up instead of at the first batch.
void check_pool_settings(const PoolSettings& settings);

class PoolRegistry {
 public:
  // Throws InputError when a declared or the default setting cannot be kept exact.
  PoolRegistry(PoolSettings defaults, std::map<std::string, PoolSettings> declared);

  // The pool called `name`, created now if it does not exist yet.
  Pool& pool(const std::string& name);
  // nullptr when no pool has that name yet.
  Pool* find(const std::string& name);
  // Replaces (or creates) a pool, as recovery does with a restored snapshot.
  void put(const std::string& name, std::unique_ptr<Pool> pool);
  // Removes the pool called `name` and returns it (nullptr when there is none), for a daemon
  // that stops serving it. O(log pools).
  std::unique_ptr<Pool> erase(const std::string& name);
  // Names of the existing pools, sorted.
  std::vector<std::string> names() const;
  std::size_t size() const { return pools_.size(); }
  const PoolSettings& settings_for(const std::string& name) const;
  // A new, empty pool with the settings `name` takes, not registered (put() registers it).
  std::unique_ptr<Pool> make_aside(const std::string& name) const;

  bool is_declared(const std::string& name) const { return declared_.contains(name); }
  std::size_t declared_count() const { return declared_.size(); }
  // Existing pools that the config does not declare. O(1).
  std::size_t undeclared_size() const { return undeclared_; }
  // Whether a pool called `name` may be created under a cap of `max_pools`: a declared pool
  // always (its slot is reserved; the config holds at most max_pools of them), another one
  // while fewer than max_pools - declared_count() undeclared pools exist. O(log declared).
  bool may_create(const std::string& name, std::size_t max_pools) const;

 private:
  PoolSettings defaults_;
  std::map<std::string, PoolSettings> declared_;
  std::map<std::string, std::unique_ptr<Pool>> pools_;  // ordered: names() is deterministic
  std::size_t undeclared_ = 0;  // pools_ entries whose names declared_ does not hold
};

}  // namespace yoke::daemon
