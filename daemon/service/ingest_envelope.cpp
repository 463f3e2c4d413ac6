#include "ingest_envelope.h"

#include "daemon/wire_format/wire_reader.h"
#include "wire_fields.h"
#include "yoke/v1/protocol.pb.h"

namespace yoke::daemon {
namespace {

// One EventBatch occurrence parsed into `into` (a later occurrence merges: each field present
// overwrites), its events skipped.
bool read_batch(std::string_view bytes, BatchEnvelope& into) {
  WireReader reader(bytes);
  while (!reader.done()) {
    // The events are nearly all of a big batch's bytes: the common one in one test.
    if (reader.skip_short(kEventsTag)) continue;
    std::uint32_t field = 0;
    std::uint32_t wire_type = 0;
    if (!reader.tag(field, wire_type)) return false;
    std::string_view text;
    if ((field == kBatchClientId || field == kBatchPool) && wire_type == kLengthDelimited) {
      if (!reader.length_delimited(text)) return false;
      (field == kBatchPool ? into.pool : into.client_id).assign(text);
    } else if (field == kBatchClientBatch && wire_type == kVarint) {
      if (!reader.varint(into.client_batch)) return false;
    } else if (!reader.skip(wire_type)) {
      return false;
    }
  }
  return true;
}

}  // namespace

std::optional<BatchEnvelope> read_batch_envelope(std::string_view message) {
  WireReader reader(message);
  std::uint64_t version = 0;
  enum class Kind { none, batch, retire } kind = Kind::none;
  BatchEnvelope batch;
  while (!reader.done()) {
    std::uint32_t field = 0;
    std::uint32_t wire_type = 0;
    if (!reader.tag(field, wire_type)) return std::nullopt;
    std::string_view payload;
    if (field == kRequestVersion && wire_type == kVarint) {
      if (!reader.varint(version)) return std::nullopt;
    } else if ((field == kRequestBatch || field == kRequestRetire) &&
               wire_type == kLengthDelimited) {
      if (!reader.length_delimited(payload)) return std::nullopt;
      if (field == kRequestRetire) {
        kind = Kind::retire;  // the oneof's other member clears the batch
        continue;
      }
      if (kind != Kind::batch) batch = BatchEnvelope();
      kind = Kind::batch;
      if (!read_batch(payload, batch)) return std::nullopt;
    } else if (!reader.skip(wire_type)) {
      return std::nullopt;
    }
  }
  if (kind != Kind::batch || version != v1::PROTOCOL_VERSION_1) return std::nullopt;
  return batch;
}

}  // namespace yoke::daemon
