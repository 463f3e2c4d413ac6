#include "exposition_text.h"

#include <charconv>
#include <cmath>
#include <system_error>

#include "daemon/text/utf8_sequence.h"

namespace yoke::daemon::metrics {
namespace {

constexpr std::string_view kReplacement = "\xef\xbf\xbd";  // U+FFFD in UTF-8

void append_escaped(std::string& out, std::string_view text, bool escape_quote) {
  std::size_t at = 0;
  while (at < text.size()) {
    const char c = text[at];
    if (static_cast<unsigned char>(c) < 0x80) {
      if (c == '\\') {
        out += "\\\\";
      } else if (c == '\n') {
        out += "\\n";
      } else if (c == '"' && escape_quote) {
        out += "\\\"";
      } else {
        out += c;
      }
      ++at;
      continue;
    }
    const std::size_t length = utf8::sequence_length(text, at);
    if (length == 0) {
      out += kReplacement;
      ++at;
    } else {
      out += text.substr(at, length);
      at += length;
    }
  }
}

template <typename Number>
void append_chars(std::string& out, Number value) {
  char digits[32];  // the shortest round-trip form of a double needs at most 24 characters
  const auto result = std::to_chars(digits, digits + sizeof digits, value);
  out.append(digits, result.ptr);
}

}  // namespace

void append_label_value(std::string& out, std::string_view text) {
  append_escaped(out, text, true);
}

void append_help_text(std::string& out, std::string_view text) { append_escaped(out, text, false); }

void append_number(std::string& out, double value) {
  if (std::isnan(value)) {
    out += "NaN";
  } else if (std::isinf(value)) {
    out += value > 0 ? "+Inf" : "-Inf";
  } else {
    append_chars(out, value);
  }
}

void append_number(std::string& out, std::uint64_t value) { append_chars(out, value); }

void append_number(std::string& out, std::int64_t value) { append_chars(out, value); }

}  // namespace yoke::daemon::metrics
