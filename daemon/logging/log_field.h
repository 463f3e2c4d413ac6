// A key/value pair attached to a log record: `key=value` in text, a member in JSON.
#pragma once

#include <concepts>
#include <string>
#include <string_view>

namespace yoke::daemon {

struct LogField {
  LogField(std::string_view k, std::string_view v) : key(k), value(v) {}
  LogField(std::string_view k, const char* v) : key(k), value(v) {}
  LogField(std::string_view k, const std::string& v) : key(k), value(v) {}
  LogField(std::string_view k, bool v) : key(k), value(v ? "true" : "false"), is_text(false) {}
  template <std::integral T>
    requires(!std::same_as<T, bool> && !std::same_as<T, char>)
  LogField(std::string_view k, T v) : key(k), value(std::to_string(v)), is_text(false) {}

  std::string key;
  std::string value;
  bool is_text = true;  // false: a number or a boolean, written bare in JSON
};

}  // namespace yoke::daemon
