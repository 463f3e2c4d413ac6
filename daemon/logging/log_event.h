// Logs a named event with key/value fields:
//   log_event(LogLevel::warn, "batch_rejected", {{"pool", "default"}, {"reason", "self loop"}});
// renders as `... warn yoked batch_rejected pool=default reason="self loop"` in text and as
// {"time":...,"event":"batch_rejected","pool":"default","reason":"self loop"} in JSON (every key
// once: event_formatter.h says how a field named like a fixed key is written).
#pragma once

#include <initializer_list>
#include <string_view>

#include <spdlog/logger.h>

#include "log_field.h"
#include "log_settings.h"

namespace yoke::daemon {

void log_event(spdlog::logger& logger, LogLevel level, std::string_view event,
               std::initializer_list<LogField> fields = {});
// To spdlog's default logger (see install_logger()).
void log_event(LogLevel level, std::string_view event,
               std::initializer_list<LogField> fields = {});

}  // namespace yoke::daemon
