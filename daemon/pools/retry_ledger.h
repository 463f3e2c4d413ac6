// Exactly-once batches: each client numbers its batches per pool (proto/yoke/v1/events.proto,
// EventBatch, where the rule is written for clients). Per (pool, client id) the ledger keeps a
// mark: the client's most recent accepted batches (numbers and seqs, up to
// LedgerSettings::batches_per_client), and the lowest number from which it knows every
// outcome. A batch number is then
//   - above the client's highest: new (fresh);
//   - one of the remembered batches: a retry, answered with that batch's own seq (duplicate);
//   - below the highest, at or above the known range's start, not remembered: never applied
//     (skipped: the client went past it);
//   - below the known range: whether it was applied is no longer known (forgotten).
// The horizon: a pool's marks are dropped when their client has been idle for idle_seconds, and
// beyond max_clients_per_pool marks (least recently active first), each time the pool closes a
// window (close_group). The decisions depend on the log alone (seqs and the wall times written
// in the journal records), so replaying the same log under the same settings rebuilds the same
// ledger. Memory: at most max_clients_per_pool marks per pool, each its id (at most
// kMaxClientIdBytes) and batches_per_client pairs of numbers.
#pragma once

#include <cstdint>
#include <functional>
#include <map>
#include <optional>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

namespace yoke::daemon {

// The longest client id a batch may carry (the batch decoder refuses longer ones).
inline constexpr std::size_t kMaxClientIdBytes = 128;

// The [ledger] section of the config: the exactly-once horizon.
struct LedgerSettings {
  // Batches remembered per client and pool, with their seqs: a retry of one of them gets its
  // seq back. A client should keep at most this many batches in flight.
  std::uint64_t batches_per_client = 64;
  // A mark is dropped by the pool's first window at least this long (by the journal records'
  // wall times) after the client's last batch; 0 = never by time.
  std::uint64_t idle_seconds = 86400;
  // Marks kept per pool; past it, the least recently active clients' marks are dropped.
  std::uint64_t max_clients_per_pool = 4096;
};

struct AppliedBatch {
  std::uint64_t batch_number = 0;
  std::uint64_t seq = 0;  // the sequence number that batch became
  bool operator==(const AppliedBatch&) const = default;
};

// What the ledger holds of one client in one pool.
struct RetryMark {
  // The client's most recent accepted batches, oldest first; back() is its highest. Never empty.
  std::vector<AppliedBatch> recent;
  // Every number from here to the highest was accepted iff it is in `recent`; below it the
  // ledger does not know.
  std::uint64_t known_from = 0;
  // The wall time written in the journal records of the client's latest closed window
  // (microseconds since the Unix epoch): its batch in an open window is stamped when the
  // window closes. 0 for a new mark until then.
  std::uint64_t wall_time_us = 0;

  const AppliedBatch& highest() const { return recent.back(); }
  bool operator==(const RetryMark&) const = default;
};

enum class RetryVerdict {
  fresh,      // above the highest batch, or no mark: apply it (after_batch permitting)
  duplicate,  // a remembered batch: answer with its seq, apply nothing
  skipped,    // below the highest and never accepted: refuse (BATCH_SKIPPED)
  forgotten,  // below what the ledger knows: refuse (BATCH_FORGOTTEN)
};

struct RetryAnswer {
  RetryVerdict verdict = RetryVerdict::fresh;
  std::uint64_t seq = 0;  // duplicate: the seq of that batch
  std::optional<AppliedBatch> highest;  // the client's highest accepted batch, when marked
};

class RetryLedger {
 public:
  explicit RetryLedger(LedgerSettings settings = {});
  // Moves keep the index's pointers valid (map nodes move with the maps); copies would not.
  RetryLedger(RetryLedger&&) = default;
  RetryLedger& operator=(RetryLedger&&) = default;
  RetryLedger(const RetryLedger&) = delete;
  RetryLedger& operator=(const RetryLedger&) = delete;

  const LedgerSettings& settings() const { return settings_; }

  // The verdict on batch `batch_number` of `client` in `pool`. O(log marks + batches_per_client).
  RetryAnswer classify(std::string_view pool, std::string_view client,
                       std::uint64_t batch_number) const;
  // The client's highest accepted batch in the pool. O(log marks).
  std::optional<AppliedBatch> last(std::string_view pool, std::string_view client) const;
  const RetryMark* find(std::string_view pool, std::string_view client) const;

  // Records an accepted batch, visible to classify() at once (the service records a batch
  // when it enters the window; recovery for every journal record it replays). A number at or
  // below the client's highest starts a new mark (the old one had expired when it was
  // accepted). close_group() stamps the wall time. O(log marks + batches_per_client).
  void record(const std::string& pool, const std::string& client, const AppliedBatch& batch);

  // The pool's batches with seq >= first_seq (one window's group) are in the log with
  // `wall_time_us`: stamps their clients' marks with it, then applies the horizon (idle marks,
  // then the count). Returns how many marks it dropped. O(group's clients x log marks +
  // dropped x log marks).
  std::size_t close_group(std::string_view pool, std::uint64_t first_seq,
                          std::uint64_t wall_time_us);

  // Puts a whole mark (from a snapshot or a pool moved in), replacing the client's; keeps the
  // newest batches_per_client batches of it. Ignored when `mark.recent` is empty. O(log marks).
  void restore(const std::string& pool, const std::string& client, RetryMark mark);

  // Every client's mark in one pool, by client id (what a snapshot of the pool keeps).
  // O(the pool's marks).
  std::vector<std::pair<std::string, RetryMark>> clients_of(std::string_view pool) const;
  // Forgets every client's mark in one pool (a daemon that stops serving it). Returns how many
  // it removed. O(log pools + the pool's marks).
  std::size_t erase_pool(std::string_view pool);
  // Marks held, over all pools.
  std::size_t size() const { return marks_; }

 private:
  // A pool's clients by the seq of their highest batch: least recently active first.
  using Activity = std::multimap<std::uint64_t, const std::string*>;
  struct Entry {
    RetryMark mark;
    Activity::iterator active;
  };
  struct PoolMarks {
    std::map<std::string, Entry, std::less<>> clients;
    Activity activity;
  };

  using ClientEntry = std::map<std::string, Entry, std::less<>>::iterator;
  // The client's entry, out of the activity index (the caller puts it back in).
  ClientEntry put(PoolMarks& marks, const std::string& client);
  void drop(PoolMarks& marks, Activity::iterator oldest);

  LedgerSettings settings_;
  std::map<std::string, PoolMarks, std::less<>> pools_;
  std::size_t marks_ = 0;
};

}  // namespace yoke::daemon
