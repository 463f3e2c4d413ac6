// The JetStream API requests that libnats 3.4 does not wrap: a plain request on a
// "$JS.API...." subject, and the few numbers of its JSON answer that yoke reads.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>

#include "daemon/cluster/cluster_error.h"
#include "daemon/cluster/nats_connection.h"

namespace yoke::cluster {

struct ApiAnswer {
  std::string json;
  // The answer's error.err_code when it is an error (0 if it names none), else nullopt.
  std::optional<int> error_code;
};

// Sends `body` to `api_subject` and waits for the answer (at most the connection's
// api_timeout). Throws ClusterError for a request that got no answer (`what` names it); an
// answer that is an error is returned, for the caller to classify.
ApiAnswer request_api(NatsConnection& connection, const std::string& api_subject,
                      std::string_view body, const std::string& what);

// The kind of an API error: not_found for "stream not found" (10059), rejected otherwise.
ClusterErrorKind api_error_kind(int error_code);

// The unsigned number after `"key":` in a JSON text, if any. The answers read here are small
// and flat where it matters (message.seq, error.err_code); subjects of ours hold no quotes.
std::optional<std::uint64_t> number_after(std::string_view json, std::string_view key);

}  // namespace yoke::cluster
