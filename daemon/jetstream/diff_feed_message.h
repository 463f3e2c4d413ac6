// A pool's diffs in the installation's stream (cluster mode): the subject
// "<prefix>.diff.<token>" (PoolSubjects::of_diffs) holds one message per diff the serving
// daemon published, in seq order; the data is the same serialized yoke.v1.Publication the
// daemon's ZeroMQ PUB socket sends, the header "Yoke-Seq" the diff's seq (decimal), so that a
// reader finds where the subject ends without parsing the publication.
#pragma once

#include <cstdint>
#include <optional>
#include <string>

#include "daemon/cluster/log_message.h"
#include "daemon/cluster/nats_connection.h"

namespace yoke::jetstream {

inline constexpr const char* kDiffSeqHeader = "Yoke-Seq";

// The headers of the diff with this seq.
cluster::Headers diff_feed_headers(std::uint64_t seq);

// The seq a stored diff names in its header; nullopt when the header is missing or not a
// decimal number.
std::optional<std::uint64_t> diff_feed_seq(const cluster::LogMessage& message);

// The newest diff stored on a pool's diff subject.
struct StoredDiff {
  std::uint64_t seq = 0;              // the diff's seq (Yoke-Seq)
  std::uint64_t stream_sequence = 0;  // where it sits in the stream
};

// The newest diff stored on `diff_subject` in `stream`, or nullopt when the subject holds
// none. One API round trip answered by the stream leader (so every acknowledged diff counts),
// at most the connection's api_timeout. Throws cluster::ClusterError, and
// std::runtime_error for a message without a readable Yoke-Seq.
std::optional<StoredDiff> last_stored_diff(cluster::NatsConnection& connection,
                                           const std::string& stream,
                                           const std::string& diff_subject);

}  // namespace yoke::jetstream
