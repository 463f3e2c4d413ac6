// Which daemon of a cluster a client command talks to (issue 12: each pool is served by one
// daemon at a time). A route holds the endpoints of one socket kind (ingest or query) that the
// user named, and follows the daemons' NOT_OWNER refusals (proto/yoke/v1/protocol.proto):
// to the owner they name, or, when they name none (a takeover is under way) or an endpoint
// stays silent, to the next known endpoint after a short backoff. Following is bounded by a
// deadline that starts with the first refusal or silence and restarts with every answer that
// is not a refusal; past it, the command gives up (UnavailableError).
#pragma once

#include <chrono>
#include <optional>
#include <string>
#include <vector>

#include "yoke/v1/protocol.pb.h"
#include "zmq_endpoint_client.h"

namespace yoke::cli {

enum class SocketKind { ingest, query };

class EndpointRoute {
 public:
  // `endpoints`: at least one, tried in this order (duplicates dropped). `pool` names the pool
  // in notes and errors. `give_up_after`: how long to follow refusals and silences.
  EndpointRoute(std::vector<std::string> endpoints, SocketKind kind, std::string pool,
                std::chrono::milliseconds give_up_after);

  // The endpoint to use now. O(1).
  const std::string& current() const { return endpoints_[current_]; }
  // Every endpoint known so far (the user's, then owners learnt from refusals).
  const std::vector<std::string>& endpoints() const { return endpoints_; }
  bool several() const { return endpoints_.size() > 1; }

  // A NOT_OWNER refusal from current(): moves to the owner it names (a note on stderr: "note:
  // pool P moved to instance I (EP)"), or without one waits a backoff and moves to the next
  // endpoint. Throws UnavailableError past the deadline. Blocks for the backoff only (at most
  // kLongestBackoff).
  void follow(const yoke::v1::Error& refusal);
  // current() did not answer within the command's timeout: after a backoff, the next endpoint
  // (the same one when it is the only one). Throws UnavailableError past the deadline.
  void skip_silent();
  // current() answered with something other than NOT_OWNER: the deadline and backoff restart.
  void answered();

  static constexpr std::chrono::milliseconds kFirstBackoff{50};
  static constexpr std::chrono::milliseconds kLongestBackoff{1000};

 private:
  // Starts the deadline on the first refusal or silence; throws once it has passed.
  void check_deadline(const std::string& last_answer);
  void back_off();
  void move_to(const std::string& endpoint);

  std::vector<std::string> endpoints_;
  std::size_t current_ = 0;
  SocketKind kind_;
  std::string pool_;
  std::chrono::milliseconds give_up_after_;
  std::optional<Clock::time_point> deadline_;  // set while following
  std::chrono::milliseconds backoff_ = kFirstBackoff;
  std::string last_owner_;  // the instance of the last note, so a note is printed once a move
};

}  // namespace yoke::cli
