#include "sealed_records.h"

#include <algorithm>
#include <stdexcept>
#include <utility>

#include "daemon/wire_format/wire_reader.h"
#include "daemon/wire_format/zigzag.h"
#include "wire_fields.h"
#include "wire_types.h"

namespace yoke::daemon {

std::vector<v1::JournalRecord> SealedRecords::complete() && {
  if (records.size() != events.size()) {
    throw std::logic_error("sealed records: one list of events per record");
  }
  for (std::size_t i = 0; i < records.size(); ++i) {
    if (encoded_beforehand(i)) {
      // The bytes are elements of the `events` field: merged in, they are appended to it.
      if (!records[i].MergeFromString(encoded[i])) {
        throw std::logic_error("sealed records: events encoded beforehand do not parse");
      }
      continue;
    }
    auto& wire = *records[i].mutable_events();
    wire.Reserve(static_cast<int>(events[i].size()));
    for (const Event& event : events[i]) write_wire(event, *wire.Add());
  }
  events.clear();
  encoded.clear();
  return std::move(records);
}

namespace {

// A varint as Protobuf writes one, at `out`; returns the end.
char* put_varint(char* out, std::uint64_t value) {
  while (value >= 0x80) {
    *out++ = static_cast<char>(value | 0x80);
    value >>= 7;
  }
  *out++ = static_cast<char>(value);
  return out;
}

// A field of `number` with wire type varint, left out when zero (proto3 writes no default).
char* put_varint_field(char* out, std::uint32_t number, std::uint64_t value) {
  if (value == 0) return out;
  out = put_varint(out, std::uint64_t{number} << 3);
  return put_varint(out, value);
}

}  // namespace

char* put_wire_event(char* out, const Event& event, std::uint32_t field) {
  // The fields as write_wire sets them, in number order: kind 1 (enum), u 2, v 3 (uint64),
  // w 4 (sint64: zigzag). At most 35 bytes: 4 one-byte tags, 3 varints of 10 and one of 1.
  const bool has_v = carries_v(event.kind);
  const bool has_w = carries_w(event.kind);
  const std::int64_t w = has_w ? static_cast<std::int64_t>(event.w) : 0;
  char body[40];
  char* end =
      put_varint_field(body, kEventKind, static_cast<std::uint64_t>(wire_kind(event.kind)));
  end = put_varint_field(end, kEventU, event.u);
  end = put_varint_field(end, kEventV, has_v ? event.v : 0);
  end = put_varint_field(end, kEventW, zigzag_encoded(w));
  out = put_varint(out, (std::uint64_t{field} << 3) | kLengthDelimited);
  out = put_varint(out, static_cast<std::uint64_t>(end - body));
  return std::copy(body, end, out);
}

std::string encode_events(const std::vector<Event>& events) {
  std::string bytes;
  bytes.resize(events.size() * kMaxWireEventBytes);  // then cut to what was written
  char* out = bytes.data();
  for (const Event& event : events) {
    out = put_wire_event(out, event, v1::JournalRecord::kEventsFieldNumber);
  }
  bytes.resize(static_cast<std::size_t>(out - bytes.data()));
  return bytes;
}

storage::EncodedWindow SealedRecords::encode() && {
  if (records.size() != events.size()) {
    throw std::logic_error("sealed records: one list of events per record");
  }
  storage::EncodedWindow window;
  window.events.resize(records.size());
  for (std::size_t i = 0; i < records.size(); ++i) {
    window.events[i] = encoded_beforehand(i) ? std::move(encoded[i]) : encode_events(events[i]);
  }
  events.clear();
  encoded.clear();
  window.records = std::move(records);
  return window;
}

}  // namespace yoke::daemon
