// Stand-ins for yoked's sockets, for testing the client commands without a daemon: each binds
// one socket and serves it on a thread of its own until destroyed. They speak only the framing
// (proto/yoke/v1/*.proto); what they answer is up to each test.
#pragma once

#include <atomic>
#include <chrono>
#include <functional>
#include <mutex>
#include <optional>
#include <string>
#include <thread>
#include <utility>
#include <vector>

#include <zmq.hpp>

#include "yoke/v1/protocol.pb.h"

namespace yoke::cli::testing {

// The ingest or query socket: a ROUTER that hands each one-frame request to `answer` and sends
// back what it returns (nothing: the request is "lost").
class FakeRouter {
 public:
  using Answer = std::function<std::optional<std::string>(const std::string& request)>;

  FakeRouter(const std::string& endpoint, Answer answer);
  ~FakeRouter();
  FakeRouter(const FakeRouter&) = delete;
  FakeRouter& operator=(const FakeRouter&) = delete;

  // Every request received so far, in order of arrival.
  std::vector<std::string> requests() const;

 private:
  void serve();

  zmq::context_t context_{1};
  zmq::socket_t socket_;
  Answer answer_;
  mutable std::mutex mutex_;
  std::vector<std::string> requests_;
  std::atomic<bool> stop_{false};
  std::thread thread_;  // last: starts once everything above exists
};

// The publication socket: an XPUB that sends `messages` (topic, payload) once the first
// subscriber's subscription arrives, so that none is lost to a slow subscriber.
class FakePublisher {
 public:
  using Message = std::pair<std::string, std::string>;

  FakePublisher(const std::string& endpoint, std::vector<Message> messages);
  ~FakePublisher();
  FakePublisher(const FakePublisher&) = delete;
  FakePublisher& operator=(const FakePublisher&) = delete;

  // Waits until a subscription has arrived (and the messages are sent); false on timeout.
  bool wait_for_subscriber(std::chrono::milliseconds timeout) const;
  // The topic of the first subscription; empty before one arrives.
  std::string subscription() const;

 private:
  void serve();

  zmq::context_t context_{1};
  zmq::socket_t socket_;
  std::vector<Message> messages_;
  mutable std::mutex mutex_;
  std::string subscription_;
  std::atomic<bool> subscribed_{false};
  std::atomic<bool> stop_{false};
  std::thread thread_;
};

// A daemon of a cluster that does not serve the pool: answers for FakeRouter that refuse every
// batch (ingest) or query with NOT_OWNER, naming `owner` as the daemon that serves it, or no
// daemon when `owner` is empty (a takeover under way).
FakeRouter::Answer ingest_not_owner(std::optional<yoke::v1::Owner> owner);
FakeRouter::Answer query_not_owner(std::optional<yoke::v1::Owner> owner);

// An Owner with the three endpoints.
yoke::v1::Owner owner_at(const std::string& instance, const std::string& ingest,
                         const std::string& query, const std::string& publish = "");

}  // namespace yoke::cli::testing
