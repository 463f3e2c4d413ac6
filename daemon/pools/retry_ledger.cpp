#include "retry_ledger.h"

namespace yoke::daemon {

RetryVerdict RetryLedger::classify(const std::string& client, std::uint64_t batch_number) const {
  const auto it = last_.find(client);
  if (it == last_.end() || batch_number > it->second.batch_number) return RetryVerdict::fresh;
  return batch_number == it->second.batch_number ? RetryVerdict::duplicate : RetryVerdict::stale;
}

std::optional<AppliedBatch> RetryLedger::last(const std::string& client) const {
  const auto it = last_.find(client);
  if (it == last_.end()) return std::nullopt;
  return it->second;
}

void RetryLedger::record(const std::string& client, const AppliedBatch& batch) {
  last_[client] = batch;
}

}  // namespace yoke::daemon
