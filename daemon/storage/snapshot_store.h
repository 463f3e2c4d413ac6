// The snapshot store: the full state of the daemon's pools at one commit log position
// (commit_log.h: a snapshot named P covers the log's groups below P), kept so that recovery
// reads only the log after it. Backends: the local snapshot directory
// (daemon/snapshots/snapshot_directory.h: one checksummed file per snapshot), or chunks plus
// a manifest in a replicated log.
//
// A store keeps the newest few snapshots so that a damaged newest one has an older one to fall
// back on; the commit log must keep its groups from oldest_needed() on. Threads: one thread
// uses a store. Errors: storage_error.h.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "commit_log.h"
#include "yoke/v1/records.pb.h"

namespace yoke::storage {

struct SnapshotContents {
  Position position = 0;                 // as stored inside the snapshot
  std::vector<v1::SnapshotRecord> pools;  // one per pool, as written
};

class SnapshotStore {
 public:
  virtual ~SnapshotStore() = default;

  // Names the store in messages.
  virtual std::string describe() const = 0;

  // Stores a snapshot of `pools` at `position` and returns once it is durable and whole (a
  // crash leaves it entirely or not at all). Then deletes the snapshots beyond the newest kept
  // ones. Returns the name it is stored under (a file path) for logs and replies. Cost:
  // O(bytes) plus one durability wait. Throws LogError when it cannot be stored (the older
  // snapshots stay).
  virtual std::string write(Position position, const std::vector<v1::SnapshotRecord>& pools) = 0;

  // The positions of the snapshots stored, newest first, damaged ones included (reading tells).
  // O(snapshots). Throws LogError when the store cannot be listed.
  virtual std::vector<Position> positions() const = 0;

  // Reads and checks the snapshot stored at `position` (one of positions()). Throws
  // SnapshotDamage (naming it) when it fails a check, including a snapshot that says it holds
  // another position than the one it is stored under; LogError when it is not stored or
  // cannot be read. O(bytes).
  virtual SnapshotContents read(Position position) const = 0;

  // The oldest position a fallback may still need (the oldest snapshot kept): the commit log
  // must keep its groups from here on. nullopt with no snapshot. O(snapshots).
  virtual std::optional<Position> oldest_needed() const = 0;
};

}  // namespace yoke::storage
