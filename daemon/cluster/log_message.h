// One message of the log as yoke sees it: where it sits in the stream, its subject, its
// headers and its bytes; and the conversions from and to libnats messages.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <utility>
#include <vector>

#include <nats/nats.h>

#include "daemon/cluster/nats_handles.h"

namespace yoke::cluster {

// Header fields; a key may repeat. Read back sorted by key (libnats keeps no key order), the
// values of one key in the order they were added. Keys starting with "Nats-" are the server's.
using Headers = std::vector<std::pair<std::string, std::string>>;

struct LogMessage {
  std::uint64_t sequence = 0;  // the stream sequence: the log's total order, 1-based
  std::string subject;
  Headers headers;
  std::string data;
  // Messages left after this one for the reader's subject filter, when it was delivered
  // (0 = the reader had caught up then); 0 for lookups.
  std::uint64_t pending = 0;
};

// The first value of `key` in `headers`, if any.
std::optional<std::string_view> header_value(const Headers& headers, std::string_view key);

// A libnats message for `subject` with `headers` and `data` (copied). Throws ClusterError.
MessageHandle make_nats_message(const std::string& subject, const Headers& headers,
                                std::string_view data);

// The subject, headers and data of a libnats message; `sequence` and `pending` left 0. Server
// headers ("Nats-...") are dropped when `drop_server_headers`. Cost: copies the message.
LogMessage copy_nats_message(natsMsg* message, bool drop_server_headers);

}  // namespace yoke::cluster
