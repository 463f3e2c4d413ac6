#include <gtest/gtest.h>

#include <chrono>
#include <filesystem>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>
#include <spdlog/sinks/ostream_sink.h>
#include <spdlog/spdlog.h>
#include <unistd.h>

#include "daemon/logging/event_formatter.h"
#include "daemon/logging/log_event.h"
#include "daemon/logging/logger_setup.h"

namespace yoke::daemon {
namespace {

// A logger writing into a string.
struct Captured {
  explicit Captured(LogFormat format, LogLevel level = LogLevel::info) {
    logger = make_logger({level, format, std::nullopt},
                         std::make_shared<spdlog::sinks::ostream_sink_st>(out));
  }
  std::ostringstream out;
  std::shared_ptr<spdlog::logger> logger;
};

// True when `text` starts with an RFC 3339 UTC time with microseconds.
bool starts_with_utc_time(const std::string& text) {
  const std::string shape = "dddd-dd-ddTdd:dd:dd.ddddddZ";
  if (text.size() < shape.size()) return false;
  for (std::size_t i = 0; i < shape.size(); ++i) {
    if (shape[i] == 'd' ? !std::isdigit(static_cast<unsigned char>(text[i])) : text[i] != shape[i])
      return false;
  }
  return true;
}

TEST(Logging, TextLinesCarryFieldsAsKeyValue) {
  Captured log(LogFormat::text);
  log_event(*log.logger, LogLevel::warn, "batch_rejected",
            {{"pool", "default"}, {"reason", "self loop"}, {"events", 12}, {"retry", false}});
  const std::string line = log.out.str();
  ASSERT_TRUE(starts_with_utc_time(line)) << line;
  EXPECT_EQ(line.substr(27),
            " warn yoked batch_rejected pool=default reason=\"self loop\" events=12 retry=false\n");
}

TEST(Logging, JsonLinesAreOneObjectWithFields) {
  Captured log(LogFormat::json);
  log_event(*log.logger, LogLevel::warn, "batch_rejected",
            {{"pool", "default"}, {"reason", "self loop"}, {"events", 12}, {"retry", false}});
  const std::string line = log.out.str();
  ASSERT_EQ(line.rfind("{\"time\":\"", 0), 0u) << line;
  ASSERT_TRUE(starts_with_utc_time(line.substr(9))) << line;
  EXPECT_EQ(line.substr(9 + 27),
            "\",\"level\":\"warn\",\"logger\":\"yoked\",\"event\":\"batch_rejected\","
            "\"pool\":\"default\",\"reason\":\"self loop\",\"events\":12,\"retry\":false}\n");
}

// Every key of a JSON line once, the event name kept: a field named like a fixed key (the
// Protobuf log event's "message" used to collide with the event name) or like an earlier field
// goes under KEY_2, KEY_3, ...
TEST(Logging, JsonKeysAreUniqueAndKeepTheEventName) {
  Captured log(LogFormat::json);
  log_event(*log.logger, LogLevel::warn, "protobuf",
            {{"file", "a.cc"},
             {"line", 7},
             {"message", "bad"},
             {"event", "mine"},
             {"time", "then"},
             {"level", "low"},
             {"logger", "me"},
             {"event_2", "taken"},
             {"file", "b.cc"}});
  const std::string line = log.out.str();
  // nlohmann keeps the last of duplicate keys; count them in the text too.
  const nlohmann::json parsed = nlohmann::json::parse(line);
  EXPECT_EQ(parsed["event"], "protobuf");
  EXPECT_EQ(parsed["level"], "warn");
  EXPECT_EQ(parsed["logger"], "yoked");
  EXPECT_EQ(parsed["message"], "bad");
  EXPECT_EQ(parsed["file"], "a.cc");
  EXPECT_EQ(parsed["line"], 7);
  EXPECT_EQ(parsed["event_2"], "mine");
  EXPECT_EQ(parsed["time_2"], "then");
  EXPECT_EQ(parsed["level_2"], "low");
  EXPECT_EQ(parsed["logger_2"], "me");
  EXPECT_EQ(parsed["event_2_2"], "taken");
  EXPECT_EQ(parsed["file_2"], "b.cc");
  EXPECT_EQ(parsed.size(), 13u);
  std::vector<std::string> keys;
  for (const auto& [key, value] : parsed.items()) keys.push_back(key);
  for (const std::string& key : keys) {
    const std::string quoted = "\"" + key + "\":";
    const auto first = line.find(quoted);
    ASSERT_NE(first, std::string::npos) << key;
    EXPECT_EQ(line.find(quoted, first + 1), std::string::npos) << key << " twice in " << line;
  }
}

TEST(Logging, TimeIsRfc3339InUtc) {
  // 2024-05-01T12:00:00Z is 1714564800 s after the epoch.
  const auto time = std::chrono::system_clock::time_point(
      std::chrono::seconds(1714564800) + std::chrono::microseconds(123456));
  const spdlog::details::log_msg msg(time, spdlog::source_loc{}, "yoked", spdlog::level::info,
                                     "started");
  spdlog::memory_buf_t text, json;
  EventFormatter(LogFormat::text).format(msg, text);
  EventFormatter(LogFormat::json).format(msg, json);
  EXPECT_EQ(fmt::to_string(text), "2024-05-01T12:00:00.123456Z info yoked started\n");
  EXPECT_EQ(fmt::to_string(json),
            "{\"time\":\"2024-05-01T12:00:00.123456Z\",\"level\":\"info\",\"logger\":\"yoked\","
            "\"event\":\"started\"}\n");
}

TEST(Logging, EscapesQuotesBackslashesControlsAndNonAscii) {
  // A quote, a backslash, a newline, a control byte, é (valid UTF-8), a lone 0xff byte.
  const std::string nasty = "a\"b\\c\nd\x01 \xc3\xa9\xff";
  Captured text(LogFormat::text);
  log_event(*text.logger, LogLevel::info, "bad_pool", {{"pool", nasty}});
  EXPECT_EQ(text.out.str().substr(27),
            " info yoked bad_pool pool=\"a\\\"b\\\\c\\nd\\x01 \xc3\xa9\\xff\"\n");

  Captured json(LogFormat::json);
  log_event(*json.logger, LogLevel::info, "bad_pool", {{"pool", nasty}, {"k\"ey", "v"}});
  const std::string line = json.out.str();
  EXPECT_NE(line.find(",\"pool\":\"a\\\"b\\\\c\\nd\\u0001 \xc3\xa9\\ufffd\",\"k\\\"ey\":\"v\"}\n"),
            std::string::npos)
      << line;
  // One record is one line, whatever the values hold.
  EXPECT_EQ(std::count(line.begin(), line.end(), '\n'), 1);
}

TEST(Logging, PlainMessagesAreEscapedToo) {
  Captured text(LogFormat::text);
  text.logger->info("two\nlines");
  EXPECT_EQ(text.out.str().substr(27), " info yoked two\\nlines\n");
  Captured json(LogFormat::json);
  json.logger->error("say \"hi\"");
  EXPECT_NE(json.out.str().find("\"level\":\"error\",\"logger\":\"yoked\",\"event\":\"say "
                                "\\\"hi\\\"\"}\n"),
            std::string::npos);
}

TEST(Logging, LevelFiltersRecords) {
  Captured log(LogFormat::text, LogLevel::warn);
  log_event(*log.logger, LogLevel::info, "ignored", {{"a", "b"}});
  EXPECT_EQ(log.out.str(), "");
  log_event(*log.logger, LogLevel::error, "kept");
  EXPECT_EQ(log.out.str().substr(27), " error yoked kept\n");
}

TEST(Logging, FieldsDoNotLeakIntoLaterRecords) {
  Captured log(LogFormat::text);
  log_event(*log.logger, LogLevel::info, "first", {{"a", "1"}});
  log.logger->info("second");
  const std::string out = log.out.str();
  EXPECT_NE(out.find(" first a=1\n"), std::string::npos);
  EXPECT_NE(out.find(" second\n"), std::string::npos);
}

TEST(Logging, WritesToAFileAndThroughTheDefaultLogger) {
  const auto file = std::filesystem::temp_directory_path() /
                    ("yoke_log_test_" + std::to_string(::getpid()) + ".log");
  std::filesystem::remove(file);
  const auto previous = spdlog::default_logger();
  install_logger(make_logger({LogLevel::info, LogFormat::json, file}));
  log_event(LogLevel::info, "started", {{"pools", 2}});
  install_logger(previous);  // closes nothing: the file logger is flushed per record
  std::ifstream in(file);
  std::string line;
  std::getline(in, line);
  std::filesystem::remove(file);
  EXPECT_NE(line.find("\"event\":\"started\",\"pools\":2}"), std::string::npos) << line;
}

TEST(LogSettings, NamesRoundTrip) {
  for (const LogLevel level : {LogLevel::trace, LogLevel::debug, LogLevel::info, LogLevel::warn,
                               LogLevel::error, LogLevel::critical, LogLevel::off}) {
    EXPECT_EQ(parse_log_level(log_level_name(level)), level);
  }
  EXPECT_FALSE(parse_log_level("warning").has_value());
  EXPECT_EQ(parse_log_format("json"), LogFormat::json);
  EXPECT_EQ(parse_log_format(log_format_name(LogFormat::text)), LogFormat::text);
  EXPECT_FALSE(parse_log_format("JSON").has_value());
}

}  // namespace
}  // namespace yoke::daemon
