#include "log_settings.h"

#include <array>
#include <utility>

namespace yoke::daemon {
namespace {

constexpr std::array<std::pair<LogLevel, const char*>, 7> kLevels{{
    {LogLevel::trace, "trace"},
    {LogLevel::debug, "debug"},
    {LogLevel::info, "info"},
    {LogLevel::warn, "warn"},
    {LogLevel::error, "error"},
    {LogLevel::critical, "critical"},
    {LogLevel::off, "off"},
}};

}  // namespace

const char* log_level_name(LogLevel level) {
  for (const auto& [value, name] : kLevels) {
    if (value == level) return name;
  }
  return "info";
}

std::optional<LogLevel> parse_log_level(std::string_view name) {
  for (const auto& [value, text] : kLevels) {
    if (name == text) return value;
  }
  return std::nullopt;
}

const char* log_format_name(LogFormat format) {
  return format == LogFormat::json ? "json" : "text";
}

std::optional<LogFormat> parse_log_format(std::string_view name) {
  if (name == "text") return LogFormat::text;
  if (name == "json") return LogFormat::json;
  return std::nullopt;
}

}  // namespace yoke::daemon
