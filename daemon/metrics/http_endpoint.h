// The metrics and health HTTP endpoint of yoked: a small HTTP/1.1 server on the daemon's own
// io_context.
//   GET /metrics  200, Content-Type text/plain; version=0.0.4; charset=utf-8, body from
//                 HttpHandlers::metrics
//   GET /healthz  200 "ok\n" when HttpHandlers::health says ok, else 503 with its status
//   HEAD          as GET, without the body
//   other paths 404; other methods 405; a request with a body 413, a header past
//   HttpLimits::header_bytes 431, anything unparsable 400 (those three close the connection).
// Keep-alive is honoured. Every read and write of a connection has a deadline
// (HttpLimits::timeout), so a slow or silent client holds only its own connection.
//
// Threading: everything runs as asynchronous operations on the given io_context, which must be
// run by one thread (the daemon's loop); the endpoint starts no threads. Call stop() and destroy
// the endpoint on that thread, or when it is not running. Destroy the endpoint before the
// io_context, as for any Asio object.
//
// No logging: per-connection errors just close that connection (the daemon's log is not this
// component's business). A handler that throws yields a 500 for that request only.
#pragma once

#include <chrono>
#include <cstddef>
#include <functional>
#include <memory>
#include <string>

#include <boost/asio/io_context.hpp>

#include "daemon/config/endpoint_address.h"

namespace yoke::daemon::metrics {

struct HealthReport {
  bool ok = true;
  std::string status;  // the body of a 503 (a newline is added), e.g. "journal: disk full"
};

struct HttpHandlers {
  std::function<std::string()> metrics;  // the exposition text, e.g. Registry::render
  std::function<HealthReport()> health;
};

struct HttpLimits {
  std::size_t header_bytes = 8 * 1024;        // request line and header fields together
  std::chrono::milliseconds timeout{10'000};  // each read of a request, each write of a reply
  std::size_t max_connections = 64;           // past this, new connections are closed at once
};

namespace detail {
struct ServerState;
}

class HttpEndpoint {
 public:
  // Binds and listens on `address` (tcp; host "*" means every IPv4 interface, as ZeroMQ's "*"
  // does; port 0 picks a free port, see port()) and starts accepting. Throws
  // std::system_error naming the address when it cannot bind or listen, std::invalid_argument
  // when `address` is not tcp or a handler is empty.
  HttpEndpoint(boost::asio::io_context& io, const BindAddress& address, HttpHandlers handlers,
               HttpLimits limits = {});
  ~HttpEndpoint();  // stop()
  HttpEndpoint(const HttpEndpoint&) = delete;
  HttpEndpoint& operator=(const HttpEndpoint&) = delete;

  // The bound port: the configured one, or the one the system picked for port 0.
  unsigned short port() const;

  // Closes the listening socket and every open connection; pending operations end with
  // operation_aborted, so io_context::run can return once nothing else keeps it busy.
  // Idempotent.
  void stop();

 private:
  // Shared with the pending operations, which may outlive the endpoint by a few handlers.
  std::shared_ptr<detail::ServerState> state_;
};

}  // namespace yoke::daemon::metrics
