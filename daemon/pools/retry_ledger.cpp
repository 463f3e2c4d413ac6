#include "retry_ledger.h"

#include <algorithm>

namespace yoke::daemon {

RetryLedger::RetryLedger(LedgerSettings settings) : settings_(settings) {
  settings_.batches_per_client = std::max<std::uint64_t>(settings_.batches_per_client, 1);
  settings_.max_clients_per_pool = std::max<std::uint64_t>(settings_.max_clients_per_pool, 1);
}

const RetryMark* RetryLedger::find(std::string_view pool, std::string_view client) const {
  const auto marks = pools_.find(pool);
  if (marks == pools_.end()) return nullptr;
  const auto entry = marks->second.clients.find(client);
  return entry == marks->second.clients.end() ? nullptr : &entry->second.mark;
}

RetryAnswer RetryLedger::classify(std::string_view pool, std::string_view client,
                                  std::uint64_t batch_number) const {
  const RetryMark* mark = find(pool, client);
  if (mark == nullptr) return {};
  RetryAnswer answer;
  answer.highest = mark->highest();
  if (batch_number > mark->highest().batch_number) return answer;
  // `recent` is sorted by number: a binary search finds an exact retry.
  const auto it = std::lower_bound(
      mark->recent.begin(), mark->recent.end(), batch_number,
      [](const AppliedBatch& applied, std::uint64_t number) { return applied.batch_number < number; });
  if (it != mark->recent.end() && it->batch_number == batch_number) {
    answer.verdict = RetryVerdict::duplicate;
    answer.seq = it->seq;
  } else {
    answer.verdict =
        batch_number >= mark->known_from ? RetryVerdict::skipped : RetryVerdict::forgotten;
  }
  return answer;
}

std::optional<AppliedBatch> RetryLedger::last(std::string_view pool,
                                              std::string_view client) const {
  const RetryMark* mark = find(pool, client);
  if (mark == nullptr) return std::nullopt;
  return mark->highest();
}

RetryLedger::ClientEntry RetryLedger::put(PoolMarks& marks, const std::string& client) {
  auto [it, inserted] = marks.clients.try_emplace(client);
  if (inserted) {
    ++marks_;
  } else {
    marks.activity.erase(it->second.active);
  }
  return it;
}

void RetryLedger::record(const std::string& pool, const std::string& client,
                         const AppliedBatch& batch) {
  PoolMarks& marks = pools_[pool];
  const auto existing = marks.clients.find(client);
  const bool continues = existing != marks.clients.end() &&
                         batch.batch_number > existing->second.mark.highest().batch_number;
  const ClientEntry entry = put(marks, client);
  RetryMark& mark = entry->second.mark;
  if (!continues) {
    // A new mark: nothing is known of the numbers below its first batch.
    mark.recent.clear();
    mark.known_from = batch.batch_number;
    mark.wall_time_us = 0;
  }
  mark.recent.push_back(batch);
  if (mark.recent.size() > settings_.batches_per_client) {
    // The oldest is forgotten: from the number after it on, outcomes stay known.
    mark.known_from = mark.recent.front().batch_number + 1;
    mark.recent.erase(mark.recent.begin());
  }
  entry->second.active = marks.activity.emplace(batch.seq, &entry->first);
}

void RetryLedger::restore(const std::string& pool, const std::string& client, RetryMark mark) {
  if (mark.recent.empty()) return;
  if (mark.recent.size() > settings_.batches_per_client) {
    const auto cut = mark.recent.end() - static_cast<std::ptrdiff_t>(settings_.batches_per_client);
    mark.known_from = std::max(mark.known_from, (cut - 1)->batch_number + 1);
    mark.recent.erase(mark.recent.begin(), cut);
  }
  PoolMarks& marks = pools_[pool];
  const ClientEntry entry = put(marks, client);
  const std::uint64_t seq = mark.highest().seq;
  entry->second.mark = std::move(mark);
  entry->second.active = marks.activity.emplace(seq, &entry->first);
}

void RetryLedger::drop(PoolMarks& marks, Activity::iterator oldest) {
  const auto entry = marks.clients.find(*oldest->second);
  marks.activity.erase(oldest);
  marks.clients.erase(entry);
  --marks_;
}

std::size_t RetryLedger::close_group(std::string_view pool, std::uint64_t first_seq,
                                     std::uint64_t wall_time_us) {
  const auto found = pools_.find(pool);
  if (found == pools_.end()) return 0;
  PoolMarks& marks = found->second;
  for (auto it = marks.activity.lower_bound(first_seq); it != marks.activity.end(); ++it) {
    marks.clients.find(*it->second)->second.mark.wall_time_us = wall_time_us;
  }
  std::size_t dropped = 0;
  if (settings_.idle_seconds > 0) {
    const std::uint64_t idle_us = settings_.idle_seconds * 1'000'000;
    // From the least recently active on; stops at the first client still within the horizon
    // (wall clocks may step back: the order is the log's, not the clock's).
    while (!marks.activity.empty()) {
      const RetryMark& oldest = marks.clients.find(*marks.activity.begin()->second)->second.mark;
      if (oldest.wall_time_us >= wall_time_us || wall_time_us - oldest.wall_time_us <= idle_us) {
        break;
      }
      drop(marks, marks.activity.begin());
      ++dropped;
    }
  }
  while (marks.clients.size() > settings_.max_clients_per_pool) {
    drop(marks, marks.activity.begin());
    ++dropped;
  }
  if (marks.clients.empty()) pools_.erase(found);
  return dropped;
}

std::vector<std::pair<std::string, RetryMark>> RetryLedger::clients_of(
    std::string_view pool) const {
  std::vector<std::pair<std::string, RetryMark>> clients;
  const auto marks = pools_.find(pool);
  if (marks == pools_.end()) return clients;
  clients.reserve(marks->second.clients.size());
  for (const auto& [client, entry] : marks->second.clients) clients.emplace_back(client, entry.mark);
  return clients;
}

std::size_t RetryLedger::erase_pool(std::string_view pool) {
  const auto marks = pools_.find(pool);
  if (marks == pools_.end()) return 0;
  const std::size_t removed = marks->second.clients.size();
  marks_ -= removed;
  pools_.erase(marks);
  return removed;
}

}  // namespace yoke::daemon
