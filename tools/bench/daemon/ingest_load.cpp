#include "ingest_load.h"

#include <algorithm>
#include <cstring>
#include <chrono>
#include <cmath>
#include <deque>
#include <optional>
#include <stdexcept>
#include <thread>

#include "daemon/service/wire_types.h"
#include "yoke/v1/ingest.pb.h"

namespace yoke::bench {
namespace {

using Clock = std::chrono::steady_clock;

double micros_since(Clock::time_point start) {
  return std::chrono::duration<double, std::micro>(Clock::now() - start).count();
}

// The client_batch one reply acknowledges, parsed into `reply`, which the caller keeps from
// reply to reply (its strings keep their buffers: no allocation per ack). Throws on a rejection.
std::uint64_t read_ack(const zmq::message_t& message, v1::IngestReply& reply) {
  if (!reply.ParseFromArray(message.data(), static_cast<int>(message.size())) ||
      !reply.ack().has_accepted()) {
    throw std::runtime_error("batch " + std::to_string(reply.ack().client_batch()) +
                             " was not accepted: " + reply.ShortDebugString());
  }
  return reply.ack().client_batch();
}

bool wait_readable(zmq::socket_t& socket, std::chrono::milliseconds timeout) {
  zmq::pollitem_t item{socket.handle(), 0, ZMQ_POLLIN, 0};
  return zmq::poll(&item, 1, timeout) > 0;
}

zmq::socket_t connect_dealer(zmq::context_t& context, const std::string& endpoint) {
  zmq::socket_t socket(context, zmq::socket_type::dealer);
  socket.set(zmq::sockopt::linger, 0);
  socket.set(zmq::sockopt::sndhwm, 0);
  socket.set(zmq::sockopt::rcvhwm, 0);
  socket.connect(endpoint);
  return socket;
}

// Send times of the batches in flight. The batches of a run are numbered consecutively, so a
// flat array indexed by number serves where a map allocated and freed a node per batch: the
// clients share the 2 cores with the daemon they measure.
class SendTimes {
 public:
  SendTimes(std::uint64_t first_number, std::size_t count)
      : first_(first_number), sent_(count), pending_(count, false) {}
  void sent(std::uint64_t number, Clock::time_point at) {
    sent_[number - first_] = at;
    pending_[number - first_] = true;
    ++in_flight_;
  }
  // The microseconds since `number` was sent, once; nothing for a number not in flight.
  std::optional<double> acknowledged(std::uint64_t number) {
    const std::uint64_t index = number - first_;  // below first_: wraps, out of range
    if (index >= pending_.size() || !pending_[index]) return std::nullopt;
    pending_[index] = false;
    --in_flight_;
    return micros_since(sent_[index]);
  }
  std::size_t in_flight() const { return in_flight_; }

