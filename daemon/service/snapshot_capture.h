// A snapshot's contents taken from the running service. The check that a snapshot's contents
// can be trusted when they are read back (restore_checked) is in daemon/recovery/.
#pragma once

#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "daemon/recovery/snapshot_restore.h"
#include "daemon/storage/storage_error.h"
#include "yoke/pool.h"
#include "pool_progress.h"
#include "pool_service.h"

namespace yoke::daemon {

// One record per pool that has applied a batch, in name order, with its retry marks. Call
// between windows (nothing pending). O(state size).
std::vector<v1::SnapshotRecord> capture_snapshot(PoolService& service);

// One pool's record in a snapshot named `position` taken at `wall_time`, or nothing when the
// pool has applied nothing: call it when the pool's state is the one at `position` (between
// its windows, no repair of it in flight). O(the pool's state): Pool::save() here.
std::optional<v1::SnapshotRecord> capture_pool_at(PoolService& service, const std::string& pool,
                                                 std::uint64_t position, std::uint64_t wall_time);

// A pool's record in two parts, for a snapshot whose engine states are saved off the loop
// (daemon/server/background_snapshot). The heading, gathered on the loop at the snapshot's
// start: the pool, `seq` (its last in the log at `position`), its retry marks up to `seq`, the
// position and `wall_time`; nothing when `seq` is 0 or the pool is unknown. O(the pool's
// client marks).
std::optional<v1::SnapshotRecord> record_heading(PoolService& service, const std::string& pool,
                                                 std::uint64_t seq, std::uint64_t position,
                                                 std::uint64_t wall_time);
// Then the engine's part (config, counts, state), captured at that same seq. O(1) beyond the
// state's move.
void add_engine_part(v1::SnapshotRecord& record, PoolService::EngineCapture engine);

// One pool's record, at the position that names a snapshot of that pool alone: its
// last_position + 1 (in cluster mode the pool's snapshot subject; the record's
// journal_position says the same). Nothing when the pool has applied nothing here. Call
// between windows. O(the pool's state).
std::optional<v1::SnapshotRecord> capture_pool_snapshot(PoolService& service,
                                                        const std::string& pool);

// A client's retry mark as a snapshot keeps it (records.proto, ClientMark), without the
// batches above `durable_seq` (the open window's: the log does not hold them yet); nothing
// when no batch is left. And back: a mark from a snapshot written before ClientMark had wall
// times and earlier batches knows its last batch alone; a mark without a wall time counts its
// idle time from the snapshot's.
std::optional<v1::ClientMark> snapshot_mark(const std::string& client, const RetryMark& mark,
                                            std::uint64_t durable_seq);
RetryMark retry_mark_from_snapshot(const v1::ClientMark& mark, std::uint64_t snapshot_wall_time);

}  // namespace yoke::daemon
