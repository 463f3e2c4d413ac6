#include "retry_ledger.h"

namespace yoke::daemon {

RetryVerdict RetryLedger::classify(const std::string& pool, const std::string& client,
                                   std::uint64_t batch_number) const {
  const auto it = last_.find({pool, client});
  if (it == last_.end() || batch_number > it->second.batch_number) return RetryVerdict::fresh;
  return batch_number == it->second.batch_number ? RetryVerdict::duplicate : RetryVerdict::older;
}

std::optional<AppliedBatch> RetryLedger::last(const std::string& pool,
                                              const std::string& client) const {
  const auto it = last_.find({pool, client});
  if (it == last_.end()) return std::nullopt;
  return it->second;
}

void RetryLedger::record(const std::string& pool, const std::string& client,
                         const AppliedBatch& batch) {
  last_[{pool, client}] = batch;
}

std::vector<std::pair<std::string, AppliedBatch>> RetryLedger::clients_of(
    const std::string& pool) const {
  std::vector<std::pair<std::string, AppliedBatch>> clients;
  for (auto it = last_.lower_bound({pool, std::string()});
       it != last_.end() && it->first.first == pool; ++it) {
    clients.emplace_back(it->first.second, it->second);
  }
  return clients;
}

std::size_t RetryLedger::erase_pool(const std::string& pool) {
  const auto first = last_.lower_bound({pool, std::string()});
  auto end = first;
  std::size_t removed = 0;
  for (; end != last_.end() && end->first.first == pool; ++end) ++removed;
  last_.erase(first, end);
  return removed;
}

}  // namespace yoke::daemon
