// One accepted HTTP connection (internal to daemon/metrics): read a request, answer it, and
// again while the client keeps the connection alive. Every read and write has the deadline
// HttpLimits::timeout. Owned by its own pending operation (shared_from_this); the server state
// keeps only a weak reference, to close it on stop().
#pragma once

#include <cstdint>
#include <memory>
#include <optional>

#include <boost/asio/ip/tcp.hpp>
#include <boost/beast/core/error.hpp>
#include <boost/beast/core/flat_buffer.hpp>
#include <boost/beast/core/tcp_stream.hpp>
#include <boost/beast/http/parser.hpp>

#include "daemon/metrics/http_routes.h"
#include "daemon/metrics/http_server_state.h"

namespace yoke::daemon::metrics::detail {

class Connection : public std::enable_shared_from_this<Connection> {
 public:
  Connection(std::shared_ptr<ServerState> state, std::uint64_t id,
             boost::asio::ip::tcp::socket socket);
  ~Connection();  // leaves the server state's list
  Connection(const Connection&) = delete;
  Connection& operator=(const Connection&) = delete;

  void start();
  // Ends the connection now: pending operations complete with operation_aborted.
  void close();

 private:
  void read_request();
  void on_read(boost::beast::error_code error);
  void write_response(HttpResponse response);
  void on_write(boost::beast::error_code error);
  void drain();

  std::shared_ptr<ServerState> state_;
  std::uint64_t id_;
  boost::beast::tcp_stream stream_;
  boost::beast::flat_buffer buffer_;  // kept across requests: a client may pipeline them
  std::optional<boost::beast::http::request_parser<boost::beast::http::empty_body>> parser_;
  std::optional<HttpResponse> response_;  // alive until its write completes
};

}  // namespace yoke::daemon::metrics::detail
