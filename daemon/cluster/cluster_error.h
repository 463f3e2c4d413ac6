// The one exception type of daemon/cluster: what went wrong, in a kind a caller can branch on
// (retry after an election, refuse a batch when the stream is full, stop on a bad setting),
// with a message that names the operation, the servers or the stream, and libnats' own words.
#pragma once

#include <stdexcept>
#include <string>

#include <nats/nats.h>

namespace yoke::cluster {

enum class ClusterErrorKind {
  unreachable,    // no server of the list answered a connect
  timeout,        // no answer in time: a publish may or may not have been stored
  no_responders,  // nobody serves the subject now (no stream, or its leader is being elected):
                  // a publish was certainly not stored
  stream_full,    // DiscardNew refused the message: the stream's byte or message cap is reached
  rejected,       // the server refused the request (its JetStream error code is kept)
  not_found,      // no such stream or message
  mismatch,       // a stream exists with settings other than the ones asked for
  closed,         // the connection is closed (after close() or a failed reconnect)
  invalid,        // a bad argument, found before anything was sent
  other,          // anything else libnats reported
};

const char* to_string(ClusterErrorKind kind);

class ClusterError : public std::runtime_error {
 public:
  ClusterError(ClusterErrorKind kind, const std::string& message, int jetstream_code = 0)
      : std::runtime_error(message), kind_(kind), jetstream_code_(jetstream_code) {}

  ClusterErrorKind kind() const { return kind_; }
  // The server's JetStream error code (e.g. 10059 stream not found), 0 when there was none.
  int jetstream_code() const { return jetstream_code_; }

 private:
  ClusterErrorKind kind_;
  int jetstream_code_;
};

// The kind of a failed libnats call: from its status and, for JetStream API calls, the error
// code the server sent (0 if none).
ClusterErrorKind classify(natsStatus status, jsErrCode code);

// Throws a ClusterError for a failed call (status != NATS_OK): "<what>: <libnats text>
// [JetStream error N] (<libnats' last error detail>)". Returns when status is NATS_OK.
void throw_on_failure(natsStatus status, const std::string& what, jsErrCode code = jsErrCode(0));

}  // namespace yoke::cluster
