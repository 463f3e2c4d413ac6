#include "zmq_endpoint_client.h"

#include <algorithm>
#include <cerrno>

#include <zmq_addon.hpp>

#include "cli_error.h"

namespace yoke::cli {
namespace {

using std::chrono::milliseconds;

// A signal may land on one of ZeroMQ's own threads, which does not interrupt the poll below; a
// poll never waits longer than this, so a stop request is seen within it.
constexpr milliseconds kPollSlice{100};

// About 35 years: far beyond any useful timeout, far below what the clock can add.
constexpr std::uint64_t kLongestTimeoutMs = std::uint64_t{1} << 40;

}  // namespace

Deadline deadline_after(milliseconds timeout) {
  if (timeout.count() == 0) return std::nullopt;
  return Clock::now() + timeout;
}

milliseconds timeout_from_option(std::uint64_t value) {
  return milliseconds(static_cast<milliseconds::rep>(std::min(value, kLongestTimeoutMs)));
}

EndpointClient::EndpointClient(zmq::socket_type type, const std::string& endpoint)
    : endpoint_(endpoint), context_(1), socket_(context_, type) {
  // Every command waits for the replies it needs before it closes the socket, so whatever is
  // still queued at close (a resent copy, a request to a dead daemon) is not worth waiting
  // for: closing must never hang.
  socket_.set(zmq::sockopt::linger, 0);
  connect(endpoint);
}

void EndpointClient::connect(const std::string& endpoint) {
  try {
    socket_.connect(endpoint);
  } catch (const zmq::error_t& error) {
    throw CliError("cannot use the endpoint '" + endpoint + "': " + error.what() +
                   " (expected tcp://HOST:PORT or ipc://PATH)");
  }
}

void EndpointClient::subscribe(std::string_view prefix) {
  socket_.set(zmq::sockopt::subscribe, prefix);
}

bool EndpointClient::send(std::string_view bytes) {
  return socket_.send(zmq::buffer(bytes.data(), bytes.size()), zmq::send_flags::dontwait)
      .has_value();
}

std::optional<std::vector<std::string>> EndpointClient::receive(Deadline deadline,
                                                                const std::atomic<bool>* stop) {
  zmq::pollitem_t item{socket_.handle(), 0, ZMQ_POLLIN, 0};
  while (stop == nullptr || !stop->load()) {
    milliseconds wait = kPollSlice;
    if (deadline) {
      const auto left = std::chrono::ceil<milliseconds>(*deadline - Clock::now());
      wait = std::clamp(left, milliseconds(0), kPollSlice);
    }
    int ready = 0;
    try {
      ready = zmq::poll(&item, 1, wait);
    } catch (const zmq::error_t& error) {
      if (error.num() != EINTR) throw;  // a signal: loop to look at `stop`
    }
    if (ready > 0) {
      std::vector<zmq::message_t> parts;
      if (zmq::recv_multipart(socket_, std::back_inserter(parts), zmq::recv_flags::dontwait)) {
        std::vector<std::string> frames;
        frames.reserve(parts.size());
        for (const zmq::message_t& part : parts) frames.push_back(part.to_string());
        return frames;
      }
    }
    // Checked after the poll, so that a message already waiting at the deadline is taken.
    if (deadline && Clock::now() >= *deadline) return std::nullopt;
  }
  return std::nullopt;
}

}  // namespace yoke::cli
