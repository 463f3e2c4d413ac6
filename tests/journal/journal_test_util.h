// Shared helpers of the journal tests: a temporary directory, deterministic payloads, whole-file
// reads and writes for forging damage.
#pragma once

#include <cstdint>
#include <filesystem>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include "daemon/journal/journal.h"
#include "tests/support/temp_dir.h"

namespace yoke::journal::testing {

using TempDir = test_support::TempDir;

// The payload the tests write at a position: lengths from 0 to max_bytes, bytes depending on
// the position.
std::string payload_for(std::uint64_t position, std::size_t max_bytes = 100);

// Appends first..last with payload_for, then syncs.
void append_range(Journal& journal, std::uint64_t first, std::uint64_t last,
                  std::size_t max_bytes = 100);

using Records = std::vector<std::pair<std::uint64_t, std::string>>;
// Every record of the journal in dir, read only.
Records read_all(const std::filesystem::path& dir);
// The records first..last with payload_for(position, max_bytes).
Records expected_range(std::uint64_t first, std::uint64_t last, std::size_t max_bytes = 100);

std::string read_file(const std::filesystem::path& file);
void write_file(const std::filesystem::path& file, std::string_view bytes);
// Flips one bit of a file in place (no rewrite: ext4 flushes files that are truncated and
// rewritten, which would make the many-case tests slow).
void flip_bit(const std::filesystem::path& file, std::uint64_t offset, int bit);
// Paths of the segment files of dir, in order.
std::vector<std::filesystem::path> segment_files(const std::filesystem::path& dir);
// Copies every file of `from` into the (new) directory `to`.
void copy_directory(const std::filesystem::path& from, const std::filesystem::path& to);

// Options that make small segments and skip fsync (speed; durability is tested elsewhere).
Options small_segments(std::uint64_t segment_bytes, Durability durability = Durability::none);

}  // namespace yoke::journal::testing