 private:
  std::uint64_t first_;
  std::vector<Clock::time_point> sent_;
  std::vector<bool> pending_;
  std::size_t in_flight_ = 0;
};

// Hands every reply already queued on `socket` to `take` (non-blocking receives: one poll per
// burst of replies, not one per reply).
template <typename Take>
void drain_replies(zmq::socket_t& socket, Take take) {
  zmq::message_t message;
  while (socket.recv(message, zmq::recv_flags::dontwait)) take(message);
}

// The pipelined loop shared by the daemon run and the raw reference: `read` returns the batch
// number one reply acknowledges.
template <typename ReadReply>
LoadResult pipeline(zmq::socket_t& socket, const std::vector<EncodedBatch>& batches,
                    std::size_t begin, std::size_t end, std::size_t in_flight, ReadReply read) {
  LoadResult result;
  if (begin >= end) return result;
  result.latency_us.reserve(end - begin);
  SendTimes times(batches[begin].number, end - begin);
  const Clock::time_point start = Clock::now();
  std::size_t next = begin;
  while (next < end || times.in_flight() > 0) {
    while (next < end && times.in_flight() < in_flight) {
      times.sent(batches[next].number, Clock::now());
      socket.send(zmq::buffer(batches[next].bytes), zmq::send_flags::none);
      result.events += batches[next].events;
      ++next;
    }
    if (!wait_readable(socket, std::chrono::seconds(30))) {
      throw std::runtime_error("no acknowledgement for 30 s");
    }
    drain_replies(socket, [&](const zmq::message_t& message) {
      if (const auto us = times.acknowledged(read(message))) result.latency_us.push_back(*us);
    });
  }
  result.seconds = std::chrono::duration<double>(Clock::now() - start).count();
  result.batches = end - begin;
  return result;
}

}  // namespace

std::vector<EncodedBatch> encode_batches(const std::vector<std::vector<Event>>& batches,
                                         const std::string& client_id, const std::string& pool,
                                         std::uint64_t first_number) {
  std::vector<EncodedBatch> encoded;
  encoded.reserve(batches.size());
  std::uint64_t number = first_number;
  for (const std::vector<Event>& batch : batches) {
    v1::IngestRequest request;
    request.set_version(v1::PROTOCOL_VERSION_1);
    v1::EventBatch& wire = *request.mutable_batch();
    wire.set_client_id(client_id);
    wire.set_client_batch(number);
    wire.set_pool(pool);
    for (const Event& event : batch) *wire.add_events() = daemon::to_wire(event);
    encoded.push_back({request.SerializeAsString(), batch.size(), number});
    ++number;
  }
  return encoded;
}

LoadResult send_pipelined(zmq::context_t& context, const std::string& endpoint,
                          const std::vector<EncodedBatch>& batches, std::size_t begin,
                          std::size_t end, std::size_t in_flight) {
  zmq::socket_t socket = connect_dealer(context, endpoint);
  v1::IngestReply reply;
  return pipeline(socket, batches, begin, end, in_flight,
                  [&reply](const zmq::message_t& message) { return read_ack(message, reply); });
}

LoadResult send_paced(zmq::context_t& context, const std::string& endpoint,
                      const std::vector<EncodedBatch>& batches, std::size_t begin,
                      std::size_t end, double batches_per_second) {
  zmq::socket_t socket = connect_dealer(context, endpoint);
  LoadResult result;
  if (begin >= end) return result;
  SendTimes times(batches[begin].number, end - begin);
  v1::IngestReply reply;
  const auto period = std::chrono::duration<double>(1.0 / batches_per_second);
  const Clock::time_point start = Clock::now();
  std::size_t next = begin;
  const auto collect = [&](std::chrono::milliseconds wait) {
    if (!wait_readable(socket, wait)) return;
    drain_replies(socket, [&](const zmq::message_t& message) {
      if (const auto us = times.acknowledged(read_ack(message, reply))) {
        result.latency_us.push_back(*us);
      }
    });
  };
  while (next < end) {
    const auto due = start + std::chrono::duration_cast<Clock::duration>(
                                 period * static_cast<double>(next - begin));
    while (Clock::now() < due) {
      const auto left = std::chrono::duration_cast<std::chrono::milliseconds>(due - Clock::now());
      collect(std::max(left, std::chrono::milliseconds(0)));
      if (left.count() <= 0) break;
    }
    // The last sub-millisecond (poll's resolution is 1 ms) asleep, not spinning: a spinning
    // client took up to a fifth of a core per paced pool from the daemon it measures (2 cores).
    std::this_thread::sleep_until(due);
    times.sent(batches[next].number, Clock::now());
    socket.send(zmq::buffer(batches[next].bytes), zmq::send_flags::none);
    result.events += batches[next].events;
    ++next;
  }
  const Clock::time_point drain_deadline = Clock::now() + std::chrono::seconds(30);
  while (times.in_flight() > 0 && Clock::now() < drain_deadline) {
    collect(std::chrono::milliseconds(100));
  }
  if (times.in_flight() > 0) throw std::runtime_error("acknowledgements missing after the paced run");
  result.seconds = std::chrono::duration<double>(Clock::now() - start).count();
  result.batches = end - begin;
  return result;
}

LoadResult raw_zmq_reference(zmq::context_t& context, const std::string& endpoint,
                             const std::vector<EncodedBatch>& batches, std::size_t in_flight,
                             std::size_t reply_bytes) {
  zmq::socket_t router(context, zmq::socket_type::router);
  router.set(zmq::sockopt::linger, 0);
  router.set(zmq::sockopt::sndhwm, 0);
  router.set(zmq::sockopt::rcvhwm, 0);
  router.bind(endpoint);
  std::thread echo([&router, &batches, reply_bytes] {
    // Each reply carries the batch's number in its first 8 bytes, padded to an Ack's size.
    std::string reply(std::max<std::size_t>(reply_bytes, 8), '\0');
    for (std::size_t i = 0; i < batches.size(); ++i) {
      zmq::message_t identity, body;
      (void)router.recv(identity);
      (void)router.recv(body);
      const std::uint64_t number = batches[i].number;  // ZeroMQ keeps the order: no parse
      std::memcpy(reply.data(), &number, sizeof number);
      router.send(identity, zmq::send_flags::sndmore);
      router.send(zmq::buffer(reply), zmq::send_flags::none);
    }
  });
  zmq::socket_t dealer = connect_dealer(context, endpoint);
  LoadResult result = pipeline(dealer, batches, 0, batches.size(), in_flight,
                               [](const zmq::message_t& message) {
                                 std::uint64_t number = 0;
                                 std::memcpy(&number, message.data(), sizeof number);
                                 return number;
                               });
  echo.join();
  return result;
}

double percentile(std::vector<double> values, double p) {
  if (values.empty()) return 0;
  std::sort(values.begin(), values.end());
  const auto rank = static_cast<std::size_t>(std::ceil(p / 100.0 * static_cast<double>(values.size())));
  return values[std::clamp<std::size_t>(rank, 1, values.size()) - 1];
}

}  // namespace yoke::bench
