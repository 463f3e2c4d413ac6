#include "log_escape.h"

#include <cstdint>

#include "daemon/text/utf8_sequence.h"

namespace yoke::daemon {
namespace {

constexpr char kHex[] = "0123456789abcdef";

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
      const std::size_t length = utf8::sequence_length(text, i);
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
      const std::size_t length = utf8::sequence_length(text, i);
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
    const std::size_t length = u >= 0x80 ? utf8::sequence_length(text, i) : 1;
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
