#include "http_connection.h"

#include <utility>

#include <boost/beast/http/error.hpp>
#include <boost/beast/http/read.hpp>
#include <boost/beast/http/write.hpp>

namespace yoke::daemon::metrics::detail {
namespace beast = boost::beast;
namespace http = beast::http;

Connection::Connection(std::shared_ptr<ServerState> state, std::uint64_t id,
                       boost::asio::ip::tcp::socket socket)
    : state_(std::move(state)), id_(id), stream_(std::move(socket)) {}

Connection::~Connection() { state_->connections.erase(id_); }

void Connection::start() { read_request(); }

void Connection::close() {
  beast::error_code ignored;
  stream_.socket().shutdown(boost::asio::ip::tcp::socket::shutdown_both, ignored);
  stream_.close();
}

void Connection::read_request() {
  // A parser reads one message; each request gets a fresh one with the limits set again.
  parser_.emplace();
  parser_->header_limit(static_cast<std::uint32_t>(state_->limits.header_bytes));
  parser_->body_limit(0);  // nothing here takes a body; refuse one before reading it
  stream_.expires_after(state_->limits.timeout);
  http::async_read(
      stream_, buffer_, *parser_,
      [self = shared_from_this()](beast::error_code error, std::size_t) { self->on_read(error); });
}

void Connection::on_read(beast::error_code error) {
  if (state_->stopped) return;
  if (error == http::error::end_of_stream) {
    // The client closed between requests: finish our side politely.
    beast::error_code ignored;
    stream_.socket().shutdown(boost::asio::ip::tcp::socket::shutdown_send, ignored);
    return;
  }
  if (error == http::error::header_limit) {
    write_response(refusal(http::status::request_header_fields_too_large));
  } else if (error == http::error::body_limit || error == http::error::unexpected_body) {
    write_response(refusal(http::status::payload_too_large));
  } else if (error &&
             error.category() == http::make_error_code(http::error::bad_method).category()) {
    write_response(refusal(http::status::bad_request));
  } else if (error) {
    return;  // timeout, reset, aborted: nobody to answer; dropping the last reference closes
  } else {
    write_response(answer(parser_->get(), state_->handlers));
  }
}

void Connection::write_response(HttpResponse response) {
  response_ = std::move(response);
  stream_.expires_after(state_->limits.timeout);
  http::async_write(
      stream_, *response_,
      [self = shared_from_this()](beast::error_code error, std::size_t) { self->on_write(error); });
}

void Connection::on_write(beast::error_code error) {
  if (error || state_->stopped) return;
  const bool keep_alive = response_->keep_alive();
  response_.reset();
  if (keep_alive) {
    read_request();
    return;
  }
  // Our side is done: FIN after the reply. Then read and drop whatever the client still sends
  // (a refused request's rest, pipelined requests) until it closes or the deadline passes;
  // closing with unread input would make the kernel send a reset, which can destroy the reply
  // before the client has read it.
  beast::error_code ignored;
  stream_.socket().shutdown(boost::asio::ip::tcp::socket::shutdown_send, ignored);
  stream_.expires_after(state_->limits.timeout);
  drain();
}

void Connection::drain() {
  buffer_.clear();
  stream_.async_read_some(buffer_.prepare(4096),
                          [self = shared_from_this()](beast::error_code error, std::size_t) {
                            if (!error && !self->state_->stopped) self->drain();
                          });
}

}  // namespace yoke::daemon::metrics::detail
