// The spdlog formatter of the daemon's log: text lines or JSON lines, with the fields that
// log_event() attaches to the record being written.
//
// A JSON line is one object whose keys are all different: first the fixed keys "time",
// "level", "logger" and "event" (the event name, or the text of a plain message), then the
// fields in their order. A field whose key is taken already (a fixed key, or an earlier field)
// is written as KEY_2 (or KEY_3, ...: the first of those that is free), so that nothing is
// overwritten or lost by a reader that keeps one value per key.
#pragma once

#include <array>
#include <memory>
#include <span>
#include <string_view>

#include <spdlog/formatter.h>

#include "log_field.h"
#include "log_settings.h"

namespace yoke::daemon {

class EventFormatter final : public spdlog::formatter {
 public:
  // The keys every JSON line starts with, in this order.
  static constexpr std::array<std::string_view, 4> kFixedJsonKeys = {"time", "level", "logger",
                                                                     "event"};

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
