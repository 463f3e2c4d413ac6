// One request and its reply on yoked's query socket (proto/yoke/v1/query.proto): what
// `yoke query` does once, and `yoke watch --catch-up` each time it fetches the matching.
#pragma once

#include <chrono>
#include <string>

#include "yoke/v1/query.pb.h"

namespace yoke::cli {

// Sends `request` (its version and request_id are filled in here) from a fresh DEALER socket
// and returns the daemon's reply, which may be of kind `error`. Throws UnavailableError when no
// reply comes within `timeout`, CliError for a reply this client cannot read or of another
// protocol version.
yoke::v1::QueryReply ask_query(const std::string& endpoint, yoke::v1::QueryRequest request,
                               std::chrono::milliseconds timeout);

// What a reply of kind `error` says, as "CODE_NAME: message".
std::string query_error_text(const yoke::v1::Error& error);

}  // namespace yoke::cli
