// Pool names as clients give them: the empty name means "default", and a name must be short
// and plain, since it is a publication topic, a log field and a metrics label.
#pragma once

#include <optional>
#include <string>
#include <string_view>

namespace yoke::daemon {

inline constexpr std::string_view kDefaultPool = "default";
inline constexpr std::size_t kMaxPoolNameBytes = 128;

// The name a request means: "default" for the empty name.
std::string resolve_pool_name(std::string_view name);

// Why a resolved name cannot name a pool, or nothing when it can: 1 to 128 bytes of ASCII
// letters, digits, '.', '_', '-' and ':'.
std::optional<std::string> pool_name_problem(std::string_view name);

}  // namespace yoke::daemon
