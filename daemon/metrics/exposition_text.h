// The pieces of text the Prometheus exposition format (version 0.0.4) escapes or spells in its
// own way. Label values may come from clients (pool names): escaping them, and replacing bytes
// that are not UTF-8, keeps one odd name from spoiling the whole page for the scraper.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>

namespace yoke::daemon::metrics {

// Appends a label value without its quotes: backslash, double quote and newline escaped as
// \\ \" \n; each byte of invalid UTF-8 becomes U+FFFD.
void append_label_value(std::string& out, std::string_view text);

// Appends the text of a # HELP line: backslash and newline escaped as \\ \n; each byte of
// invalid UTF-8 becomes U+FFFD.
void append_help_text(std::string& out, std::string_view text);

// Appends a sample value: the shortest decimal that reads back as the same double, or +Inf,
// -Inf, NaN as the format spells them.
void append_number(std::string& out, double value);
void append_number(std::string& out, std::uint64_t value);
void append_number(std::string& out, std::int64_t value);

}  // namespace yoke::daemon::metrics
