// Reading commit groups from the stream: an ordered consumer over one pool's subject or all
// pools' from a position, up to the last message stored when the reading began.
#pragma once

#include <chrono>
#include <memory>
#include <optional>
#include <set>
#include <string>

#include "daemon/cluster/log_reader.h"
#include "daemon/cluster/nats_connection.h"
#include "daemon/jetstream/pool_subjects.h"
#include "daemon/storage/commit_log.h"

namespace yoke::jetstream {

class JetStreamGroupReader : public storage::GroupReader {
 public:
  // Finds the first message of `filter` at or after `from` (one API round trip) and, when
  // there is one, creates the consumer there (one more). `from` = 0 reads all that is stored
  // and checks nothing; from > 0 checks each pool's first group for a dropped predecessor at
  // or above `from`. `where` names the log in messages. Throws cluster::ClusterError.
  JetStreamGroupReader(cluster::NatsConnection& connection, const std::string& stream,
                       const PoolSubjects& subjects, const std::string& filter,
                       storage::Position from, std::chrono::milliseconds read_timeout,
                       std::string where);

  // Throws LogDamage for a message that is not a pool's commit group, LogError when groups
  // from the position were dropped ("missing") or a stored message does not arrive in time.
  std::optional<storage::LoggedGroup> next() override;
  // Never: a stream has no torn tail (a message is stored whole or not at all).
  std::optional<std::string> stopped_early() const override { return std::nullopt; }

 private:
  PoolSubjects subjects_;
  storage::Position from_;
  std::chrono::milliseconds read_timeout_;
  std::string where_;
  std::unique_ptr<cluster::LogReader> reader_;  // null: nothing (more) to read
  std::set<std::string, std::less<>> pools_seen_;
};

}  // namespace yoke::jetstream
