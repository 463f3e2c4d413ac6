// One request and its reply on yoked's query socket (proto/yoke/v1/query.proto): what
// `yoke query` does once, and `yoke watch --catch-up` each time it fetches the matching.
#pragma once

#include <chrono>
#include <string>

#include "endpoint_route.h"
#include "yoke/v1/query.pb.h"

namespace yoke::cli {

// Sends `request` (its version and request_id are filled in here) from a fresh DEALER socket
// to route.current() and returns the daemon's reply, which may be of kind `error`. A NOT_OWNER
// reply is followed (EndpointRoute::follow: the request goes to the owner named, or after a
// backoff to the next endpoint), and so is silence when the route knows several endpoints;
// the reply returned is never NOT_OWNER. Throws UnavailableError when no reply comes within
// `timeout` from the only endpoint, or the route gives up; CliError for a reply this client
// cannot read or of another protocol version.
yoke::v1::QueryReply ask_query(EndpointRoute& route, yoke::v1::QueryRequest request,
                               std::chrono::milliseconds timeout);

// What a reply of kind `error` says, as "CODE_NAME: message".
std::string query_error_text(const yoke::v1::Error& error);

}  // namespace yoke::cli
