#include "query_client.h"

#include <optional>

#include "cli_error.h"
#include "proto_json.h"
#include "zmq_endpoint_client.h"

namespace yoke::cli {
namespace {

// Request ids only have to differ between the requests of one process (watch --catch-up may ask
// several times); starting from the clock keeps them apart across processes too, which helps
// when reading the daemon's logs.
std::uint64_t next_request_id() {
  static std::uint64_t next = static_cast<std::uint64_t>(Clock::now().time_since_epoch().count());
  return ++next;
}

// One try at `endpoint`: its reply, or nothing when none comes within `timeout`.
std::optional<yoke::v1::QueryReply> ask_once(const std::string& endpoint,
                                             yoke::v1::QueryRequest& request,
                                             std::chrono::milliseconds timeout) {
  request.set_request_id(next_request_id());
  EndpointClient socket(zmq::socket_type::dealer, endpoint);
  // The daemon is reached over a fresh connection whose queue cannot be full.
  socket.send(request.SerializeAsString());

  const Deadline deadline = deadline_after(timeout);
  while (auto frames = socket.receive(deadline)) {
    yoke::v1::QueryReply reply;
    if (frames->size() != 1 || !reply.ParseFromString(frames->front())) {
      throw CliError(endpoint + ": a reply that is not a yoke.v1.QueryReply");
    }
    if (reply.version() != yoke::v1::PROTOCOL_VERSION_1) {
      throw CliError(endpoint + ": a reply in protocol version " +
                     std::to_string(reply.version()) + " (this yoke speaks version 1)");
    }
    // An answer to some other request cannot come on a fresh socket; skip it all the same. A
    // request the daemon could not read is answered with id 0.
    if (reply.request_id() == request.request_id() || reply.request_id() == 0) return reply;
  }
  return std::nullopt;
}

}  // namespace

yoke::v1::QueryReply ask_query(EndpointRoute& route, yoke::v1::QueryRequest request,
                               std::chrono::milliseconds timeout) {
  request.set_version(yoke::v1::PROTOCOL_VERSION_1);
  while (true) {
    auto reply = ask_once(route.current(), request, timeout);
    if (!reply) {
      if (!route.several()) {
        throw UnavailableError("no reply from " + route.current() + " within " +
                               std::to_string(timeout.count()) + " ms");
      }
      route.skip_silent();
      continue;
    }
    if (reply->has_error() && reply->error().code() == yoke::v1::Error::NOT_OWNER) {
      route.follow(reply->error());
      continue;
    }
    route.answered();
    return *reply;
  }
}

std::string query_error_text(const yoke::v1::Error& error) {
  return error_code_name(error.code()) + ": " + error.message();
}

}  // namespace yoke::cli
