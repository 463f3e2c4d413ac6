// One commit group as one stream message: the pool's records of one window, in seq order,
// each a serialized JournalRecord behind its length (a varint), with headers that name the
// format and link the group to its pool's previous group.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "daemon/cluster/log_message.h"
#include "daemon/storage/commit_log.h"

namespace yoke::jetstream {

inline constexpr const char* kFormatHeader = "Yoke-Group";
inline constexpr const char* kFormat = "journal-records/1";
// The stream sequence of the same pool's previous group when this one was written (0: none
// stored then). A reader from position P that meets a pool's first group with a link >= P
// knows that groups at or above P were dropped (the log says "missing" instead of skipping).
inline constexpr const char* kPreviousHeader = "Yoke-Pool-Previous";
// The epoch the writer wrote the group under (ownership_rule.h: the group counts iff it is the
// pool's epoch in force at the group's sequence); absent = 0, and epoch 0 is written absent.
inline constexpr const char* kEpochHeader = "Yoke-Epoch";

struct GroupMessage {
  cluster::Headers headers;
  std::string data;
};

// The message of one pool's records (non-empty, all naming the same pool) written under
// `epoch`. O(bytes).
GroupMessage encode_group(const std::vector<v1::JournalRecord>& records,
                          std::uint64_t previous_of_pool, std::uint64_t epoch = 0);

struct DecodedGroup {
  storage::LoggedGroup group;
  std::uint64_t previous_of_pool = 0;
  std::uint64_t epoch = 0;
};

// The group a message of `pool`'s subject holds, positioned at the message's sequence. Throws
// storage::LogDamage naming `where` for a message of another format, a record that does not
// parse, an empty group, records of another pool, or an unreadable link or epoch. O(bytes).
DecodedGroup decode_group(cluster::LogMessage message, const std::string& pool,
                          const std::string& where);

}  // namespace yoke::jetstream
