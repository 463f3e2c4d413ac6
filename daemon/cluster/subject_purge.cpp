#include "subject_purge.h"

#include "daemon/cluster/cluster_error.h"

namespace yoke::cluster {

void purge_subject_below(NatsConnection& connection, const std::string& stream,
                         const std::string& subject, std::uint64_t below_sequence) {
  if (below_sequence <= 1) return;  // nothing lies below the first sequence
  jsOptions options;
  jsOptions_Init(&options);
  options.Wait = connection.settings().api_timeout.count();
  options.Stream.Purge.Subject = subject.c_str();
  options.Stream.Purge.Sequence = below_sequence;  // "up to but not including"
  jsErrCode code = jsErrCode(0);
  throw_on_failure(js_PurgeStream(connection.jetstream(), stream.c_str(), &options, &code),
                   "purge of '" + subject + "' below " + std::to_string(below_sequence) +
                       " in stream '" + stream + "'",
                   code);
}

void purge_stream_below(NatsConnection& connection, const std::string& stream,
                        std::uint64_t below_sequence) {
  if (below_sequence <= 1) return;
  jsOptions options;
  jsOptions_Init(&options);
  options.Wait = connection.settings().api_timeout.count();
  options.Stream.Purge.Sequence = below_sequence;
  jsErrCode code = jsErrCode(0);
  throw_on_failure(js_PurgeStream(connection.jetstream(), stream.c_str(), &options, &code),
                   "purge of stream '" + stream + "' below " + std::to_string(below_sequence),
                   code);
}

}  // namespace yoke::cluster
