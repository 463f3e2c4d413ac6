// Where a pool's entries live in the installation's stream: its commit groups on
// `<prefix>.ev.<token>`, its claims on `<prefix>.claim.<token>`, its own snapshots (cluster
// mode) on `<prefix>.snap.<token>.<P>`, its diffs on `<prefix>.diff.<token>`. A pool name may hold '.', which separates subject tokens, so the token is
// an escaped form of the name: ASCII letters, digits, '-' and ':' stay as they are; every other
// byte (the daemon's pool names add only '.' and '_') becomes '_' and two lowercase hex digits:
// "berth.7_a" -> "berth_2e7_5fa". The mapping is one to one (an '_' always starts an escape),
// so names that differ only by escaped characters get different subjects, and a token that no
// name maps to (an '_' not followed by two lowercase hex digits, an escape of a byte that needs
// none) is refused when read back.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>

namespace yoke::jetstream {

// The subject token of a pool name (non-empty). Throws std::invalid_argument for "". O(length).
std::string pool_token(std::string_view pool);

// The pool name a token stands for, or nullopt when no name maps to it. O(length).
std::optional<std::string> pool_of_token(std::string_view token);

// The subjects of one installation under a prefix of one or more dot-separated tokens of ASCII
// letters, digits, '-' and '_' ("yoke", "site-4.yoke").
class PoolSubjects {
 public:
  // Throws std::invalid_argument for a prefix that is not of that form.
  explicit PoolSubjects(std::string prefix);

  const std::string& prefix() const { return prefix_; }
  // "<prefix>.>": everything the installation's stream holds.
  std::string stream_filter() const { return prefix_ + ".>"; }
  // "<prefix>.ev.>": every pool's commit groups.
  std::string all_pools() const { return prefix_ + ".ev.>"; }
  // "<prefix>.ev.<token>". Throws std::invalid_argument for "".
  std::string of_pool(std::string_view pool) const;
  // The pool whose subject this is, or nullopt for a subject that is not a pool's.
  std::optional<std::string> pool_of_subject(std::string_view subject) const;
  // "<prefix>.snap.<position>": the chunks and the manifest of the snapshot at a position.
  std::string of_snapshot(std::uint64_t position) const {
    return prefix_ + ".snap." + std::to_string(position);
  }
  // "<prefix>.snap.*": every snapshot's subject.
  std::string all_snapshots() const { return prefix_ + ".snap.*"; }
  // The position a snapshot subject names, or nullopt for another subject.
  std::optional<std::uint64_t> snapshot_of_subject(std::string_view subject) const;
  // "<prefix>.claim.<token>": the pool's claims (claim_message.h). Throws std::invalid_argument
  // for "".
  std::string of_claims(std::string_view pool) const;
  // "<prefix>.claim.*": every pool's claims.
  std::string all_claims() const { return prefix_ + ".claim.*"; }
  // The pool whose claim subject this is, or nullopt for another subject.
  std::optional<std::string> pool_of_claim_subject(std::string_view subject) const;
  // "<prefix>.snap.<token>.<position>": one pool's snapshot at a position (cluster mode, one
  // pool per snapshot). Throws std::invalid_argument for "".
  std::string of_pool_snapshot(std::string_view pool, std::uint64_t position) const;
  // "<prefix>.snap.<token>.*": every snapshot of one pool. Throws std::invalid_argument for "".
  std::string pool_snapshots(std::string_view pool) const;
  // The position a snapshot subject of `pool` names, or nullopt for another subject.
  std::optional<std::uint64_t> pool_snapshot_of_subject(std::string_view pool,
                                                        std::string_view subject) const;
  // "<prefix>.diff.<token>": the pool's diffs (diff_feed_message.h). Throws
  // std::invalid_argument for "".
  std::string of_diffs(std::string_view pool) const;
  // "<prefix>.start": markers that move the stream's sequence forward (continue_from).
  std::string start_marker() const { return prefix_ + ".start"; }

 private:
  std::string prefix_;
};

}  // namespace yoke::jetstream
