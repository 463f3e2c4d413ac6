// The bytes of a journal on disk, as constants. FORMAT.md in this directory is the
// specification; change both together, and bump kVersion for any change of meaning.
#pragma once

#include <cstddef>
#include <cstdint>
#include <string_view>

namespace yoke::journal::format {

inline constexpr std::string_view kMagic = "YOKEJRNL";
inline constexpr std::uint32_t kVersion = 1;

// Segment header: magic, version, first position, CRC-32C of the preceding bytes.
inline constexpr std::size_t kHeaderMagicOffset = 0;
inline constexpr std::size_t kHeaderVersionOffset = 8;
inline constexpr std::size_t kHeaderFirstPositionOffset = 12;
inline constexpr std::size_t kHeaderChecksumOffset = 20;
inline constexpr std::size_t kSegmentHeaderBytes = 24;

// Record header: payload length, CRC-32C (of length, position, payload), position.
inline constexpr std::size_t kRecordLengthOffset = 0;
inline constexpr std::size_t kRecordChecksumOffset = 4;
inline constexpr std::size_t kRecordPositionOffset = 8;
inline constexpr std::size_t kRecordHeaderBytes = 16;

// No payload is longer, whatever the writer's own limit: a reader never trusts a larger length.
inline constexpr std::uint32_t kMaxPayloadBytes = std::uint32_t{1} << 30;

// Segment file names: the first position in this many decimal digits, then the suffix.
inline constexpr std::size_t kSegmentNameDigits = 20;
inline constexpr std::string_view kSegmentSuffix = ".seg";

}  // namespace yoke::journal::format
