// Reading and writing one snapshot file (FORMAT.md): the SnapshotRecords of every pool at one
// journal position, framed and checksummed, written atomically.
#pragma once

#include <cstdint>
#include <filesystem>
#include <vector>

#include "daemon/storage/snapshot_store.h"
#include "daemon/storage/storage_error.h"
#include "yoke/v1/records.pb.h"

namespace yoke::daemon {

// A snapshot file that cannot be trusted: short, a wrong checksum, a bad magic or record.
using SnapshotDamage = storage::SnapshotDamage;
// A snapshot file's journal position and pools.
using SnapshotContents = storage::SnapshotContents;

// Writes `path` atomically (a temporary file, fsync, rename, fsync of the directory). Throws
// journal::Error (naming the file and the system call) when a write fails.
void write_snapshot_file(const std::filesystem::path& path, std::uint64_t journal_position,
                         const std::vector<v1::SnapshotRecord>& pools);

// Reads and checks a whole file. Throws SnapshotDamage saying what is wrong and where, and
// journal::Error when the file cannot be read at all.
SnapshotContents read_snapshot_file(const std::filesystem::path& path);

}  // namespace yoke::daemon
