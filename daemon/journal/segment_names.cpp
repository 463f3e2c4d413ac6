#include "segment_names.h"

#include <algorithm>

#include "journal_error.h"
#include "journal_format.h"

namespace yoke::journal {

using namespace format;

std::string segment_file_name(std::uint64_t first_position) {
  std::string digits = std::to_string(first_position);
  return std::string(kSegmentNameDigits - digits.size(), '0') + digits +
         std::string(kSegmentSuffix);
}

std::filesystem::path segment_path(const std::filesystem::path& dir, std::uint64_t first_position) {
  return dir / segment_file_name(first_position);
}

std::optional<std::uint64_t> parse_segment_file_name(std::string_view name) {
  if (name.size() != kSegmentNameDigits + kSegmentSuffix.size() ||
      !name.ends_with(kSegmentSuffix)) {
    return std::nullopt;
  }
  std::uint64_t value = 0;
  for (const char c : name.substr(0, kSegmentNameDigits)) {
    if (c < '0' || c > '9') return std::nullopt;
    const auto digit = static_cast<std::uint64_t>(c - '0');
    if (value > (UINT64_MAX - digit) / 10) return std::nullopt;  // past 2^64 - 1
    value = value * 10 + digit;
  }
  if (value == 0) return std::nullopt;  // positions start at 1
  return value;
}

std::vector<std::uint64_t> list_segments(const std::filesystem::path& dir) {
  std::vector<std::uint64_t> firsts;
  try {
    for (const auto& entry : std::filesystem::directory_iterator(dir)) {
      const std::string name = entry.path().filename().string();
      if (!name.ends_with(kSegmentSuffix)) continue;
      const auto first = parse_segment_file_name(name);
      if (!first) throw Error("journal: " + entry.path().string() + " is not a segment name");
      firsts.push_back(*first);
    }
  } catch (const std::filesystem::filesystem_error& error) {
    throw Error("journal: cannot list " + dir.string() + ": " + error.code().message());
  }
  std::sort(firsts.begin(), firsts.end());
  return firsts;
}

}  // namespace yoke::journal
