#include "commit_groups.h"

#include <variant>

#include "daemon/service/batch_decoder.h"
#include "yoke/types.h"

namespace yoke::daemon {

CommitGroup to_commit_group(storage::LoggedGroup group) {
  CommitGroup out{std::move(group.pool), group.position, {}, {}};
  out.records.reserve(group.records.size());
  for (v1::JournalRecord& record : group.records) {
    for (int i = 0; i < record.events_size(); ++i) {
      auto event = decode_event(record.events(i), static_cast<std::uint32_t>(i));
      if (const auto* error = std::get_if<v1::Error>(&event)) {
        throw InputError("journal record of pool " + record.pool() + " seq " +
                         std::to_string(record.seq()) + ": " + error->message());
      }
      out.events.push_back(std::get<Event>(event));
    }
    record.clear_events();  // kept once, as engine events
    out.records.push_back(std::move(record));
  }
  return out;
}

}  // namespace yoke::daemon
