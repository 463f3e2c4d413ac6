// The metrics endpoint over real sockets: the server runs on an io_context on its own thread,
// the test talks to it with a blocking Beast client. No sleeps: each step waits on a socket.
#include <gtest/gtest.h>

#include <atomic>
#include <optional>
#include <string>
#include <system_error>
#include <thread>

#include <boost/asio/connect.hpp>
#include <boost/asio/io_context.hpp>
#include <boost/asio/ip/tcp.hpp>
#include <boost/asio/post.hpp>
#include <boost/asio/write.hpp>
#include <boost/beast/core/flat_buffer.hpp>
#include <boost/beast/http.hpp>

#include "daemon/metrics/http_endpoint.h"

namespace yoke::daemon::metrics {
namespace {
namespace asio = boost::asio;
namespace http = boost::beast::http;
using tcp = asio::ip::tcp;
using Response = http::response<http::string_body>;

// A blocking HTTP/1.1 client on one connection.
class Client {
 public:
  explicit Client(unsigned short port) {
    socket_.connect({asio::ip::make_address("127.0.0.1"), port});
  }

  Response request(http::verb verb, const char* target, bool keep_alive = true) {
    http::request<http::empty_body> request{verb, target, 11};
    request.set(http::field::host, "127.0.0.1");
    request.keep_alive(keep_alive);
    http::write(socket_, request);
    return read(verb == http::verb::head);
  }

  void send(const std::string& bytes) { asio::write(socket_, asio::buffer(bytes)); }

  Response read(bool head = false) {
    http::response_parser<http::string_body> parser;
    parser.skip(head);  // a reply to HEAD announces a length but carries no body
    http::read(socket_, buffer_, parser);
    return parser.release();
  }

  // Whether the server has closed the connection: the next read ends instead of blocking.
  bool closed_by_server() {
    char byte;
    boost::system::error_code error;
    socket_.read_some(asio::buffer(&byte, 1), error);
    return error == asio::error::eof || error == asio::error::connection_reset;
  }

 private:
  asio::io_context io_;
  tcp::socket socket_{io_};
  boost::beast::flat_buffer buffer_;
};

class MetricsHttp : public ::testing::Test {
 protected:
  void start(HttpLimits limits = {}) {
    BindAddress address;
    address.host = "127.0.0.1";
    address.port = 0;
    HttpHandlers handlers{[this] {
                            ++scrapes_;
                            return std::string("yoke_up 1\n");
                          },
                          [this] {
                            return HealthReport{healthy_.load(), "journal: disk full"};
                          }};
    endpoint_.emplace(io_, address, std::move(handlers), limits);
    port_ = endpoint_->port();
    loop_ = std::thread([this] { io_.run(); });
  }

  // The endpoint is stopped on its own loop thread; run() then returns once every connection is
  // closed, which the join waits for.
  void stop() {
    if (!loop_.joinable()) return;
    asio::post(io_, [this] { endpoint_->stop(); });
    loop_.join();
  }

  void TearDown() override { stop(); }

