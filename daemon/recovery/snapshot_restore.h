// A pool read back from a snapshot record and checked before anyone trusts it: recovery's and
// `yoke replay`'s (they restore through this alone).
#pragma once

#include <cstdint>
#include <memory>

#include "daemon/storage/storage_error.h"
#include "yoke/pool.h"
#include "yoke/v1/records.pb.h"

namespace yoke::daemon {

using SnapshotDamage = storage::SnapshotDamage;

// The engine_state encoding this daemon writes and reads (Pool::save).
inline constexpr std::uint32_t kEngineStateFormat = 1;

// A pool rebuilt from a SnapshotRecord whose certificate holds and whose weight, pairs,
// vertices and edges agree with the record. Throws SnapshotDamage saying what failed.
// O(the pool's state), the certificate check included.
std::unique_ptr<Pool> restore_checked(const v1::SnapshotRecord& record);

}  // namespace yoke::daemon
