// A cursor over Protobuf wire bytes that knows no schema: the daemon's hand readers of client
// messages (daemon/service: ingest_envelope, plain_batch, by the field numbers in
// wire_fields.h) and the journal's splice of events into a record (journal_commit_log.cpp)
// read with it. Header only, with no dependency but the standard library.
#pragma once

#include <cstddef>
#include <cstdint>
#include <string_view>

namespace yoke::daemon {

enum WireType : std::uint32_t { kVarint = 0, kFixed64 = 1, kLengthDelimited = 2, kFixed32 = 5 };

// A cursor over bytes in which every read says whether it stayed inside them.
class WireReader {
 public:
  explicit WireReader(std::string_view bytes) : bytes_(bytes) {}
  bool done() const { return at_ == bytes_.size(); }
  std::size_t at() const { return at_; }  // the next byte's index
  void step(std::size_t count) { at_ += count; }  // over bytes the caller has read at at()

  bool varint(std::uint64_t& value) {
    if (!done() && static_cast<std::uint8_t>(bytes_[at_]) < 0x80) {  // one byte: most fields
      value = static_cast<std::uint8_t>(bytes_[at_++]);
      return true;
    }
    value = 0;
    for (int shift = 0; shift < 64; shift += 7) {
      if (done()) return false;
      const auto byte = static_cast<std::uint8_t>(bytes_[at_++]);
      // The tenth byte may carry only the top bit of 64: anything else is left to Protobuf.
      if (shift == 63 && byte > 1) return false;
      value |= std::uint64_t{byte & 0x7Fu} << shift;
      if ((byte & 0x80u) == 0) return true;
    }
    return false;
  }

  // A field's tag: false at a field number 0, past 32 bits, or a wire type we do not skip
  // (groups, and the two that do not exist).
  bool tag(std::uint32_t& field, std::uint32_t& wire_type) {
    std::uint64_t raw = 0;
    if (!varint(raw) || raw > 0xFFFFFFFFu) return false;
    field = static_cast<std::uint32_t>(raw >> 3);
    wire_type = static_cast<std::uint32_t>(raw & 7u);
    return field != 0 && (wire_type == kVarint || wire_type == kFixed64 ||
                           wire_type == kLengthDelimited || wire_type == kFixed32);
  }

  // The payload of a length-delimited field.
  bool length_delimited(std::string_view& payload) {
    std::uint64_t length = 0;
    if (!varint(length) || length > 0x7FFFFFFFu || length > bytes_.size() - at_) return false;
    payload = bytes_.substr(at_, static_cast<std::size_t>(length));
    at_ += static_cast<std::size_t>(length);
    return true;
  }

  // Reads a length-delimited field whose tag is the one byte `tag` and whose length takes one
  // byte, as an encoder writes a small event; false (nothing read) for anything else.
  bool short_field(std::uint8_t tag, std::string_view& payload) {
    if (bytes_.size() - at_ < 2 || static_cast<std::uint8_t>(bytes_[at_]) != tag) return false;
    const auto length = static_cast<std::uint8_t>(bytes_[at_ + 1]);
    if (length >= 0x80 || length > bytes_.size() - at_ - 2) return false;
    payload = bytes_.substr(at_ + 2, length);
    at_ += 2 + std::size_t{length};
    return true;
  }
  bool skip_short(std::uint8_t tag) {
    std::string_view ignored;
    return short_field(tag, ignored);
  }

  bool skip(std::uint32_t wire_type) {
    std::uint64_t ignored = 0;
    std::string_view payload;
    switch (wire_type) {
      case kVarint: return varint(ignored);
      case kLengthDelimited: return length_delimited(payload);
      case kFixed64: return skip_bytes(8);
      case kFixed32: return skip_bytes(4);
      default: return false;
    }
  }

 private:
  bool skip_bytes(std::size_t count) {
    if (count > bytes_.size() - at_) return false;
    at_ += count;
    return true;
  }

  std::string_view bytes_;
  std::size_t at_ = 0;
};

}  // namespace yoke::daemon
