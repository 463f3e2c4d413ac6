#include "pool_registry.h"

namespace yoke::daemon {

void check_pool_settings(const PoolSettings& settings) {
  Pool(settings.mode, settings.limits, settings.churn_bonus);
}

PoolRegistry::PoolRegistry(PoolSettings defaults, std::map<std::string, PoolSettings> declared)
    : defaults_(std::move(defaults)), declared_(std::move(declared)) {
  check_pool_settings(defaults_);
  for (const auto& [name, settings] : declared_) check_pool_settings(settings);
}

const PoolSettings& PoolRegistry::settings_for(const std::string& name) const {
  const auto it = declared_.find(name);
  return it == declared_.end() ? defaults_ : it->second;
}

bool PoolRegistry::may_create(const std::string& name, std::size_t max_pools) const {
  if (is_declared(name)) return true;
  return declared_.size() < max_pools && undeclared_ < max_pools - declared_.size();
}

Pool& PoolRegistry::pool(const std::string& name) {
  auto& slot = pools_[name];
  if (!slot) {
    if (!is_declared(name)) ++undeclared_;
    slot = make_aside(name);
  }
  return *slot;
}

std::unique_ptr<Pool> PoolRegistry::make_aside(const std::string& name) const {
  const PoolSettings& settings = settings_for(name);
  return std::make_unique<Pool>(settings.mode, settings.limits, settings.churn_bonus);
}

Pool* PoolRegistry::find(const std::string& name) {
  const auto it = pools_.find(name);
  return it == pools_.end() ? nullptr : it->second.get();
}

void PoolRegistry::put(const std::string& name, std::unique_ptr<Pool> pool) {
  auto& slot = pools_[name];
  if (!slot && !is_declared(name)) ++undeclared_;
  slot = std::move(pool);
  if (!slot) erase(name);  // a null pool is no pool: the slot stays free
}

std::unique_ptr<Pool> PoolRegistry::erase(const std::string& name) {
  const auto it = pools_.find(name);
  if (it == pools_.end()) return nullptr;
  std::unique_ptr<Pool> pool = std::move(it->second);
  pools_.erase(it);
  if (!is_declared(name)) --undeclared_;
  return pool;
}

std::vector<std::string> PoolRegistry::names() const {
  std::vector<std::string> names;
  for (const auto& entry : pools_) names.push_back(entry.first);
  return names;
}

}  // namespace yoke::daemon
