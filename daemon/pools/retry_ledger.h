// Exactly-once batches: each client numbers its batches per pool, and a batch whose number is
// not above the last one applied for (pool, client) is a retry, answered and not applied again
// (proto/yoke/v1/events.proto, EventBatch). The ledger keeps each (pool, client)'s last batch
// only: a retry of that batch gets its sequence number back; an older one is known to be
// applied, without its number.
#pragma once

#include <cstdint>
#include <map>
#include <optional>
#include <string>
#include <utility>
#include <vector>

namespace yoke::daemon {

struct AppliedBatch {
  std::uint64_t batch_number = 0;
  std::uint64_t seq = 0;  // the sequence number that batch became
};

enum class RetryVerdict {
  fresh,      // not seen: apply it
  duplicate,  // the last batch again: answer with its outcome
  older,      // below the last batch: applied long ago, answer without applying
};

class RetryLedger {
 public:
  RetryVerdict classify(const std::string& pool, const std::string& client,
                        std::uint64_t batch_number) const;
  // The last batch applied for (pool, client).
  std::optional<AppliedBatch> last(const std::string& pool, const std::string& client) const;
  // Records an applied batch; recovery calls it for every journal record it replays.
  void record(const std::string& pool, const std::string& client, const AppliedBatch& batch);
  std::size_t size() const { return last_.size(); }
  // Every client's last batch in one pool, by client id (what a snapshot of the pool keeps).
  std::vector<std::pair<std::string, AppliedBatch>> clients_of(const std::string& pool) const;
  // Forgets every client's mark in one pool (a daemon that stops serving it). Returns how many
  // it removed. O(log marks + the pool's marks).
  std::size_t erase_pool(const std::string& pool);

 private:
  std::map<std::pair<std::string, std::string>, AppliedBatch> last_;  // (pool, client)
};

}  // namespace yoke::daemon
