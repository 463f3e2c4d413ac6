#include "log_event.h"

#include <span>

#include <spdlog/spdlog.h>

#include "event_formatter.h"
#include "logger_setup.h"

namespace yoke::daemon {

void log_event(spdlog::logger& logger, LogLevel level, std::string_view event,
               std::initializer_list<LogField> fields) {
  const auto spd_level = to_spdlog_level(level);
  if (!logger.should_log(spd_level)) return;
  const EventFormatter::FieldsScope scope(std::span<const LogField>(fields.begin(), fields.size()));
  logger.log(spd_level, spdlog::string_view_t(event.data(), event.size()));
}

void log_event(LogLevel level, std::string_view event, std::initializer_list<LogField> fields) {
  log_event(*spdlog::default_logger_raw(), level, event, fields);
}

}  // namespace yoke::daemon
