#include "tokens.h"

#include <charconv>
#include <limits>

namespace yoke::formats {
namespace {

template <typename T>
std::optional<std::string> parse_whole(std::string_view token, T& value, const char* what) {
  const auto [end, error] = std::from_chars(token.data(), token.data() + token.size(), value);
  if (error == std::errc::result_out_of_range) {
    return std::string(what) + " " + shown(token) + " is out of range (" +
           std::to_string(std::numeric_limits<T>::min()) + " .. " +
           std::to_string(std::numeric_limits<T>::max()) + ")";
  }
  if (error != std::errc() || end != token.data() + token.size()) {
    return std::string(what) + " " + shown(token) + " is not " +
           (std::numeric_limits<T>::is_signed ? "an integer" : "a non-negative integer");
  }
  return std::nullopt;
}

}  // namespace

LineError::LineError(std::size_t line, const std::string& problem)
    : std::runtime_error("line " + std::to_string(line) + ": " + problem),
      line_(line),
      problem_(problem) {}

std::string shown(std::string_view token) {
  constexpr std::size_t kMaxShown = 40;
  constexpr char kHex[] = "0123456789abcdef";
  std::string out = "'";
  for (std::size_t i = 0; i < token.size() && i < kMaxShown; ++i) {
    const auto c = static_cast<unsigned char>(token[i]);
    if (c >= 0x20 && c < 0x7f) {
      out += static_cast<char>(c);
    } else {
      out += "\\x";
      out += kHex[c >> 4];
      out += kHex[c & 0xf];
    }
  }
  if (token.size() > kMaxShown) out += "...";
  return out + "'";
}

std::optional<std::string> parse_integer(std::string_view token, std::uint64_t& value,
                                         const char* what) {
  return parse_whole(token, value, what);
}

std::optional<std::string> parse_integer(std::string_view token, std::int64_t& value,
                                         const char* what) {
  return parse_whole(token, value, what);
}

}  // namespace yoke::formats
