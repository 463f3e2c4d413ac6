#include "pool_subjects.h"

#include <charconv>
#include <stdexcept>

namespace yoke::jetstream {
namespace {

constexpr char kEscape = '_';
constexpr std::string_view kHexDigits = "0123456789abcdef";

bool kept_as_is(char c) {
  return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') || c == '-' ||
         c == ':';
}

int hex_value(char c) {
  const std::size_t at = kHexDigits.find(c);
  return at == std::string_view::npos ? -1 : static_cast<int>(at);
}

// The decimal position after `head` in `subject` (no sign, no leading zero), if it is that.
std::optional<std::uint64_t> position_after(std::string_view subject, std::string_view head) {
  if (subject.substr(0, head.size()) != head) return std::nullopt;
  const std::string_view digits = subject.substr(head.size());
  std::uint64_t position = 0;
  const auto [end, error] = std::from_chars(digits.data(), digits.data() + digits.size(), position);
  if (error != std::errc() || end != digits.data() + digits.size() || digits.empty() ||
      (digits.size() > 1 && digits.front() == '0')) {
    return std::nullopt;
  }
  return position;
}

// The pool named by the one token after `head` in `subject`, if it is that.
std::optional<std::string> pool_after(std::string_view subject, std::string_view head) {
  if (subject.substr(0, head.size()) != head) return std::nullopt;
  const std::string_view token = subject.substr(head.size());
  if (token.find('.') != std::string_view::npos) return std::nullopt;
  return pool_of_token(token);
}

bool valid_prefix(std::string_view prefix) {
  if (prefix.empty() || prefix.front() == '.' || prefix.back() == '.') return false;
  char previous = 0;
  for (const char c : prefix) {
    const bool plain = kept_as_is(c) && c != ':';
    if (c == '.' ? previous == '.' : !(plain || c == '_')) return false;
    previous = c;
  }
  return true;
}

}  // namespace

std::string pool_token(std::string_view pool) {
  if (pool.empty()) throw std::invalid_argument("a pool name is empty: it has no subject");
  std::string token;
  token.reserve(pool.size());
  for (const char c : pool) {
    if (kept_as_is(c)) {
      token += c;
    } else {
      const auto byte = static_cast<unsigned char>(c);
      token += kEscape;
      token += kHexDigits[byte >> 4];
      token += kHexDigits[byte & 0xf];
    }
  }
  return token;
}

std::optional<std::string> pool_of_token(std::string_view token) {
  if (token.empty()) return std::nullopt;
  std::string pool;
  for (std::size_t i = 0; i < token.size(); ++i) {
    const char c = token[i];
    if (kept_as_is(c)) {
      pool += c;
      continue;
    }
    if (c != kEscape || i + 2 >= token.size()) return std::nullopt;
    const int high = hex_value(token[i + 1]);
    const int low = hex_value(token[i + 2]);
    if (high < 0 || low < 0) return std::nullopt;
    const char byte = static_cast<char>(high * 16 + low);
    if (kept_as_is(byte)) return std::nullopt;  // pool_token never escapes it
    pool += byte;
    i += 2;
  }
  return pool;
}

PoolSubjects::PoolSubjects(std::string prefix) : prefix_(std::move(prefix)) {
  if (!valid_prefix(prefix_)) {
    throw std::invalid_argument("subject prefix '" + prefix_ +
                                "' is not dot-separated tokens of ASCII letters, digits, - and _");
  }
}

std::string PoolSubjects::of_pool(std::string_view pool) const {
  return prefix_ + ".ev." + pool_token(pool);
}

std::optional<std::string> PoolSubjects::pool_of_subject(std::string_view subject) const {
  return pool_after(subject, prefix_ + ".ev.");
}

std::optional<std::uint64_t> PoolSubjects::snapshot_of_subject(std::string_view subject) const {
  return position_after(subject, prefix_ + ".snap.");
}

std::string PoolSubjects::of_claims(std::string_view pool) const {
  return prefix_ + ".claim." + pool_token(pool);
}

std::optional<std::string> PoolSubjects::pool_of_claim_subject(std::string_view subject) const {
  return pool_after(subject, prefix_ + ".claim.");
}

std::string PoolSubjects::of_pool_snapshot(std::string_view pool, std::uint64_t position) const {
  return prefix_ + ".snap." + pool_token(pool) + "." + std::to_string(position);
}

std::string PoolSubjects::pool_snapshots(std::string_view pool) const {
  return prefix_ + ".snap." + pool_token(pool) + ".*";
}

std::optional<std::uint64_t> PoolSubjects::pool_snapshot_of_subject(
    std::string_view pool, std::string_view subject) const {
  return position_after(subject, prefix_ + ".snap." + pool_token(pool) + ".");
}

std::string PoolSubjects::of_diffs(std::string_view pool) const {
  return prefix_ + ".diff." + pool_token(pool);
}

}  // namespace yoke::jetstream
