#include "pool_registry.h"

namespace yoke::daemon {

PoolRegistry::PoolRegistry(PoolSettings defaults, std::map<std::string, PoolSettings> declared)
    : defaults_(std::move(defaults)), declared_(std::move(declared)) {
  // Fail at start-up, not at the first batch, when a setting is out of range.
  Pool(defaults_.mode, defaults_.limits, defaults_.churn_bonus);
  for (const auto& [name, settings] : declared_) Pool(settings.mode, settings.limits, settings.churn_bonus);
}

const PoolSettings& PoolRegistry::settings_for(const std::string& name) const {
  const auto it = declared_.find(name);
  return it == declared_.end() ? defaults_ : it->second;
}

Pool& PoolRegistry::pool(const std::string& name) {
  auto& slot = pools_[name];
  if (!slot) {
    const PoolSettings& settings = settings_for(name);
    slot = std::make_unique<Pool>(settings.mode, settings.limits, settings.churn_bonus);
  }
  return *slot;
}

Pool* PoolRegistry::find(const std::string& name) {
  const auto it = pools_.find(name);
  return it == pools_.end() ? nullptr : it->second.get();
}

void PoolRegistry::put(const std::string& name, std::unique_ptr<Pool> pool) {
  pools_[name] = std::move(pool);
}

std::unique_ptr<Pool> PoolRegistry::erase(const std::string& name) {
  const auto it = pools_.find(name);
  if (it == pools_.end()) return nullptr;
  std::unique_ptr<Pool> pool = std::move(it->second);
  pools_.erase(it);
  return pool;
}

std::vector<std::string> PoolRegistry::names() const {
  std::vector<std::string> names;
  for (const auto& entry : pools_) names.push_back(entry.first);
  return names;
}

}  // namespace yoke::daemon
