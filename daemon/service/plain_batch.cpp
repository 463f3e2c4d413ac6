#include "plain_batch.h"

#include <algorithm>
#include <climits>
#include <cstdint>
#include <iterator>
#include <optional>
#include <string>
#include <utility>

#include "daemon/pools/pool_names.h"
#include "daemon/pools/retry_ledger.h"
#include "daemon/wire_format/wire_reader.h"
#include "daemon/wire_format/zigzag.h"
#include "wire_fields.h"
#include "wire_types.h"
#include "yoke/v1/protocol.pb.h"

namespace yoke::daemon {
namespace {

// Each field number seen once: a second one (Protobuf's last-wins or merge) is not ours.
class SeenFields {
 public:
  bool first(std::uint32_t field) {
    const std::uint32_t bit = std::uint32_t{1} << field;  // field < 32: the callers' numbers
    if ((seen_ & bit) != 0) return false;
    seen_ |= bit;
    return true;
  }

 private:
  std::uint32_t seen_ = 0;
};

// Protobuf refuses a proto3 string that is not UTF-8; ASCII is, and is all we take.
bool ascii(std::string_view text) {
  for (const char c : text) {
    if (static_cast<unsigned char>(c) >= 0x80) return false;
  }
  return true;
}

// An event's fields as every encoder writes them: in field order, each at most once, each a
// varint. One byte comparison per field, where the loop of read_any_order tests each tag's
// wire type, number and repetition. False when the bytes are not all of that shape (then
// read_any_order reads them afresh: what it accepts in this shape, it reads the same way).
bool read_in_order(std::string_view bytes, std::uint64_t (&fields)[kEventW + 1]) {
  WireReader reader(bytes);
  for (std::uint32_t field = 1; field <= kEventW && !reader.done(); ++field) {
    if (static_cast<std::uint8_t>(bytes[reader.at()]) != ((field << 3) | kVarint)) continue;
    reader.step(1);
    if (!reader.varint(fields[field])) return false;
  }
  return reader.done();
}

// Any order: each field number 1 to kEventW at most once, each a varint.
bool read_any_order(std::string_view bytes, std::uint64_t (&fields)[kEventW + 1]) {
  WireReader reader(bytes);
  SeenFields seen;
  while (!reader.done()) {
    const auto tag = static_cast<std::uint8_t>(bytes[reader.at()]);
    const std::uint32_t field = tag >> 3;
    if ((tag & 7u) != kVarint || field == 0 || field > kEventW || !seen.first(field)) {
      return false;
    }
    reader.step(1);
    if (!reader.varint(fields[field])) return false;
  }
  return true;
}

// One Event as decode_event reads it, when decode_event accepts it. Its fields are read by
// their one-byte tags (what encoders write for field numbers 1 to 4): the loop's inner loop.
bool read_plain_event(std::string_view bytes, Event& event) {
  std::uint64_t fields[kEventW + 1] = {};
  if (!read_in_order(bytes, fields)) {
    std::fill(std::begin(fields), std::end(fields), 0);
    if (!read_any_order(bytes, fields)) return false;
  }
  const std::optional<EventKind> kind = engine_kind(fields[kEventKind]);
  // Unspecified, or a number decode_event names in its refusal; then decode_event's field rules.
  if (!kind || (!carries_v(*kind) && fields[kEventV] != 0) ||
      (!carries_w(*kind) && fields[kEventW] != 0)) {
    return false;
  }
  event.kind = *kind;
  event.u = fields[kEventU];
  event.v = fields[kEventV];
  event.w = zigzag_decoded(fields[kEventW]);
  return true;
}

bool read_plain_fields(std::string_view bytes, const InputLimits& limits, DecodedBatch& batch) {
  WireReader reader(bytes);
  SeenFields seen;
  std::string_view pool;
  // One slot per 12 bytes (an event takes 6 to ~40 with its tag and length): a batch of small
  // events grows once or twice, one of big events leaves slots it never touches.
  batch.events.reserve(bytes.size() / 12);
  while (!reader.done()) {
    std::string_view payload;
    if (reader.short_field(kEventsTag, payload)) {  // an event, nearly always
      Event event;
      if (!read_plain_event(payload, event) ||
          batch.events.size() >= limits.max_events_per_batch) {
        return false;
      }
      batch.events.push_back(event);
      continue;
    }
    std::uint32_t field = 0;
    std::uint32_t wire_type = 0;
    if (!reader.tag(field, wire_type)) return false;
    if (field > kBatchAfterBatch || !seen.first(field)) return false;
    std::string_view text;
    switch (field) {
      case kBatchClientId:
      case kBatchPool:
        if (wire_type != kLengthDelimited || !reader.length_delimited(text) || !ascii(text)) {
          return false;
        }
        if (field == kBatchPool) {
          pool = text;
        } else {
          batch.client_id.assign(text);
        }
        break;
      case kBatchClientBatch:
      case kBatchAfterBatch:
        if (wire_type != kVarint ||
            !reader.varint(field == kBatchClientBatch ? batch.client_batch : batch.after_batch)) {
          return false;
        }
        break;
      default: return false;  // field 0 never comes from tag(); a long event is not ours
    }
  }
  batch.pool = resolve_pool_name(pool);
  return !pool_name_problem(batch.pool) && batch.client_id.size() <= kMaxClientIdBytes;
}

}  // namespace

std::optional<DecodedBatch> read_plain_batch(std::string_view message,
                                             const InputLimits& limits) {
  // ParseFromArray's size is an int.
  if (message.size() > limits.max_message_bytes || message.size() > INT_MAX) return std::nullopt;
  WireReader reader(message);
  SeenFields seen;
  std::uint64_t version = 0;
  std::optional<DecodedBatch> batch;
  while (!reader.done()) {
    std::uint32_t field = 0;
    std::uint32_t wire_type = 0;
    if (!reader.tag(field, wire_type) || field > kRequestBatch || !seen.first(field)) {
      return std::nullopt;
    }
    if (field == kRequestVersion) {
      if (wire_type != kVarint || !reader.varint(version)) return std::nullopt;
      continue;
    }
    std::string_view payload;
    if (wire_type != kLengthDelimited || !reader.length_delimited(payload)) return std::nullopt;
    batch.emplace();
    if (!read_plain_fields(payload, limits, *batch)) return std::nullopt;
  }
  if (version != v1::PROTOCOL_VERSION_1) return std::nullopt;
  return batch;
}

}  // namespace yoke::daemon
