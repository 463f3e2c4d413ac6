// The endpoint's routing table without sockets: status, headers and bodies for each path and
// method, HEAD, keep-alive, handler failures.
#include <gtest/gtest.h>

#include <stdexcept>
#include <string>

#include <boost/beast/http/field.hpp>
#include <boost/beast/http/verb.hpp>

#include "daemon/metrics/http_routes.h"

namespace yoke::daemon::metrics {
namespace {
namespace http = boost::beast::http;

struct MetricsRoutes : ::testing::Test {
  HttpHandlers handlers{[] { return std::string("up 1\n"); },
                        [this] {
                          return HealthReport{healthy, "journal: disk full"};
                        }};
  bool healthy = true;

  HttpResponse ask(http::verb verb, const char* target, unsigned version = 11) {
    HttpRequest request{verb, target, version};
    return answer(request, handlers);
  }
};

TEST_F(MetricsRoutes, MetricsIsTheExpositionText) {
  const HttpResponse r = ask(http::verb::get, "/metrics");
  EXPECT_EQ(r.result(), http::status::ok);
  EXPECT_EQ(r[http::field::content_type], "text/plain; version=0.0.4; charset=utf-8");
  EXPECT_EQ(r[http::field::content_length], "5");
  EXPECT_EQ(r.body(), "up 1\n");
  EXPECT_TRUE(r.keep_alive());
}

TEST_F(MetricsRoutes, QueryStringIsIgnored) {
  EXPECT_EQ(ask(http::verb::get, "/metrics?name[]=up").result(), http::status::ok);
}

TEST_F(MetricsRoutes, HeadKeepsLengthDropsBody) {
  const HttpResponse r = ask(http::verb::head, "/metrics");
  EXPECT_EQ(r.result(), http::status::ok);
  EXPECT_EQ(r[http::field::content_length], "5");
  EXPECT_EQ(r.body(), "");
}

TEST_F(MetricsRoutes, Health) {
  HttpResponse r = ask(http::verb::get, "/healthz");
  EXPECT_EQ(r.result(), http::status::ok);
  EXPECT_EQ(r.body(), "ok\n");
  healthy = false;
  r = ask(http::verb::get, "/healthz");
  EXPECT_EQ(r.result(), http::status::service_unavailable);
  EXPECT_EQ(r.body(), "journal: disk full\n");
}

TEST_F(MetricsRoutes, UnknownPathAndOtherMethods) {
  EXPECT_EQ(ask(http::verb::get, "/").result(), http::status::not_found);
  EXPECT_EQ(ask(http::verb::get, "/metrics/").result(), http::status::not_found);
  EXPECT_EQ(ask(http::verb::post, "/nowhere").result(), http::status::not_found);
  const HttpResponse r = ask(http::verb::post, "/metrics");
  EXPECT_EQ(r.result(), http::status::method_not_allowed);
  EXPECT_EQ(r[http::field::allow], "GET, HEAD");
  EXPECT_EQ(ask(http::verb::delete_, "/healthz").result(), http::status::method_not_allowed);
}

TEST_F(MetricsRoutes, KeepAliveFollowsTheRequest) {
  EXPECT_FALSE(ask(http::verb::get, "/metrics", 10).keep_alive());  // HTTP/1.0 default
  HttpRequest request{http::verb::get, "/metrics", 11};
  request.keep_alive(false);
  EXPECT_FALSE(answer(request, handlers).keep_alive());
}

TEST_F(MetricsRoutes, ThrowingHandlerIs500) {
  handlers.metrics = []() -> std::string { throw std::runtime_error("boom"); };
  const HttpResponse r = ask(http::verb::get, "/metrics");
  EXPECT_EQ(r.result(), http::status::internal_server_error);
  EXPECT_EQ(r.body(), "internal error\n");
}

TEST_F(MetricsRoutes, RefusalClosesTheConnection) {
  const HttpResponse r = refusal(http::status::request_header_fields_too_large);
  EXPECT_EQ(r.result_int(), 431u);
  EXPECT_FALSE(r.keep_alive());
  EXPECT_EQ(r.body(), "Request Header Fields Too Large\n");
}

}  // namespace
}  // namespace yoke::daemon::metrics
