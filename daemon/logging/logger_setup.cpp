#include "logger_setup.h"

#include <spdlog/sinks/basic_file_sink.h>
#include <spdlog/sinks/stdout_sinks.h>
#include <spdlog/spdlog.h>

#include "event_formatter.h"

namespace yoke::daemon {

spdlog::level::level_enum to_spdlog_level(LogLevel level) {
  switch (level) {
    case LogLevel::trace: return spdlog::level::trace;
    case LogLevel::debug: return spdlog::level::debug;
    case LogLevel::info: return spdlog::level::info;
    case LogLevel::warn: return spdlog::level::warn;
    case LogLevel::error: return spdlog::level::err;
    case LogLevel::critical: return spdlog::level::critical;
    case LogLevel::off: return spdlog::level::off;
  }
  return spdlog::level::info;
}

std::shared_ptr<spdlog::logger> make_logger(const LogSettings& settings, spdlog::sink_ptr sink,
                                            const std::string& name) {
  auto logger = std::make_shared<spdlog::logger>(name, std::move(sink));
  logger->set_formatter(std::make_unique<EventFormatter>(settings.format));
  logger->set_level(to_spdlog_level(settings.level));
  logger->flush_on(spdlog::level::trace);
  return logger;
}

std::shared_ptr<spdlog::logger> make_logger(const LogSettings& settings,
                                            const std::string& name) {
  spdlog::sink_ptr sink;
  if (settings.file) {
    sink = std::make_shared<spdlog::sinks::basic_file_sink_mt>(settings.file->string());
  } else {
    // Plain stderr, no colours: the same bytes whether a terminal or a collector reads them.
    sink = std::make_shared<spdlog::sinks::stderr_sink_mt>();
  }
  return make_logger(settings, std::move(sink), name);
}

void install_logger(std::shared_ptr<spdlog::logger> logger) {
  spdlog::set_default_logger(std::move(logger));
}

}  // namespace yoke::daemon
