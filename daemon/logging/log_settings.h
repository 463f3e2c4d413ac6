// What the daemon's log looks like and where it goes. Plain data, no spdlog: the config reads
// it from the file without knowing how logs are written.
#pragma once

#include <filesystem>
#include <optional>
#include <string_view>

namespace yoke::daemon {

enum class LogLevel { trace, debug, info, warn, error, critical, off };

enum class LogFormat {
  text,  // one human line per record: time level logger message key=value ...
  json,  // one JSON object per line, for log collectors
};

struct LogSettings {
  LogLevel level = LogLevel::info;
  LogFormat format = LogFormat::text;
  std::optional<std::filesystem::path> file;  // nothing: stderr
  friend bool operator==(const LogSettings&, const LogSettings&) = default;
};

const char* log_level_name(LogLevel level);
std::optional<LogLevel> parse_log_level(std::string_view name);
const char* log_format_name(LogFormat format);
std::optional<LogFormat> parse_log_format(std::string_view name);

}  // namespace yoke::daemon
