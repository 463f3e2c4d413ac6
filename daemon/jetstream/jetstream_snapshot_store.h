// The JetStream backend of the snapshot store (daemon/storage/snapshot_store.h), in the
// commit log's stream: the snapshot at position P is the subject "<prefix>.snap.<P>", holding
// the snapshot's bytes (each SnapshotRecord behind its varint length) in chunks of at most
// 512 KiB, then a manifest (position, size, CRC-32C, chunk count, the first chunk's sequence,
// the pools). A snapshot is whole when its subject ends with a manifest whose checks pass; a
// write cut short leaves chunks without a manifest, which read() calls damage. Pruning purges
// whole subjects.
//
// Two forms: the whole installation's (every pool of one daemon in one snapshot,
// "<prefix>.snap.<P>"), and one pool's (cluster mode, where each pool has its own owner:
// "<prefix>.snap.<token>.<P>", P = the pool's last applied group's sequence + 1, each snapshot
// holding that pool alone). A store of one form never sees the other's snapshots.
#pragma once

#include <cstddef>
#include <memory>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "daemon/cluster/nats_connection.h"
#include "daemon/jetstream/jetstream_commit_log.h"
#include "daemon/storage/snapshot_store.h"

namespace yoke::jetstream {

inline constexpr std::size_t kSnapshotChunkBytes = 512 * 1024;

class JetStreamSnapshotStore : public storage::SnapshotStore {
 public:
  // Makes sure the stream exists (as JetStreamCommitLog::open does) and keeps the newest
  // `keep` (>= 1) snapshots: of the whole installation when `pool` is empty, of `pool` alone
  // otherwise. Throws LogError, std::invalid_argument for a bad prefix or keep.
  static std::unique_ptr<JetStreamSnapshotStore> open(cluster::NatsConnection& connection,
                                                      JetStreamLogSettings settings,
                                                      std::size_t keep,
                                                      std::string_view pool = {});

  std::string describe() const override;
  // Publishes the chunks and then the manifest, each acknowledged (one round trip per 512 KiB
  // and one more), then purges the subjects of the snapshots beyond the newest `keep`. Returns
  // "<stream>:<subject>". A store of one pool takes that pool's record alone (or none):
  // std::invalid_argument for another pool's.
  std::string write(storage::Position position,
                    const std::vector<v1::SnapshotRecord>& pools) override;
  // The snapshot subjects of the store's form ("<prefix>.snap.*", or "<prefix>.snap.<token>.*")
  // that hold messages (one stream-info request), newest first.
  std::vector<storage::Position> positions() const override;
  // The subject's last message (the manifest), then its chunks through an ordered consumer.
  // SnapshotDamage when the manifest is missing or wrong or the bytes fail its checks;
  // LogError when the subject holds nothing or the stream cannot be read.
  storage::SnapshotContents read(storage::Position position) const override;
  std::optional<storage::Position> oldest_needed() const override;

  // The pool whose snapshots this store holds; empty for the whole installation's.
  const std::string& pool() const { return pool_; }

 private:
  JetStreamSnapshotStore(cluster::NatsConnection& connection, JetStreamLogSettings settings,
                         std::size_t keep, std::string pool);
  std::string subject_of(storage::Position position) const;
  std::string every_subject() const;
  std::optional<storage::Position> position_of(const std::string& subject) const;

  cluster::NatsConnection& connection_;
  JetStreamLogSettings settings_;
  PoolSubjects subjects_;
  std::size_t keep_;
  std::string pool_;
};

}  // namespace yoke::jetstream
