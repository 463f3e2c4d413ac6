#include "log_stream.h"

#include "daemon/cluster/stream_setup.h"
#include "daemon/jetstream/pool_subjects.h"

namespace yoke::jetstream {

cluster::StreamStatus ensure_log_stream(cluster::NatsConnection& connection,
                                        const JetStreamLogSettings& settings) {
  const PoolSubjects subjects(settings.subject_prefix);
  cluster::StreamSettings stream;
  stream.name = settings.stream;
  stream.subjects = {subjects.stream_filter()};
  stream.replicas = settings.replicas;
  stream.max_bytes = settings.max_bytes;
  return as_log_error("JetStream stream '" + settings.stream + "': opening it",
                      [&] { return cluster::ensure_stream(connection, stream); });
}

}  // namespace yoke::jetstream
