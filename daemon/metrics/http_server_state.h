// What the endpoint's pending operations share (internal to daemon/metrics). The acceptor's and
// connections' handlers hold it by shared_ptr, so a handler that runs after the HttpEndpoint is
// gone still finds it; `stopped` tells such a handler to do nothing more.
#pragma once

#include <cstdint>
#include <map>
#include <memory>

#include <boost/asio/io_context.hpp>
#include <boost/asio/ip/tcp.hpp>
#include <boost/asio/steady_timer.hpp>

#include "daemon/metrics/http_endpoint.h"

namespace yoke::daemon::metrics::detail {

class Connection;

struct ServerState {
  ServerState(boost::asio::io_context& io, HttpHandlers h, HttpLimits l)
      : acceptor(io), retry_timer(io), handlers(std::move(h)), limits(l) {}

  boost::asio::ip::tcp::acceptor acceptor;
  boost::asio::steady_timer retry_timer;  // pause after a failed accept (say, out of files)
  HttpHandlers handlers;
  HttpLimits limits;
  unsigned short port = 0;
  bool stopped = false;
  // The open connections, so that stop() can close them; each removes itself when it ends.
  std::uint64_t next_connection = 0;
  std::map<std::uint64_t, std::weak_ptr<Connection>> connections;
};

}  // namespace yoke::daemon::metrics::detail
