#include "subject_purge.h"

#include "daemon/cluster/cluster_error.h"

namespace yoke::cluster {
namespace {

// Purges the messages of `stream` below `below_sequence`, of `subject` only when it is not
// null; `what` names the purge in errors.
void purge_below(NatsConnection& connection, const std::string& stream, const char* subject,
                 std::uint64_t below_sequence, const std::string& what) {
  if (below_sequence <= 1) return;  // nothing lies below the first sequence
  jsOptions options;
  jsOptions_Init(&options);
  options.Wait = connection.settings().api_timeout.count();
  options.Stream.Purge.Subject = subject;
  options.Stream.Purge.Sequence = below_sequence;  // "up to but not including"
  jsErrCode code = jsErrCode(0);
  throw_on_failure(js_PurgeStream(connection.jetstream(), stream.c_str(), &options, &code), what,
                   code);
}

}  // namespace

void purge_subject_below(NatsConnection& connection, const std::string& stream,
                         const std::string& subject, std::uint64_t below_sequence) {
  purge_below(connection, stream, subject.c_str(), below_sequence,
              "purge of '" + subject + "' below " + std::to_string(below_sequence) +
                  " in stream '" + stream + "'");
}

void purge_stream_below(NatsConnection& connection, const std::string& stream,
                        std::uint64_t below_sequence) {
  purge_below(connection, stream, nullptr, below_sequence,
              "purge of stream '" + stream + "' below " + std::to_string(below_sequence));
}

}  // namespace yoke::cluster
