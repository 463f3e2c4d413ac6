// Reading the log in order from a stream sequence: an ordered consumer (ephemeral, no acks,
// flow control and heartbeats) that libnats recreates from the next expected sequence whenever
// it sees a gap or misses heartbeats (a server that died, a leader election), so every
// message of the filter is delivered once and in stream order.
#pragma once

#include <chrono>
#include <cstdint>
#include <optional>
#include <string>

#include "daemon/cluster/log_message.h"
#include "daemon/cluster/nats_connection.h"

namespace yoke::cluster {

struct ReaderSettings {
  std::string stream;
  std::string subject_filter;      // a subject, or a filter such as "yoke.ev.>"
  std::uint64_t start_sequence = 1;  // the first stream sequence to deliver (or the next after)
  // How often an idle consumer proves it is alive; two missed beats make libnats recreate it.
  std::chrono::milliseconds heartbeat{1000};
  // Read without a consumer: each message is looked up at the stream leader (the filter's
  // next sequence, then the message: two API round trips a message, against a stream of
  // deliveries). For short reads that must work whenever the stream has a leader: after a
  // node dies, a new consumer may be placed where it cannot deliver until that node is back.
  bool by_lookup = false;
};

class LogReader {
 public:
  // Creates the consumer: one API round trip (at most the connection's api_timeout). Throws
  // ClusterError (not_found: no such stream; invalid: a bad filter).
  LogReader(NatsConnection& connection, const ReaderSettings& settings);
  ~LogReader();  // deletes the consumer (best effort) and frees the subscription
  LogReader(const LogReader&) = delete;
  LogReader& operator=(const LogReader&) = delete;

  // The next message of the filter in stream order, with its stream sequence (from the
  // delivery's metadata) and how many remain after it (by lookup: 1 when any remains); nullopt
  // when none arrives within `timeout` (caught up, or the consumer is being recreated after a
  // failure; by lookup: none is stored after the last one, and a lookup waits up to the
  // connection's api_timeout instead). Blocks the
  // calling thread (libnats' reader thread queues deliveries; this waits on that queue).
  // Throws ClusterError (closed, or a delivery without JetStream metadata).
  std::optional<LogMessage> next(std::chrono::milliseconds timeout);

  // The stream sequence of the last message next() returned (start_sequence - 1 before any).
  std::uint64_t last_sequence() const { return last_sequence_; }

 private:
  std::optional<LogMessage> next_by_lookup();

  SubscriptionHandle subscription_;  // null when reading by lookup
  std::uint64_t last_sequence_;
  NatsConnection* connection_ = nullptr;  // reading by lookup
  std::string stream_;
  std::string filter_;
  // By lookup: the filter's next sequence after last_sequence_, once looked up (nullopt inside:
  // none stored then).
  std::optional<std::optional<std::uint64_t>> next_sequence_;
};

}  // namespace yoke::cluster
