#include "pool_routing.h"

#include <stdexcept>

#include "wire_types.h"

namespace yoke::daemon {

PoolRouting::PoolRouting(const ClusterSettings& cluster) {
  if (cluster.backend == StorageBackend::local) return;
  every_pool_here_ = false;
  instance_ = cluster.instance;
  for (const auto& [name, settings] : cluster.instances) {
    v1::Owner& owner = instances_[name];
    owner.set_instance(name);
    owner.set_ingest(settings.ingest);
    owner.set_query(settings.query);
    owner.set_publish(settings.publish);
    for (const std::string& pool : settings.owns) served_by_.emplace(pool, std::string());
  }
}

Serving PoolRouting::serving(std::string_view pool) const {
  if (every_pool_here_) return Serving::here;
  const auto it = served_by_.find(pool);
  if (it == served_by_.end()) return Serving::outside;
  if (it->second.empty()) return Serving::nobody;
  return it->second == instance_ ? Serving::here : Serving::elsewhere;
}

std::optional<std::string> PoolRouting::serving_instance(std::string_view pool) const {
  if (serving(pool) != Serving::elsewhere) return std::nullopt;
  return served_by_.find(pool)->second;
}

std::optional<v1::Owner> PoolRouting::owner(std::string_view instance) const {
  const auto it = instances_.find(instance);
  if (it == instances_.end()) return std::nullopt;
  return it->second;
}

std::optional<v1::Error> PoolRouting::refusal(std::string_view pool, Asked asked) const {
  if (every_pool_here_) return std::nullopt;
  const std::string name(pool);
  switch (serving(pool)) {
    case Serving::here:
      return std::nullopt;
    case Serving::outside:
      return make_error(v1::Error::UNKNOWN_POOL, "no instance of the cluster owns pool " + name);
    case Serving::nobody:
      return make_error(v1::Error::NOT_OWNER, "no instance serves pool " + name +
                                                  " right now (a takeover is under way): "
                                                  "retry shortly");
    case Serving::elsewhere:
      break;
  }
  const v1::Owner& owner = instances_.at(served_by_.find(pool)->second);
  v1::Error error = make_error(
      v1::Error::NOT_OWNER, "pool " + name + " is served by instance " + owner.instance() +
                                " at " + (asked == Asked::ingest ? owner.ingest() : owner.query()) +
                                ", not here: send it there");
  *error.mutable_owner() = owner;
  return error;
}

std::map<std::string, std::string, std::less<>>::iterator PoolRouting::entry(
    const std::string& pool) {
  if (every_pool_here_) {
    throw std::invalid_argument("pool " + pool + ": the local backend serves every pool here");
  }
  const auto it = served_by_.find(pool);
  if (it == served_by_.end()) {
    throw std::invalid_argument("no instance of the cluster owns pool " + pool);
  }
  return it;
}

void PoolRouting::serve_here(const std::string& pool) { entry(pool)->second = instance_; }

void PoolRouting::serve_elsewhere(const std::string& pool, const std::string& instance) {
  if (instance == instance_ || !instances_.contains(instance)) {
    throw std::invalid_argument("pool " + pool + " cannot be served elsewhere by '" + instance +
                                "': not another instance of the cluster");
  }
  entry(pool)->second = instance;
}

void PoolRouting::serve_nobody(const std::string& pool) { entry(pool)->second.clear(); }

std::vector<std::string> PoolRouting::served_here() const {
  std::vector<std::string> pools;
  if (every_pool_here_) return pools;
  for (const auto& [pool, instance] : served_by_) {
    if (instance == instance_) pools.push_back(pool);
  }
  return pools;
}

}  // namespace yoke::daemon
