#include "exposition_text.h"

#include <charconv>
#include <cmath>
#include <system_error>

namespace yoke::daemon::metrics {
namespace {

constexpr std::string_view kReplacement = "\xef\xbf\xbd";  // U+FFFD in UTF-8

// Length of the well-formed UTF-8 sequence that starts at text[at] and is not plain ASCII, or 0
// when there is none: overlong forms, surrogates and code points past U+10FFFF are refused.
std::size_t multibyte_length(std::string_view text, std::size_t at) {
  const auto byte = [&](std::size_t i) { return static_cast<unsigned char>(text[i]); };
  const unsigned char lead = byte(at);
  std::size_t length = 0;
  unsigned char second_min = 0x80, second_max = 0xbf;
  if (lead >= 0xc2 && lead <= 0xdf) {
    length = 2;
  } else if (lead >= 0xe0 && lead <= 0xef) {
    length = 3;
    if (lead == 0xe0) second_min = 0xa0;  // overlong
    if (lead == 0xed) second_max = 0x9f;  // surrogates
  } else if (lead >= 0xf0 && lead <= 0xf4) {
    length = 4;
    if (lead == 0xf0) second_min = 0x90;  // overlong
    if (lead == 0xf4) second_max = 0x8f;  // past U+10FFFF
  } else {
    return 0;
  }
  if (text.size() - at < length) return 0;
  if (byte(at + 1) < second_min || byte(at + 1) > second_max) return 0;
  for (std::size_t i = at + 2; i < at + length; ++i) {
    if ((byte(i) & 0xc0) != 0x80) return 0;
  }
  return length;
}

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
    const std::size_t length = multibyte_length(text, at);
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
