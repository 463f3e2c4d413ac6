// Segment file names: the first position, zero-padded to 20 digits, then ".seg".
#pragma once

#include <cstdint>
#include <filesystem>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

namespace yoke::journal {

std::string segment_file_name(std::uint64_t first_position);
std::filesystem::path segment_path(const std::filesystem::path& dir, std::uint64_t first_position);
// The first position a segment file name stands for; nullopt if it is not one.
std::optional<std::uint64_t> parse_segment_file_name(std::string_view name);
// The first positions of the segments in dir, ascending. Files not ending in ".seg" are
// ignored; one that does but is not a segment name is an Error (a stray copy, a typo), since
// skipping it could hide records. O(files in dir).
std::vector<std::uint64_t> list_segments(const std::filesystem::path& dir);

}  // namespace yoke::journal
