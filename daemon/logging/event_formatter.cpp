#include "event_formatter.h"

#include <algorithm>
#include <chrono>
#include <cstdio>
#include <ctime>
#include <string>
#include <vector>

#include "log_escape.h"

namespace yoke::daemon {
namespace {

thread_local std::span<const LogField> current_fields;

const char* level_name(spdlog::level::level_enum level) {
  switch (level) {
    case spdlog::level::trace: return "trace";
    case spdlog::level::debug: return "debug";
    case spdlog::level::info: return "info";
    case spdlog::level::warn: return "warn";
    case spdlog::level::err: return "error";
    case spdlog::level::critical: return "critical";
    default: return "off";
  }
}

// RFC 3339 in UTC with microseconds: 2024-05-01T12:00:00.123456Z.
std::string utc_time(std::chrono::system_clock::time_point time) {
  const auto micros =
      std::chrono::floor<std::chrono::microseconds>(time.time_since_epoch()).count();
  const std::time_t seconds = static_cast<std::time_t>(
      micros >= 0 ? micros / 1000000 : (micros - 999999) / 1000000);
  const long fraction = static_cast<long>(micros - static_cast<long long>(seconds) * 1000000);
  std::tm parts{};
  gmtime_r(&seconds, &parts);
  char text[40];
  const std::size_t length = std::strftime(text, sizeof text, "%Y-%m-%dT%H:%M:%S", &parts);
  std::string out(text, length);
  char tail[32];
  std::snprintf(tail, sizeof tail, ".%06ldZ", fraction);
  return out + tail;
}

std::string_view view(const spdlog::string_view_t& text) {
  return {text.data(), text.size()};
}

// The key a field is written under in a JSON line: its own, or KEY_2, KEY_3, ... when that is
// taken by a fixed key or an earlier field. `taken` holds the keys written so far.
std::string free_key(const std::string& key, std::vector<std::string>& taken) {
  const auto is_taken = [&taken](const std::string& candidate) {
    return std::find(taken.begin(), taken.end(), candidate) != taken.end();
  };
  std::string out = key;
  for (std::size_t n = 2; is_taken(out); ++n) out = key + "_" + std::to_string(n);
  taken.push_back(out);
  return out;
}

}  // namespace

EventFormatter::FieldsScope::FieldsScope(std::span<const LogField> fields)
    : previous_(current_fields) {
  current_fields = fields;
}

EventFormatter::FieldsScope::~FieldsScope() { current_fields = previous_; }

void EventFormatter::format(const spdlog::details::log_msg& msg, spdlog::memory_buf_t& dest) {
  std::string line;
  if (format_ == LogFormat::json) {
    line += "{\"time\":\"" + utc_time(msg.time) + "\",\"level\":\"";
    line += level_name(msg.level);
    line += "\",\"logger\":";
    append_json_string(line, view(msg.logger_name));
    line += ",\"event\":";
    append_json_string(line, view(msg.payload));
    std::vector<std::string> taken(kFixedJsonKeys.begin(), kFixedJsonKeys.end());
    for (const LogField& field : current_fields) {
      line += ',';
      append_json_string(line, free_key(field.key, taken));
      line += ':';
      if (field.is_text) {
        append_json_string(line, field.value);
      } else {
        line += field.value;
      }
    }
    line += "}\n";
  } else {
    line += utc_time(msg.time);
    line += ' ';
    line += level_name(msg.level);
    line += ' ';
    append_text_message(line, view(msg.logger_name));
    line += ' ';
    append_text_message(line, view(msg.payload));
    for (const LogField& field : current_fields) {
      line += ' ';
      append_text_value(line, field.key);
      line += '=';
      append_text_value(line, field.value);
    }
    line += '\n';
  }
  dest.append(line.data(), line.data() + line.size());
}

std::unique_ptr<spdlog::formatter> EventFormatter::clone() const {
  return std::make_unique<EventFormatter>(format_);
}

}  // namespace yoke::daemon
