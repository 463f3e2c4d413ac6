// The spdlog formatter of the daemon's log: text lines or JSON lines, with the fields that
// log_event() attaches to the record being written.
#pragma once

#include <memory>
#include <span>

#include <spdlog/formatter.h>

#include "log_field.h"
#include "log_settings.h"

namespace yoke::daemon {

class EventFormatter final : public spdlog::formatter {
 public:
  explicit EventFormatter(LogFormat format) : format_(format) {}
  void format(const spdlog::details::log_msg& msg, spdlog::memory_buf_t& dest) override;
  std::unique_ptr<spdlog::formatter> clone() const override;

  // Fields of the record the calling thread is logging now (spdlog has no slot for them). Only
  // sound with synchronous loggers, which format in the caller's thread: make_logger() builds
  // those. The guard restores the previous fields when it goes.
  class FieldsScope {
   public:
    explicit FieldsScope(std::span<const LogField> fields);
    ~FieldsScope();
    FieldsScope(const FieldsScope&) = delete;
    FieldsScope& operator=(const FieldsScope&) = delete;

   private:
    std::span<const LogField> previous_;
  };

 private:
  LogFormat format_;
};

}  // namespace yoke::daemon
