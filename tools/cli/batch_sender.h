// The pipeline of `yoke send`: keeps up to N batches in flight on the ingest socket, matches
// each acknowledgement to its batch (client id + batch number), and resends from the oldest
// unacknowledged batch, with the same numbers, when the daemon asks for it (OUT_OF_ORDER,
// UNAVAILABLE) or stays silent. The daemon applies a resent batch once (EventBatch in
// proto/yoke/v1/events.proto), so resending is always safe. A NOT_OWNER refusal (a cluster:
// another daemon serves the pool) moves the sender along its EndpointRoute and resends every
// unacknowledged batch there, with the same numbers; so does silence when the route knows
// several endpoints.
#pragma once

#include <chrono>
#include <cstdint>
#include <string>
#include <vector>

#include "endpoint_route.h"
#include "yoke/v1/protocol.pb.h"
#include "zmq_endpoint_client.h"

namespace yoke::cli {

struct SenderSettings {
  std::string client_id;  // as in the requests; replies for other ids are ignored
  std::uint64_t first_batch_number = 1;  // batch i carries first_batch_number + i
  std::size_t in_flight = 32;            // batches sent and not yet acknowledged, at most
  std::chrono::milliseconds timeout{5000};  // silence after which the unacknowledged are resent
  unsigned retries = 5;                  // resends per batch before giving up (silence,
                                         // OUT_OF_ORDER, UNAVAILABLE; not NOT_OWNER moves)
};

struct SendReport {
  enum class Outcome {
    acknowledged,        // every batch accepted
    rejected,            // `failed_batch` was refused; every batch before it was accepted
    refused_on_retry,    // `failed_batch` was still refused (OUT_OF_ORDER, UNAVAILABLE) after
                         // the last retry
    no_acknowledgement,  // the daemon stayed silent through every retry
    unreadable,          // the daemon could not read a request (no batch named): `error`
    bad_reply,           // the daemon's reply is not one this client understands: `problem`
  };
  Outcome outcome = Outcome::acknowledged;
  std::size_t failed_batch = 0;  // index into the batches (rejected, refused_on_retry)
  // The daemon's error (rejected, refused_on_retry, unreadable); for no_acknowledgement, the
  // last refusal that named no batch (UNAVAILABLE while shutting down), if any.
  yoke::v1::Error error;
  std::string problem;           // bad_reply
  std::string endpoint;          // the ingest endpoint last used (for messages)

  std::size_t accepted = 0;    // batches acknowledged as accepted
  std::size_t duplicates = 0;  // of those, acknowledged as already applied
  // The smallest and largest seq of the acknowledgements (when accepted > 0): the first and the
  // last batch's own seqs (a duplicate's ack names the seq its batch got).
  std::uint64_t first_seq = 0;
  std::uint64_t last_seq = 0;
};

// Sends `requests` (serialized IngestRequests, batch i numbered first_batch_number + i and
// chained by after_batch) and waits for their acknowledgements. Stops sending at a rejected
// batch and returns once every batch before it is acknowledged. Connects to route.current()
// and follows the route. Cost: one message per batch and per resend; memory O(number of
// batches). Throws UnavailableError when the route gives up (EndpointRoute), CliError when
// ZeroMQ cannot use an endpoint.
SendReport send_batches(EndpointRoute& route, const std::vector<std::string>& requests,
                        const SenderSettings& settings);

}  // namespace yoke::cli
