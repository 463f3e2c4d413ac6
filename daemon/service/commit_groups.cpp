#include "commit_groups.h"

#include <algorithm>
#include <variant>

#include "batch_decoder.h"
#include "engine/types.h"

namespace yoke::daemon {

void CommitGrouper::add(std::string_view payload, std::vector<CommitGroup>& done) {
  v1::JournalRecord record;
  if (!record.ParseFromArray(payload.data(), static_cast<int>(payload.size()))) {
    throw InputError("a journal record is not a yoke.v1.JournalRecord");
  }
  if (record.window_start() != window_start_) finish(done);
  window_start_ = record.window_start();

  auto group = std::find_if(open_.begin(), open_.end(), [&record](const CommitGroup& g) {
    return g.pool == record.pool();
  });
  if (group == open_.end()) {
    group = open_.insert(open_.end(), CommitGroup{record.pool(), record.window_start(), {}, {}});
  }
  for (int i = 0; i < record.events_size(); ++i) {
    auto event = decode_event(record.events(i), static_cast<std::uint32_t>(i));
    if (const auto* error = std::get_if<v1::Error>(&event)) {
      throw InputError("journal record of pool " + record.pool() + " seq " +
                       std::to_string(record.seq()) + ": " + error->message());
    }
    group->events.push_back(std::get<Event>(event));
  }
  record.clear_events();  // kept once, as engine events
  group->records.push_back(std::move(record));
}

void CommitGrouper::finish(std::vector<CommitGroup>& done) {
  for (CommitGroup& group : open_) done.push_back(std::move(group));
  open_.clear();
}

}  // namespace yoke::daemon