  asio::io_context io_;
  std::optional<HttpEndpoint> endpoint_;
  std::thread loop_;
  unsigned short port_ = 0;
  std::atomic<int> scrapes_{0};
  std::atomic<bool> healthy_{true};
};

TEST_F(MetricsHttp, ServesMetrics) {
  start();
  EXPECT_NE(port_, 0);
  Client client(port_);
  const Response r = client.request(http::verb::get, "/metrics");
  EXPECT_EQ(r.result(), http::status::ok);
  EXPECT_EQ(r[http::field::content_type], "text/plain; version=0.0.4; charset=utf-8");
  EXPECT_EQ(r.body(), "yoke_up 1\n");
  EXPECT_TRUE(r.keep_alive());
}

TEST_F(MetricsHttp, HeadAnnouncesTheLengthWithoutBody) {
  start();
  Client client(port_);
  const Response r = client.request(http::verb::head, "/metrics");
  EXPECT_EQ(r.result(), http::status::ok);
  EXPECT_EQ(r[http::field::content_length], "10");
  EXPECT_EQ(r.body(), "");
  // The connection is still in step: the next reply is read whole.
  EXPECT_EQ(client.request(http::verb::get, "/metrics").body(), "yoke_up 1\n");
}

TEST_F(MetricsHttp, HealthOkAndNotOk) {
  start();
  Client client(port_);
  Response r = client.request(http::verb::get, "/healthz");
  EXPECT_EQ(r.result(), http::status::ok);
  EXPECT_EQ(r.body(), "ok\n");
  healthy_ = false;
  r = client.request(http::verb::get, "/healthz");
  EXPECT_EQ(r.result(), http::status::service_unavailable);
  EXPECT_EQ(r.body(), "journal: disk full\n");
}

TEST_F(MetricsHttp, UnknownPathIs404OtherMethodIs405) {
  start();
  Client client(port_);
  EXPECT_EQ(client.request(http::verb::get, "/favicon.ico").result(), http::status::not_found);
  const Response r = client.request(http::verb::put, "/metrics");
  EXPECT_EQ(r.result(), http::status::method_not_allowed);
  EXPECT_EQ(r[http::field::allow], "GET, HEAD");
}

TEST_F(MetricsHttp, KeepAliveServesTwoRequestsOnOneConnection) {
  start();
  Client client(port_);
  EXPECT_EQ(client.request(http::verb::get, "/metrics").result(), http::status::ok);
  EXPECT_EQ(client.request(http::verb::get, "/metrics").result(), http::status::ok);
  EXPECT_EQ(scrapes_.load(), 2);
}

TEST_F(MetricsHttp, PipelinedRequestsAreAnsweredInOrder) {
  start();
  Client client(port_);
  client.send(
      "GET /healthz HTTP/1.1\r\nHost: x\r\n\r\n"
      "GET /metrics HTTP/1.1\r\nHost: x\r\n\r\n");
  EXPECT_EQ(client.read().body(), "ok\n");
  EXPECT_EQ(client.read().body(), "yoke_up 1\n");
}

TEST_F(MetricsHttp, ConnectionCloseIsHonoured) {
  start();
  Client client(port_);
  const Response r = client.request(http::verb::get, "/metrics", false);
  EXPECT_EQ(r.result(), http::status::ok);
  EXPECT_FALSE(r.keep_alive());
  EXPECT_TRUE(client.closed_by_server());
}

TEST_F(MetricsHttp, OversizedHeaderIsRefusedWith431) {
  start();
  Client client(port_);
  client.send("GET /metrics HTTP/1.1\r\nHost: x\r\nX-Padding: " + std::string(9000, 'a') +
              "\r\n\r\n");
  const Response r = client.read();
  EXPECT_EQ(r.result_int(), 431u);
  EXPECT_FALSE(r.keep_alive());
  EXPECT_TRUE(client.closed_by_server());
  EXPECT_EQ(scrapes_.load(), 0);
}

TEST_F(MetricsHttp, RequestBodyIsRefusedWith413) {
  start();
  Client client(port_);
  client.send("POST /metrics HTTP/1.1\r\nHost: x\r\nContent-Length: 5\r\n\r\nhello");
  EXPECT_EQ(client.read().result_int(), 413u);
  EXPECT_TRUE(client.closed_by_server());
}

TEST_F(MetricsHttp, GarbageIsRefusedWith400) {
  start();
  Client client(port_);
  client.send("HELLO THERE\r\n\r\n");
  EXPECT_EQ(client.read().result_int(), 400u);
  EXPECT_TRUE(client.closed_by_server());
}

TEST_F(MetricsHttp, SlowClientDoesNotBlockOthers) {
  start();
  Client slow(port_);
  slow.send("GET /metr");  // and nothing more for now
  Client quick(port_);
  EXPECT_EQ(quick.request(http::verb::get, "/metrics").result(), http::status::ok);
  slow.send("ics HTTP/1.1\r\nHost: x\r\n\r\n");
  EXPECT_EQ(slow.read().body(), "yoke_up 1\n");
}

TEST_F(MetricsHttp, SilentClientIsCutAtTheDeadline) {
  HttpLimits limits;
  limits.timeout = std::chrono::milliseconds(100);
  start(limits);
  Client silent(port_);
  silent.send("GET /metrics HTTP/1.1\r\n");  // the header never ends
  EXPECT_TRUE(silent.closed_by_server());
}

TEST_F(MetricsHttp, ConnectionsPastTheLimitAreClosed) {
  HttpLimits limits;
  limits.max_connections = 1;
  start(limits);
  Client first(port_);
  EXPECT_EQ(first.request(http::verb::get, "/healthz").result(), http::status::ok);  // accepted
  Client second(port_);
  EXPECT_TRUE(second.closed_by_server());
  EXPECT_EQ(first.request(http::verb::get, "/healthz").result(), http::status::ok);
}

TEST_F(MetricsHttp, StopClosesOpenConnections) {
  HttpLimits limits;
  limits.timeout = std::chrono::hours(1);  // so only stop() can end the idle connection
  start(limits);
  Client idle(port_);
  EXPECT_EQ(idle.request(http::verb::get, "/metrics").result(), http::status::ok);
  stop();  // returns only when io_context::run has, i.e. nothing is left open
  EXPECT_TRUE(idle.closed_by_server());
}

TEST_F(MetricsHttp, BindFailureNamesTheAddress) {
  start();
  BindAddress taken;
  taken.host = "127.0.0.1";
  taken.port = port_;
  asio::io_context other;
  const HttpHandlers handlers{[] { return std::string(); }, [] { return HealthReport{}; }};
  try {
    HttpEndpoint second(other, taken, handlers);
    FAIL() << "bound a port that is already listening";
  } catch (const std::system_error& error) {
    EXPECT_NE(std::string(error.what()).find("127.0.0.1:" + std::to_string(port_)),
              std::string::npos)
        << error.what();
  }
}

TEST_F(MetricsHttp, BadArgumentsAreRefused) {
  BindAddress ipc;
  ipc.kind = BindAddress::Kind::ipc;
  ipc.path = "/tmp/x";
  const HttpHandlers handlers{[] { return std::string(); }, [] { return HealthReport{}; }};
  EXPECT_THROW(HttpEndpoint(io_, ipc, handlers), std::invalid_argument);
  BindAddress loopback;
  loopback.host = "127.0.0.1";
  EXPECT_THROW(HttpEndpoint(io_, loopback, HttpHandlers{}), std::invalid_argument);
  loopback.port = 70000;
  EXPECT_THROW(HttpEndpoint(io_, loopback, handlers), std::system_error);
}

}  // namespace
}  // namespace yoke::daemon::metrics
