// The daemon benchmark's clients: batches encoded once before any clock runs, sent with a
// bounded number in flight (throughput) or on a fixed schedule (latency), and the same
// messages through a bare ZeroMQ echo over the same loopback, the physical reference.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include <zmq.hpp>

#include "yoke/events.h"

namespace yoke::bench {

struct EncodedBatch {
  std::string bytes;  // a serialized IngestRequest
  std::size_t events = 0;
  std::uint64_t number = 0;  // client_batch
};

// One IngestRequest per batch, numbered first_number, first_number + 1, ...
std::vector<EncodedBatch> encode_batches(const std::vector<std::vector<Event>>& batches,
                                         const std::string& client_id, const std::string& pool,
                                         std::uint64_t first_number);

struct LoadResult {
  double seconds = 0;
  std::size_t batches = 0;
  std::size_t events = 0;
  std::vector<double> latency_us;  // send to acknowledgement, per batch
  double events_per_second() const { return seconds > 0 ? static_cast<double>(events) / seconds : 0; }
  double batches_per_second() const {
    return seconds > 0 ? static_cast<double>(batches) / seconds : 0;
  }
};

// Sends batches[begin, end) keeping at most `in_flight` unacknowledged; returns once all are
// acknowledged. Throws when one is rejected or no acknowledgement comes for 30 s.
LoadResult send_pipelined(zmq::context_t& context, const std::string& endpoint,
                          const std::vector<EncodedBatch>& batches, std::size_t begin,
                          std::size_t end, std::size_t in_flight);

// Sends one batch every 1 / batches_per_second seconds, on schedule whatever the replies do.
LoadResult send_paced(zmq::context_t& context, const std::string& endpoint,
                      const std::vector<EncodedBatch>& batches, std::size_t begin,
                      std::size_t end, double batches_per_second);

// The same messages, pipelined the same way, to a bare ROUTER thread at `endpoint` that
// answers each with `reply_bytes` bytes: what ZeroMQ alone costs on this loopback.
LoadResult raw_zmq_reference(zmq::context_t& context, const std::string& endpoint,
                             const std::vector<EncodedBatch>& batches, std::size_t in_flight,
                             std::size_t reply_bytes);

// Nearest-rank percentile of an unsorted list; 0 when empty.
double percentile(std::vector<double> values, double p);

}  // namespace yoke::bench
