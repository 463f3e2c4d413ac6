// Published diffs handed back for the next repair's diff, so that their pairs are not
// allocated on a worker and freed on the loop once per pair and commit.
#pragma once

#include <cstddef>
#include <mutex>
#include <vector>

#include "yoke/v1/publish.pb.h"

namespace yoke::daemon {

// A few emptied v1::Diff messages. Protobuf keeps a repeated message field's elements when the
// field is cleared and fills them again on add_*(), so a diff made in a recycled message
// costs no allocation per pair (the bytes it serializes to are those of a fresh one).
// Thread-safe: the loop gives back what it published, the repair workers take.
class DiffRecycler {
 public:
  // At most this many diffs are kept, each holding at most kMaxKeptPairs pair messages
  // (removed and added): a new pool's base graph (10^5 pairs) is freed, not kept.
  static constexpr std::size_t kMaxKept = 4;
  static constexpr int kMaxKeptPairs = 1 << 15;

  // An empty diff: a kept one if there is one. O(1).
  v1::Diff take();
  // Empties `diff` (O(its pairs), outside the lock) and keeps it unless too many or too big.
  void give(v1::Diff&& diff);

  std::size_t kept() const;

 private:
  mutable std::mutex mutex_;
  std::vector<v1::Diff> kept_;
};

}  // namespace yoke::daemon
