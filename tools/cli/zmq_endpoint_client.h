// The client end of one of yoked's ZeroMQ sockets (ingest, query or publication; the framing is
// in proto/yoke/v1/*.proto): a context of its own and one socket connected to an endpoint, with
// sends that never block and receives that wait until a deadline.
#pragma once

#include <atomic>
#include <chrono>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include <zmq.hpp>

namespace yoke::cli {

using Clock = std::chrono::steady_clock;

// A moment to wait until; nothing: wait without end.
using Deadline = std::optional<Clock::time_point>;

// The moment `timeout` from now; nothing for a timeout of 0 ("no timeout").
Deadline deadline_after(std::chrono::milliseconds timeout);

// A timeout option in milliseconds, capped so that now + timeout cannot overflow the clock.
std::chrono::milliseconds timeout_from_option(std::uint64_t milliseconds);

class EndpointClient {
 public:
  // Connects a socket of `type` (dealer or sub) to `endpoint` ("tcp://HOST:PORT",
  // "ipc://PATH"). Connecting does not wait for the daemon: it may start later, and ZeroMQ
  // reconnects by itself. Throws CliError when ZeroMQ cannot use the endpoint.
  EndpointClient(zmq::socket_type type, const std::string& endpoint);
  EndpointClient(const EndpointClient&) = delete;
  EndpointClient& operator=(const EndpointClient&) = delete;

  const std::string& endpoint() const { return endpoint_; }

  // Connects the socket to one more endpoint as well (a SUB receives from every endpoint it is
  // connected to). Throws CliError as the constructor does.
  void connect(const std::string& endpoint);

  // SUB only: receive the messages whose first frame starts with `prefix`.
  void subscribe(std::string_view prefix);

  // Queues `bytes` as a message of one frame. False when the socket's queue is full: the
  // message was not sent (callers treat it as lost and resend on their timeout).
  bool send(std::string_view bytes);

  // The next whole message, one string per frame. Nothing when `deadline` passes first, or
  // when `stop` (set by a signal handler) turns true; the caller tells the two apart.
  std::optional<std::vector<std::string>> receive(Deadline deadline,
                                                  const std::atomic<bool>* stop = nullptr);

 private:
  std::string endpoint_;
  zmq::context_t context_;  // declared before socket_: destroyed after it
  zmq::socket_t socket_;
};

}  // namespace yoke::cli
