#include "group_sequence.h"

#include <string>

#include "recovery_error.h"

namespace yoke::daemon {
namespace {

std::string missing_seq(std::uint64_t expected, std::uint64_t found) {
  if (expected == 1) {
    return "seq 1 is missing (the pool's first record here is seq " + std::to_string(found) + ")";
  }
  return "seq " + std::to_string(expected) + " is missing (the record after seq " +
         std::to_string(expected - 1) + " is seq " + std::to_string(found) + ")";
}

}  // namespace

GroupStep place_group(const CommitGroup& group, std::uint64_t last_seq, bool pool_exists) {
  const auto fail = [&group](const std::string& why) {
    return RecoveryError("journal window " + std::to_string(group.position) + ", pool " +
                         group.pool + ": " + why);
  };
  if (group.records.empty()) throw fail("the group holds no record");
  const std::uint64_t first_seq = group.records.front().seq();
  if (group.records.back().seq() <= last_seq) return GroupStep::held;
  if (first_seq != last_seq + 1) throw fail(missing_seq(last_seq + 1, first_seq));
  if (!pool_exists && first_seq != 1) throw fail("the pool's earlier records are missing");
  for (std::size_t i = 1; i < group.records.size(); ++i) {
    const std::uint64_t seq = group.records[i].seq();
    const std::uint64_t previous = group.records[i - 1].seq();
    if (seq != previous + 1) throw fail(missing_seq(previous + 1, seq));
  }
  for (std::size_t i = 0; i + 1 < group.records.size(); ++i) {
    if (group.records[i].retired()) {
      throw fail("the retirement at seq " + std::to_string(group.records[i].seq()) +
                 " does not end its window");
    }
  }
  return group.records.back().retired() ? GroupStep::retire : GroupStep::commit;
}

}  // namespace yoke::daemon
