// A sealed window's journal records before their events are written in: each record's fields
// but `events`, and its batch's events as the engine reads them. The loop hands these to the
// thread that commits the window, which calls complete() there: the wire events are built
// (and freed after the write) on that thread, so the loop neither allocates them nor gets
// them back to free. complete() gives the records the received batches would have given: a
// batch's events are its wire events read by decode_event, and written back as they were sent
// (to_wire: the fields the schema allows; proto3 leaves zeros out either way).
#pragma once

#include <vector>

#include "yoke/events.h"
#include "yoke/v1/records.pb.h"

namespace yoke::daemon {

struct SealedRecords {
  std::vector<v1::JournalRecord> records;  // `events` left empty
  std::vector<std::vector<Event>> events;  // events[i]: those of records[i]

  // The whole records, each with its events. O(events).
  std::vector<v1::JournalRecord> complete() &&;
};

}  // namespace yoke::daemon
