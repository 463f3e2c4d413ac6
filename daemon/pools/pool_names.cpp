#include "pool_names.h"

namespace yoke::daemon {

std::string resolve_pool_name(std::string_view name) {
  return std::string(name.empty() ? kDefaultPool : name);
}

std::optional<std::string> pool_name_problem(std::string_view name) {
  if (name.size() > kMaxPoolNameBytes) {
    return "a pool name has at most " + std::to_string(kMaxPoolNameBytes) + " bytes, not " +
           std::to_string(name.size());
  }
  for (const char c : name) {
    const bool plain = (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') ||
                       c == '.' || c == '_' || c == '-' || c == ':';
    if (!plain) {
      return "a pool name may hold only ASCII letters, digits and . _ - : (byte " +
             std::to_string(static_cast<unsigned char>(c)) + " is not allowed)";
    }
  }
  return std::nullopt;
}

}  // namespace yoke::daemon
