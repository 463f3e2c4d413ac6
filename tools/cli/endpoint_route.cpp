#include "endpoint_route.h"

#include <algorithm>
#include <iostream>
#include <thread>

#include "cli_error.h"
#include "proto_json.h"

namespace yoke::cli {

EndpointRoute::EndpointRoute(std::vector<std::string> endpoints, SocketKind kind,
                             std::string pool, std::chrono::milliseconds give_up_after)
    : kind_(kind), pool_(std::move(pool)), give_up_after_(give_up_after) {
  for (std::string& endpoint : endpoints) {
    if (std::find(endpoints_.begin(), endpoints_.end(), endpoint) == endpoints_.end()) {
      endpoints_.push_back(std::move(endpoint));
    }
  }
  if (endpoints_.empty()) throw CliError("no endpoint to reach the daemon at");
}

void EndpointRoute::follow(const yoke::v1::Error& refusal) {
  const std::string answer = error_code_name(refusal.code()) + ": " + refusal.message();
  const bool first_refusal = !deadline_;
  check_deadline(answer);
  const std::string& owner_endpoint =
      kind_ == SocketKind::ingest ? refusal.owner().ingest() : refusal.owner().query();
  if (!refusal.has_owner() || owner_endpoint.empty() || owner_endpoint == current()) {
    // Nobody serves the pool now (or the daemon names itself, still taking over): ask again
    // shortly, elsewhere if there is an elsewhere.
    back_off();
    current_ = (current_ + 1) % endpoints_.size();
    return;
  }
  if (refusal.owner().instance() != last_owner_) {
    last_owner_ = refusal.owner().instance();
    std::cerr << "note: pool " << pool_ << " moved to instance "
              << (last_owner_.empty() ? std::string("(unnamed)") : last_owner_) << " ("
              << owner_endpoint << ")\n";
  }
  // Two daemons may each name the other for a moment while one hands the pool over.
  if (!first_refusal) back_off();
  move_to(owner_endpoint);
}

void EndpointRoute::skip_silent() {
  check_deadline("no reply from " + current());
  back_off();
  current_ = (current_ + 1) % endpoints_.size();
}

void EndpointRoute::answered() {
  deadline_.reset();
  backoff_ = kFirstBackoff;
}

void EndpointRoute::check_deadline(const std::string& last_answer) {
  const auto now = Clock::now();
  if (!deadline_) {
    deadline_ = now + give_up_after_;
    return;
  }
  if (now < *deadline_) return;
  std::string tried;
  for (const std::string& endpoint : endpoints_) {
    tried += (tried.empty() ? "" : ", ") + endpoint;
  }
  throw UnavailableError("no daemon served pool " + pool_ + " within " +
                         std::to_string(give_up_after_.count()) + " ms (tried " + tried +
                         "; last answer: " + last_answer + ")");
}

void EndpointRoute::back_off() {
  // Never past the deadline: the next check then gives up at once rather than late.
  auto wait = backoff_;
  if (deadline_) {
    const auto left = std::chrono::ceil<std::chrono::milliseconds>(*deadline_ - Clock::now());
    wait = std::clamp(left, std::chrono::milliseconds(0), wait);
  }
  std::this_thread::sleep_for(wait);
  backoff_ = std::min(backoff_ * 2, kLongestBackoff);
}

void EndpointRoute::move_to(const std::string& endpoint) {
  const auto found = std::find(endpoints_.begin(), endpoints_.end(), endpoint);
  current_ = static_cast<std::size_t>(found - endpoints_.begin());
  if (found == endpoints_.end()) endpoints_.push_back(endpoint);
}

}  // namespace yoke::cli
