#include "record_codec.h"

#include <algorithm>

#include "crc32c.h"
#include "journal_format.h"

namespace yoke::journal {
namespace {

using namespace format;

void put_le(std::string& out, std::uint64_t value, int bytes) {
  for (int i = 0; i < bytes; ++i) out.push_back(static_cast<char>((value >> (8 * i)) & 0xFFu));
}

std::uint64_t get_le(std::string_view bytes, std::size_t offset, int count) {
  std::uint64_t value = 0;
  for (int i = count - 1; i >= 0; --i) {
    value = (value << 8) | static_cast<unsigned char>(bytes[offset + static_cast<std::size_t>(i)]);
  }
  return value;
}

}  // namespace

void append_segment_header(std::string& out, std::uint64_t first_position) {
  const std::size_t start = out.size();
  out.append(kMagic);
  put_le(out, kVersion, 4);
  put_le(out, first_position, 8);
  put_le(out, crc32c(std::string_view(out).substr(start, kHeaderChecksumOffset)), 4);
}

void append_record(std::string& out, std::uint64_t position, std::string_view payload) {
  append_record_header(out, position, PayloadPieces(&payload, 1));
  out.append(payload);
}

void append_record_header(std::string& out, std::uint64_t position, PayloadPieces pieces) {
  std::size_t size = 0;
  for (const std::string_view piece : pieces) size += piece.size();
  const std::size_t start = out.size();
  put_le(out, size, 4);
  put_le(out, 0, 4);  // checksum, filled in below
  put_le(out, position, 8);
  const std::string_view header = std::string_view(out).substr(start, kRecordHeaderBytes);
  const std::uint32_t crc = record_checksum(header, pieces);
  for (int i = 0; i < 4; ++i) {
    out[start + kRecordChecksumOffset + static_cast<std::size_t>(i)] =
        static_cast<char>((crc >> (8 * i)) & 0xFFu);
  }
}

HeaderCheck check_segment_header(std::string_view bytes) {
  using Verdict = HeaderCheck::Verdict;
  HeaderCheck check;
  if (bytes.size() < kSegmentHeaderBytes) {
    check.verdict = Verdict::torn;
    check.reason = "segment header cut short (" + std::to_string(bytes.size()) + " of " +
                   std::to_string(kSegmentHeaderBytes) + " bytes)";
    return check;
  }
  bytes = bytes.substr(0, kSegmentHeaderBytes);
  if (std::all_of(bytes.begin(), bytes.end(), [](char c) { return c == 0; })) {
    check.verdict = Verdict::torn;
    check.reason = "segment header is all zero bytes";
    return check;
  }
  if (bytes.substr(kHeaderMagicOffset, kMagic.size()) != kMagic) {
    check.verdict = Verdict::bad_magic;
    check.reason = "not a yoke journal segment (wrong magic)";
    return check;
  }
  // The version before the checksum: a later version may lay out the rest differently.
  const auto version = static_cast<std::uint32_t>(get_le(bytes, kHeaderVersionOffset, 4));
  if (version != kVersion) {
    check.verdict = Verdict::bad_version;
    check.reason = "unsupported journal format version " + std::to_string(version) +
                   " (this build reads version " + std::to_string(kVersion) + ")";
    return check;
  }
  const auto stored = static_cast<std::uint32_t>(get_le(bytes, kHeaderChecksumOffset, 4));
  if (stored != crc32c(bytes.substr(0, kHeaderChecksumOffset))) {
    check.verdict = Verdict::bad_checksum;
    check.reason = "segment header checksum mismatch";
    return check;
  }
  check.first_position = get_le(bytes, kHeaderFirstPositionOffset, 8);
  return check;
}

RecordHeader decode_record_header(std::string_view bytes) {
  RecordHeader header;
  header.length = static_cast<std::uint32_t>(get_le(bytes, kRecordLengthOffset, 4));
  header.checksum = static_cast<std::uint32_t>(get_le(bytes, kRecordChecksumOffset, 4));
  header.position = get_le(bytes, kRecordPositionOffset, 8);
  return header;
}

// The checksum covers the length and everything after the checksum field.
std::uint32_t record_checksum(std::string_view header_bytes, std::string_view payload) {
  return record_checksum(header_bytes, PayloadPieces(&payload, 1));
}

std::uint32_t record_checksum(std::string_view header_bytes, PayloadPieces payload) {
  std::uint32_t crc = crc32c(header_bytes.substr(kRecordLengthOffset, 4));
  crc = crc32c_extend(crc, header_bytes.substr(kRecordPositionOffset, 8));
  for (const std::string_view piece : payload) crc = crc32c_extend(crc, piece);
  return crc;
}

}  // namespace yoke::journal
