#include "http_endpoint.h"

#include <stdexcept>
#include <string>
#include <system_error>
#include <utility>
#include <vector>

#include <boost/asio/ip/address.hpp>
#include <boost/asio/ip/tcp.hpp>

#include "daemon/metrics/http_connection.h"
#include "daemon/metrics/http_server_state.h"

namespace yoke::daemon::metrics {
namespace asio = boost::asio;
using tcp = asio::ip::tcp;
using detail::Connection;
using detail::ServerState;

namespace {

// How long to wait before accepting again after a failed accept: failures such as "too many
// open files" persist for a while, and retrying at once would spin the loop.
constexpr std::chrono::milliseconds kAcceptRetry{100};

std::string address_text(const BindAddress& address) {
  return address.host + ":" + std::to_string(address.port);
}

[[noreturn]] void cannot_bind(const BindAddress& address, boost::system::error_code error) {
  throw std::system_error(error, "metrics endpoint: cannot bind " + address_text(address));
}

// The socket address for `address`: "*" is every IPv4 interface, "[v6]" and dotted or colon
// literals are taken as they are, and any other host name is looked up (at startup, so a
// blocking lookup is acceptable); its first address is used.
tcp::endpoint bind_endpoint(asio::io_context& io, const BindAddress& address) {
  const auto port = static_cast<unsigned short>(address.port);
  std::string host = address.host;
  if (host == "*") return {asio::ip::address_v4::any(), port};
  if (host.size() >= 2 && host.front() == '[' && host.back() == ']') {
    host = host.substr(1, host.size() - 2);
  }
  boost::system::error_code error;
  const asio::ip::address literal = asio::ip::make_address(host, error);
  if (!error) return {literal, port};
  tcp::resolver resolver(io);
  const auto found = resolver.resolve(host, std::to_string(port), tcp::resolver::passive, error);
  if (error) cannot_bind(address, error);
  if (found.empty()) cannot_bind(address, asio::error::host_not_found);
  return found.begin()->endpoint();
}

void accept_next(const std::shared_ptr<ServerState>& state);

void on_accept(const std::shared_ptr<ServerState>& state, boost::system::error_code error,
               tcp::socket socket) {
  if (state->stopped || error == asio::error::operation_aborted) return;
  if (error) {
    state->retry_timer.expires_after(kAcceptRetry);
    state->retry_timer.async_wait([state](boost::system::error_code wait_error) {
      if (!wait_error && !state->stopped) accept_next(state);
    });
    return;
  }
  if (state->connections.size() >= state->limits.max_connections) {
    boost::system::error_code ignored;
    socket.close(ignored);  // over the limit: refuse rather than queue behind the others
  } else {
    const std::uint64_t id = state->next_connection++;
    auto connection = std::make_shared<Connection>(state, id, std::move(socket));
    state->connections.emplace(id, connection);
    connection->start();
  }
  accept_next(state);
}

void accept_next(const std::shared_ptr<ServerState>& state) {
  state->acceptor.async_accept([state](boost::system::error_code error, tcp::socket socket) {
    on_accept(state, error, std::move(socket));
  });
}

}  // namespace

HttpEndpoint::HttpEndpoint(asio::io_context& io, const BindAddress& address, HttpHandlers handlers,
                           HttpLimits limits) {
  if (address.kind != BindAddress::Kind::tcp) {
    throw std::invalid_argument("metrics endpoint: the address must be HOST:PORT");
  }
  if (address.port > 65535) cannot_bind(address, asio::error::invalid_argument);
  if (!handlers.metrics || !handlers.health) {
    throw std::invalid_argument("metrics endpoint: both handlers are required");
  }
  state_ = std::make_shared<ServerState>(io, std::move(handlers), limits);
  const tcp::endpoint endpoint = bind_endpoint(io, address);
  tcp::acceptor& acceptor = state_->acceptor;
  boost::system::error_code error;
  acceptor.open(endpoint.protocol(), error);
  // Rebinding right after a restart must not fail on the old connections' TIME_WAIT.
  if (!error) acceptor.set_option(tcp::acceptor::reuse_address(true), error);
  if (!error) acceptor.bind(endpoint, error);
  if (!error) acceptor.listen(asio::socket_base::max_listen_connections, error);
  if (error) cannot_bind(address, error);
  state_->port = acceptor.local_endpoint().port();
  accept_next(state_);
}

HttpEndpoint::~HttpEndpoint() { stop(); }

unsigned short HttpEndpoint::port() const { return state_->port; }

void HttpEndpoint::stop() {
  if (state_->stopped) return;
  state_->stopped = true;
  boost::system::error_code ignored;
  state_->acceptor.close(ignored);
  state_->retry_timer.cancel();
  // close() only cancels operations (their handlers run later), so no connection leaves the
  // map during the walk; a copy keeps that true whatever close() becomes.
  std::vector<std::shared_ptr<Connection>> open;
  for (const auto& [id, weak] : state_->connections) {
    if (auto connection = weak.lock()) open.push_back(std::move(connection));
  }
  for (const auto& connection : open) connection->close();
}

}  // namespace yoke::daemon::metrics
