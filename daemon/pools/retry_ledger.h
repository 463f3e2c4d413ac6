// Exactly-once batches: each client numbers its batches, and a batch whose (client, number) was
// applied before is answered with its first outcome instead of being applied again. Numbers
// must grow per client; the ledger keeps each client's last batch only (a client retries the
// batch it has no answer for, never an older one).
#pragma once

#include <cstdint>
#include <map>
#include <optional>
#include <string>

namespace yoke::daemon {

struct AppliedBatch {
  std::uint64_t batch_number = 0;
  std::string pool;
  std::uint64_t seq = 0;  // the pool's sequence number that batch became
};

enum class RetryVerdict {
  fresh,      // not seen: apply it
  duplicate,  // the client's last batch again: answer with its outcome
  stale,      // older than the client's last batch: refuse
};

class RetryLedger {
 public:
  RetryVerdict classify(const std::string& client, std::uint64_t batch_number) const;
  // The outcome of the client's last batch (for duplicates).
  std::optional<AppliedBatch> last(const std::string& client) const;
  // Records an applied batch; recovery calls it for every journal record it replays.
  void record(const std::string& client, const AppliedBatch& batch);
  std::size_t clients() const { return last_.size(); }

 private:
  std::map<std::string, AppliedBatch> last_;
};

}  // namespace yoke::daemon
