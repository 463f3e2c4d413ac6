#include "log_escape.h"

#include <cstdint>

namespace yoke::daemon {
namespace {

constexpr char kHex[] = "0123456789abcdef";

// Length of the valid UTF-8 sequence starting at text[i], or 0 when it is not one. Rejects
// overlong forms, surrogates and code points past U+10FFFF.
std::size_t utf8_length(std::string_view text, std::size_t i) {
  const auto byte = [&](std::size_t k) { return static_cast<std::uint8_t>(text[k]); };
  const std::uint8_t lead = byte(i);
  std::size_t length = 0;
  std::uint8_t low = 0x80, high = 0xbf;  // allowed range of the second byte
  if (lead >= 0xc2 && lead <= 0xdf) {
    length = 2;
  } else if (lead >= 0xe0 && lead <= 0xef) {
    length = 3;
    if (lead == 0xe0) low = 0xa0;
    if (lead == 0xed) high = 0x9f;
  } else if (lead >= 0xf0 && lead <= 0xf4) {
    length = 4;
    if (lead == 0xf0) low = 0x90;
    if (lead == 0xf4) high = 0x8f;
  } else {
    return 0;
  }
  if (i + length > text.size()) return 0;
  if (byte(i + 1) < low || byte(i + 1) > high) return 0;
  for (std::size_t k = 2; k < length; ++k) {
    if ((byte(i + k) & 0xc0) != 0x80) return 0;
  }
  return length;
}

bool needs_quotes(std::string_view text) {
  if (text.empty()) return true;
  for (const char c : text) {
    const auto u = static_cast<std::uint8_t>(c);
    if (u <= 0x20 || u == 0x7f || c == '"' || c == '\\' || c == '=') return true;
    if (u >= 0x80) return true;  // checked for validity below, quoted to keep it simple
  }
  return false;
}

}  // namespace

void append_json_string(std::string& out, std::string_view text) {
  out += '"';
  for (std::size_t i = 0; i < text.size();) {
    const char c = text[i];
    const auto u = static_cast<std::uint8_t>(c);
    if (u >= 0x80) {
      const std::size_t length = utf8_length(text, i);
      if (length == 0) {
        out += "\\ufffd";
        ++i;
      } else {
        out.append(text.substr(i, length));
        i += length;
      }
      continue;
    }
    switch (c) {
      case '"': out += "\\\""; break;
      case '\\': out += "\\\\"; break;
      case '\n': out += "\\n"; break;
      case '\r': out += "\\r"; break;
      case '\t': out += "\\t"; break;
      case '\b': out += "\\b"; break;
      case '\f': out += "\\f"; break;
      default:
        if (u < 0x20 || u == 0x7f) {
          out += "\\u00";
          out += kHex[u >> 4];
          out += kHex[u & 0xf];
        } else {
          out += c;
        }
    }
    ++i;
  }
  out += '"';
}

namespace {

// The inside of a quoted text value.
void append_text_escaped(std::string& out, std::string_view text) {
  for (std::size_t i = 0; i < text.size();) {
    const char c = text[i];
    const auto u = static_cast<std::uint8_t>(c);
    if (u >= 0x80) {
      const std::size_t length = utf8_length(text, i);
      if (length != 0) {
        out.append(text.substr(i, length));
        i += length;
        continue;
      }
    }
    switch (c) {
      case '"': out += "\\\""; break;
      case '\\': out += "\\\\"; break;
      case '\n': out += "\\n"; break;
      case '\r': out += "\\r"; break;
      case '\t': out += "\\t"; break;
      default:
        if (u < 0x20 || u >= 0x7f) {
          out += "\\x";
          out += kHex[u >> 4];
          out += kHex[u & 0xf];
        } else {
          out += c;
        }
    }
    ++i;
  }
}

}  // namespace

void append_text_value(std::string& out, std::string_view text) {
  if (!needs_quotes(text)) {
    out.append(text);
    return;
  }
  out += '"';
  append_text_escaped(out, text);
  out += '"';
}

void append_text_message(std::string& out, std::string_view text) {
  for (std::size_t i = 0; i < text.size();) {
    const char c = text[i];
    const auto u = static_cast<std::uint8_t>(c);
    const std::size_t length = u >= 0x80 ? utf8_length(text, i) : 1;
    if (length == 0 || u < 0x20 || u == 0x7f) {
      append_text_escaped(out, text.substr(i, 1));
      ++i;
    } else {
      out.append(text.substr(i, length));
      i += length;
    }
  }
}

}  // namespace yoke::daemon
