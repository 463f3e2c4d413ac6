#include "journal_commit_log.h"

#include <array>
#include <cstdint>
#include <deque>
#include <set>
#include <stdexcept>
#include <string_view>
#include <utility>

#include "daemon/storage/storage_error.h"
#include "daemon/wire_format/wire_reader.h"
#include "segment_names.h"
#include "window_regrouper.h"

namespace yoke::journal {
namespace {

// Runs a journal step, rethrowing the journal's errors as the storage interface's.
template <typename Step>
auto as_storage_errors(Step step) -> decltype(step()) {
  try {
    return step();
  } catch (const Corruption& damage) {
    throw storage::LogDamage(damage.what());
  } catch (const Error& error) {
    throw storage::LogError(error.what());
  }
}

// The Reader position to read after, for groups at positions >= from (0: all the journal
// holds, from its oldest segment on).
std::uint64_t after_position(storage::Position from, storage::Position first_segment) {
  if (from == 0) return first_segment == 0 ? 0 : first_segment - 1;
  return from - 1;
}

// Records back into groups (WindowRegrouper), optionally of one pool only.
class JournalGroupReader : public storage::GroupReader {
 public:
  JournalGroupReader(Reader reader, std::string pool)
      : reader_(std::move(reader)), pool_(std::move(pool)) {}

  std::optional<storage::LoggedGroup> next() override {
    return as_storage_errors([this]() -> std::optional<storage::LoggedGroup> {
      while (ready_.empty() && !ended_) {
        std::vector<storage::LoggedGroup> done;
        if (auto record = reader_.next()) {
          regrouper_.add(record->payload, done);
        } else {
          regrouper_.finish(done);
          ended_ = true;
        }
        for (storage::LoggedGroup& group : done) {
          if (pool_.empty() || group.pool == pool_) ready_.push_back(std::move(group));
        }
      }
      if (ready_.empty()) return std::nullopt;
      storage::LoggedGroup group = std::move(ready_.front());
      ready_.pop_front();
      return group;
    });
  }

  std::optional<std::string> stopped_early() const override {
    const std::optional<TailCut>& tail = reader_.tail();
    if (!tail) return std::nullopt;
    return tail->segment.string() + " ends in a damaged tail at byte " +
           std::to_string(tail->offset) + " (" + tail->reason + ")";
  }

 private:
  Reader reader_;
  std::string pool_;
  WindowRegrouper regrouper_;
  std::deque<storage::LoggedGroup> ready_;
  bool ended_ = false;
};

// Where a record serialized without events takes their bytes: before its first field numbered
// past the events' (Protobuf writes a message's fields in number order), or at its end. The
// bytes are a record this log just serialized: well formed, with no groups.
std::size_t events_offset(std::string_view bytes) {
  daemon::WireReader reader(bytes);
  while (!reader.done()) {
    const std::size_t field_start = reader.at();
    std::uint32_t field = 0;
    std::uint32_t wire_type = 0;
    if (!reader.tag(field, wire_type)) {
      throw std::logic_error("a serialized journal record has a field it cannot skip");
    }
    if (field > v1::JournalRecord::kEventsFieldNumber) return field_start;
    if (!reader.skip(wire_type)) throw std::logic_error("a serialized journal record is cut short");
  }
  return bytes.size();
}

}  // namespace

JournalView::JournalView(std::filesystem::path dir) : dir_(std::move(dir)) {}

std::string JournalView::describe() const { return "journal " + dir_.string(); }

storage::Position JournalView::first_position(std::string_view) const {
  return as_storage_errors([this]() -> storage::Position {
    const std::vector<std::uint64_t> segments = list_segments(dir_);
    return segments.empty() ? 0 : segments.front();
  });
}

std::unique_ptr<storage::GroupReader> JournalView::read_from(storage::Position from,
                                                             std::string_view pool) {
  return as_storage_errors([&]() -> std::unique_ptr<storage::GroupReader> {
    const std::uint64_t after = after_position(from, from == 0 ? first_position() : 0);
    return std::make_unique<JournalGroupReader>(Reader(dir_, after), std::string(pool));
  });
}

std::unique_ptr<JournalCommitLog> JournalCommitLog::open(const std::filesystem::path& dir,
                                                         const Options& options) {
  return as_storage_errors(
      [&] { return std::make_unique<JournalCommitLog>(Journal::open(dir, options)); });
}

JournalCommitLog::JournalCommitLog(Journal journal) : journal_(std::move(journal)) {}

std::string JournalCommitLog::describe() const {
  return "journal " + journal_.directory().string();
}

storage::Position JournalCommitLog::first_position(std::string_view) const {
  return journal_.first_position();
}

std::unique_ptr<storage::GroupReader> JournalCommitLog::read_from(storage::Position from,
                                                                  std::string_view pool) {
  return as_storage_errors([&]() -> std::unique_ptr<storage::GroupReader> {
    const std::uint64_t after = after_position(from, journal_.first_position());
    return std::make_unique<JournalGroupReader>(journal_.read_after(after), std::string(pool));
  });
}

storage::Position JournalCommitLog::end_position() const {
  return std::max(journal_.next_position(), resume_);
}

void JournalCommitLog::continue_from(storage::Position position) {
  resume_ = std::max(resume_, position);
}

storage::CommittedWindow JournalCommitLog::commit(std::vector<v1::JournalRecord> window) {
  return append_window(window, [&window](std::size_t i, std::string& bytes) {
    window[i].SerializeToString(&bytes);
    return Inserted{bytes.size(), {}};
  });
}

storage::CommittedWindow JournalCommitLog::commit_encoded(storage::EncodedWindow window) {
  if (window.events.size() != window.records.size()) {
    throw std::invalid_argument("an encoded window holds one list of events per record");
  }
  return append_window(window.records, [&window](std::size_t i, std::string& bytes) {
    window.records[i].SerializeToString(&bytes);
    return Inserted{events_offset(bytes), window.events[i]};  // written in place, not copied
  });
}

storage::CommittedWindow JournalCommitLog::append_window(
    std::vector<v1::JournalRecord>& records,
    const std::function<Inserted(std::size_t, std::string&)>& serialize) {
  const storage::Position start = end_position();
  if (records.empty()) return {0, start, {}};
  if (failed_) {
    throw storage::LogError(describe() + " refuses commits after a failed one; reopen it");
  }
  try {
    as_storage_errors([&] {
      storage::Position position = start;
      std::string bytes;
      for (std::size_t i = 0; i < records.size(); ++i) {
        records[i].set_window_start(start);  // before the payload serializes it
        bytes.clear();
        const Inserted inserted = serialize(i, bytes);
        const std::string_view whole(bytes);
        const std::array<std::string_view, 3> pieces{
            whole.substr(0, inserted.at), inserted.bytes, whole.substr(inserted.at)};
        journal_.append(position++, pieces);
      }
      journal_.sync();
    });
  } catch (...) {
    failed_ = true;
    throw;
  }
  storage::CommittedWindow committed{start, end_position(), {}};
  std::set<std::string_view> pools_seen;
  for (const v1::JournalRecord& record : records) {
    if (pools_seen.insert(record.pool()).second) committed.groups.push_back({record.pool(), start, true});
  }
  return committed;
}

std::size_t JournalCommitLog::drop_before(storage::Position position) {
  return as_storage_errors([&] { return journal_.drop_before(position); });
}

}  // namespace yoke::journal
