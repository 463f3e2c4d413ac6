#include <algorithm>

#include "daemon_config.h"

namespace yoke::daemon {
namespace {

bool lists(const std::vector<std::string>& names, std::string_view name) {
  return std::find(names.begin(), names.end(), name) != names.end();
}

}  // namespace

std::optional<std::string> ClusterSettings::owner_of(std::string_view pool) const {
  for (const auto& [name, settings] : instances) {
    if (lists(settings.owns, pool)) return name;
  }
  return std::nullopt;
}

std::vector<std::string> ClusterSettings::standbys_of(std::string_view pool) const {
  std::vector<std::string> standbys;  // `instances` is a map: name order already
  for (const auto& [name, settings] : instances) {
    if (lists(settings.stands_by, pool)) standbys.push_back(name);
  }
  return standbys;
}

}  // namespace yoke::daemon
