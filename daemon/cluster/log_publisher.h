// Appending to the log: one message at a time, acknowledged by the stream.
#pragma once

#include <chrono>
#include <cstdint>
#include <string>
#include <string_view>

#include "daemon/cluster/log_message.h"
#include "daemon/cluster/nats_connection.h"

namespace yoke::cluster {

// Publishes one message with headers to `subject` and waits for the stream's acknowledgement:
// on an R3 stream, the message is then stored by a quorum of servers (on nats-server 2.9, in
// their memory and files, fsynced within a minute: not necessarily on disk yet). Returns the
// message's stream sequence. No conditions, no message id: on nats-server 2.9 those are not
// safe on replicated streams (docs/jetstream.md), so any decision about the message is made by
// whoever reads the log.
// Blocks the calling thread for one round trip to the stream leader (0.2-2 ms on loopback), at
// most `timeout`. While nobody takes the subject (the stream's leader is being elected after
// the old one died) the message, certainly not stored, is sent again every 25 ms within
// `timeout`. Throws ClusterError:
//   no_responders - still no stream takes the subject at the end of `timeout` (none, or an
//                   election longer than that): not stored;
//   timeout       - no acknowledgement in time: the message MAY still be in the log;
//   stream_full   - DiscardNew refused it at the cap: not stored;
//   rejected, closed, other - see the message.
std::uint64_t publish_and_wait(NatsConnection& connection, const std::string& subject,
                               const Headers& headers, std::string_view data,
                               std::chrono::milliseconds timeout);

}  // namespace yoke::cluster
