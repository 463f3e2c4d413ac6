// The words the config file and the flags use for enumerated settings.
#pragma once

#include <optional>
#include <string_view>

#include "daemon/journal/journal.h"
#include "yoke/types.h"

namespace yoke::daemon {

inline constexpr const char* kDurabilityNames = "every-batch, group, none";
inline constexpr const char* kModeNames = "max-weight, max-cardinality, perfect";
inline constexpr const char* kLogLevelNames = "trace, debug, info, warn, error, critical, off";
inline constexpr const char* kLogFormatNames = "text, json";

const char* durability_name(journal::Durability durability);
std::optional<journal::Durability> parse_durability(std::string_view name);
// Like parse_mode(), without the exception.
std::optional<Mode> parse_mode_name(std::string_view name);

}  // namespace yoke::daemon
