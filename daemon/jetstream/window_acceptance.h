// The writer's half of the log's rule (ownership_rule.h): after a pool's window is stored at
// sequence S under epoch e, did an accepted claim come between e and S? Read from the pool's
// claim subject alone, without folding the whole history.
#pragma once

#include <cstdint>
#include <string>

#include "daemon/cluster/nats_connection.h"

namespace yoke::jetstream {

// Whether the rule counts a window of `pool` stored at `sequence` under `epoch`, given that
// `epoch` is in force just after itself (it is 0, or the sequence of a claim of `pool` the
// rule accepted: what claim_pool returned). The window is refused iff a claim of the pool
// between `epoch` and `sequence` expects `epoch` (the first such claim is accepted: every
// claim before it expects another epoch and is refused). Call it after the window's publish
// is acknowledged: the stream leader then answers for every claim below `sequence`.
// One API round trip when no claim follows `epoch` below `sequence` (the common case), two
// more per claim that does. Throws storage::LogDamage for a claim message that cannot be
// read, storage::LogError when the stream cannot be asked; `where` names the log.
bool window_counted(cluster::NatsConnection& connection, const std::string& stream,
                    const std::string& claim_subject, const std::string& pool,
                    std::uint64_t epoch, std::uint64_t sequence, const std::string& where);

}  // namespace yoke::jetstream
