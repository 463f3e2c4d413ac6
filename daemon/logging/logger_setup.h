// Builds the daemon's spdlog logger from the logging settings.
#pragma once

#include <memory>
#include <string>

#include <spdlog/logger.h>

#include "log_settings.h"

namespace yoke::daemon {

spdlog::level::level_enum to_spdlog_level(LogLevel level);

// A synchronous logger writing to the settings' file (appended to, created if missing) or to
// stderr, in the settings' format and level. Every record is flushed at once: log lines are
// rare next to events, and an operator tailing the file or a crash must not miss the last
// ones. Throws spdlog::spdlog_ex when the file cannot be opened.
std::shared_ptr<spdlog::logger> make_logger(const LogSettings& settings,
                                            const std::string& name = "yoked");
// The same, writing to `sink` instead (tests capture the output this way).
std::shared_ptr<spdlog::logger> make_logger(const LogSettings& settings, spdlog::sink_ptr sink,
                                            const std::string& name = "yoked");

// Makes `logger` spdlog's default, the one log_event() without a logger writes to.
void install_logger(std::shared_ptr<spdlog::logger> logger);

}  // namespace yoke::daemon
