#include "window_regrouper.h"

#include <algorithm>

#include "daemon/storage/storage_error.h"

namespace yoke::journal {

void WindowRegrouper::add(std::string_view payload, std::vector<storage::LoggedGroup>& done) {
  v1::JournalRecord record;
  if (!record.ParseFromArray(payload.data(), static_cast<int>(payload.size()))) {
    throw storage::LogDamage("a journal record is not a yoke.v1.JournalRecord");
  }
  if (record.window_start() != window_start_) finish(done);
  window_start_ = record.window_start();

  auto group = std::find_if(open_.begin(), open_.end(), [&record](const storage::LoggedGroup& g) {
    return g.pool == record.pool();
  });
  if (group == open_.end()) {
    group = open_.insert(open_.end(),
                         storage::LoggedGroup{record.pool(), record.window_start(), {}});
  }
  group->records.push_back(std::move(record));
}

void WindowRegrouper::finish(std::vector<storage::LoggedGroup>& done) {
  for (storage::LoggedGroup& group : open_) done.push_back(std::move(group));
  open_.clear();
}

}  // namespace yoke::journal
