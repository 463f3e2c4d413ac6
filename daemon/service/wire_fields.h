// The field numbers of the ingest messages, for the readers that take the common shape of a
// client message by hand (ingest_envelope.h, plain_batch.h) and leave anything unusual to
// Protobuf; the journal's event writer (sealed_records.cpp) writes events by the same numbers.
#pragma once

#include <cstdint>

#include "daemon/wire_format/wire_reader.h"
#include "yoke/v1/events.pb.h"
#include "yoke/v1/ingest.pb.h"

namespace yoke::daemon {

// Field numbers of yoke.v1.IngestRequest, EventBatch and Event (proto/yoke/v1/), taken from
// the generated code so that a renumbered field cannot leave the readers behind.
constexpr std::uint32_t kRequestVersion = v1::IngestRequest::kVersionFieldNumber;
constexpr std::uint32_t kRequestBatch = v1::IngestRequest::kBatchFieldNumber;
constexpr std::uint32_t kRequestRetire = v1::IngestRequest::kRetireFieldNumber;
constexpr std::uint32_t kBatchClientId = v1::EventBatch::kClientIdFieldNumber;
constexpr std::uint32_t kBatchClientBatch = v1::EventBatch::kClientBatchFieldNumber;
constexpr std::uint32_t kBatchPool = v1::EventBatch::kPoolFieldNumber;
constexpr std::uint32_t kBatchEvents = v1::EventBatch::kEventsFieldNumber;
constexpr std::uint32_t kBatchAfterBatch = v1::EventBatch::kAfterBatchFieldNumber;
constexpr std::uint32_t kEventKind = v1::Event::kKindFieldNumber;
constexpr std::uint32_t kEventU = v1::Event::kUFieldNumber;
constexpr std::uint32_t kEventV = v1::Event::kVFieldNumber;
constexpr std::uint32_t kEventW = v1::Event::kWFieldNumber;
// What the hand readers assume of them: an event's fields are indexed up to w, the highest,
// and take one-byte tags; the events' tag is one byte; seen fields fit a 32-bit set.
static_assert(kEventKind < kEventW && kEventU < kEventW && kEventV < kEventW && kEventW < 16);
static_assert(kBatchEvents < 16 && kBatchAfterBatch < 32 && kRequestRetire < 32);

constexpr std::uint8_t kEventsTag = (kBatchEvents << 3) | kLengthDelimited;

}  // namespace yoke::daemon
