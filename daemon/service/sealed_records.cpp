#include "sealed_records.h"

#include <stdexcept>
#include <utility>

#include "wire_types.h"

namespace yoke::daemon {

std::vector<v1::JournalRecord> SealedRecords::complete() && {
  if (records.size() != events.size()) {
    throw std::logic_error("sealed records: one list of events per record");
  }
  for (std::size_t i = 0; i < records.size(); ++i) {
    auto& wire = *records[i].mutable_events();
    wire.Reserve(static_cast<int>(events[i].size()));
    for (const Event& event : events[i]) write_wire(event, *wire.Add());
  }
  events.clear();
  return std::move(records);
}

}  // namespace yoke::daemon
