// A sealed window's journal records before their events are written in: each record's fields
// but `events`, and its batch's events as the engine reads them. The loop hands these to the
// thread that commits the window, which calls complete() there: the wire events are built
// (and freed after the write) on that thread, so the loop neither allocates them nor gets
// them back to free. complete() gives the records the received batches would have given: a
// batch's events are its wire events read by decode_event, and written back as they were sent
// (to_wire: the fields the schema allows; proto3 leaves zeros out either way).
#pragma once

#include <cstddef>
#include <cstdint>
#include <string>
#include <vector>

#include "daemon/storage/commit_log.h"
#include "yoke/events.h"
#include "yoke/v1/records.pb.h"

namespace yoke::daemon {

struct SealedRecords {
  std::vector<v1::JournalRecord> records;  // `events` left empty
  std::vector<std::vector<Event>> events;  // events[i]: those of records[i]
  // encoded[i], when not empty: records[i]'s events as encode_events() wrote them beforehand
  // (a new pool's big first batch, on the worker that checked it), and events[i] is left
  // empty; shorter than `records`, or an empty string: the events are encoded here.
  std::vector<std::string> encoded;

  // Whether records[i]'s events are in encoded[i] rather than in events[i]. O(1).
  bool encoded_beforehand(std::size_t i) const { return i < encoded.size() && !encoded[i].empty(); }

  // The whole records, each with its events. O(events).
  std::vector<v1::JournalRecord> complete() &&;
  // The records with their events as wire bytes (CommitLog::commit_encoded), no Event message
  // made: the bytes complete()'s records serialize them to. O(events).
  storage::EncodedWindow encode() &&;
};

// The bytes encode() writes for a batch's events: each as put_wire_event writes it as an
// element of JournalRecord's `events`. O(events).
std::string encode_events(const std::vector<Event>& events);

// Writes at `out` the bytes Protobuf writes for `event`, as write_wire makes it, as an element
// of a repeated Event field numbered `field` (< 16): its tag, its length, its non-zero fields;
// at most kMaxWireEventBytes. Returns the end.
constexpr std::size_t kMaxWireEventBytes = 40;
char* put_wire_event(char* out, const Event& event, std::uint32_t field);

}  // namespace yoke::daemon
