// Encoding and checking of the segment header and the record header (FORMAT.md). Pure byte
// work, no I/O: the writer, the reader and the tests that forge damaged journals share it.
#pragma once

#include <cstdint>
#include <span>
#include <string>
#include <string_view>

namespace yoke::journal {

// Appends the segment header for a segment whose first record is first_position.
void append_segment_header(std::string& out, std::uint64_t first_position);
// A payload given in pieces: the record holds their concatenation (a journal record's fields
// around its events, which are not copied into one string first).
using PayloadPieces = std::span<const std::string_view>;

// Appends one record: header (length, checksum, position), then the payload.
// Precondition: payload.size() <= format::kMaxPayloadBytes.
void append_record(std::string& out, std::uint64_t position, std::string_view payload);

// Appends one record's header alone, for the payload `pieces` make; the caller writes the
// pieces right after it. Precondition: as append_record's, for their total size. O(payload).
void append_record_header(std::string& out, std::uint64_t position, PayloadPieces pieces);

// What a segment header says, or why it cannot be trusted.
struct HeaderCheck {
  enum class Verdict {
    ok,
    torn,         // shorter than a header, or all zero bytes: the file was being created
    bad_magic,
    bad_version,
    bad_checksum,
  };
  Verdict verdict = Verdict::ok;
  std::uint64_t first_position = 0;  // when ok
  std::string reason;           // when not ok
};
// `bytes` is the start of the file (all of it, if shorter than a header).
HeaderCheck check_segment_header(std::string_view bytes);

struct RecordHeader {
  std::uint32_t length = 0;
  std::uint32_t checksum = 0;
  std::uint64_t position = 0;
};
// Precondition: bytes.size() == format::kRecordHeaderBytes.
RecordHeader decode_record_header(std::string_view bytes);
// The checksum a record with this header and payload must carry.
std::uint32_t record_checksum(std::string_view header_bytes, std::string_view payload);
std::uint32_t record_checksum(std::string_view header_bytes, PayloadPieces payload);

}  // namespace yoke::journal
