#include "json_writer.h"

#include <charconv>

namespace yoke::cli {
namespace {
constexpr std::size_t kFlushBytes = std::size_t{1} << 20;
}

JsonWriter::JsonWriter(std::ostream& out) : out_(out) { buffer_.reserve(kFlushBytes + 256); }

void JsonWriter::before_value() {
  if (value_follows_key_) {
    value_follows_key_ = false;
    return;
  }
  if (!scope_is_empty_.empty()) {
    if (!scope_is_empty_.back()) buffer_ += ',';
    scope_is_empty_.back() = false;
  }
  if (line_break_pending_) {
    buffer_ += '\n';
    line_break_pending_ = false;
  }
}

void JsonWriter::flush_if_full() {
  if (buffer_.size() < kFlushBytes) return;
  out_.write(buffer_.data(), static_cast<std::streamsize>(buffer_.size()));
  buffer_.clear();
}

void JsonWriter::begin_object() {
  before_value();
  buffer_ += '{';
  scope_is_empty_.push_back(true);
}

void JsonWriter::end_object() {
  scope_is_empty_.pop_back();
  buffer_ += '}';
  flush_if_full();
}

void JsonWriter::begin_array() {
  before_value();
  buffer_ += '[';
  scope_is_empty_.push_back(true);
}

void JsonWriter::end_array() {
  scope_is_empty_.pop_back();
  buffer_ += ']';
  flush_if_full();
}

void JsonWriter::key(std::string_view name) {
  string(name);
  buffer_ += ':';
  value_follows_key_ = true;
}

void JsonWriter::integer(std::int64_t value) {
  before_value();
  char digits[24];
  const auto result = std::to_chars(digits, digits + sizeof digits, value);
  buffer_.append(digits, result.ptr);
  flush_if_full();
}

void JsonWriter::unsigned_integer(std::uint64_t value) {
  before_value();
  char digits[24];
  const auto result = std::to_chars(digits, digits + sizeof digits, value);
  buffer_.append(digits, result.ptr);
  flush_if_full();
}

void JsonWriter::wide_integer(Int128 value) {
  before_value();
  char digits[48];
  char* end = digits + sizeof digits;
  char* begin = end;
  // Digits from the least significant, negated one at a time so that the minimum value works.
  const bool negative = value < 0;
  do {
    const int digit = static_cast<int>(value % 10);
    *--begin = static_cast<char>('0' + (negative ? -digit : digit));
    value /= 10;
  } while (value != 0);
  if (negative) *--begin = '-';
  buffer_.append(begin, end);
  flush_if_full();
}

void JsonWriter::number(double value, int decimals) {
  before_value();
  char digits[64];
  const auto result =
      std::to_chars(digits, digits + sizeof digits, value, std::chars_format::fixed, decimals);
  // A value too large for the buffer cannot come from a timing; write a valid number anyway.
  if (result.ec != std::errc()) {
    buffer_ += '0';
  } else {
    buffer_.append(digits, result.ptr);
  }
  flush_if_full();
}

void JsonWriter::string(std::string_view value) {
  before_value();
  buffer_ += '"';
  for (const char c : value) {
    switch (c) {
      case '"': buffer_ += "\\\""; break;
      case '\\': buffer_ += "\\\\"; break;
      case '\n': buffer_ += "\\n"; break;
      case '\r': buffer_ += "\\r"; break;
      case '\t': buffer_ += "\\t"; break;
      default:
        if (static_cast<unsigned char>(c) < 0x20) {
          constexpr char kHex[] = "0123456789abcdef";
          buffer_ += "\\u00";
          buffer_ += kHex[(c >> 4) & 0xf];
          buffer_ += kHex[c & 0xf];
        } else {
          buffer_ += c;
        }
    }
  }
  buffer_ += '"';
  flush_if_full();
}

void JsonWriter::boolean(bool value) {
  before_value();
  buffer_ += value ? "true" : "false";
}

void JsonWriter::null() {
  before_value();
  buffer_ += "null";
}

void JsonWriter::line_break() { line_break_pending_ = true; }

void JsonWriter::finish() {
  buffer_ += '\n';
  out_.write(buffer_.data(), static_cast<std::streamsize>(buffer_.size()));
  buffer_.clear();
  out_.flush();
}

}  // namespace yoke::cli
