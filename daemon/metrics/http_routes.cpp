#include "http_routes.h"

#include <exception>
#include <string_view>

#include <boost/beast/http/field.hpp>
#include <boost/beast/http/verb.hpp>

namespace yoke::daemon::metrics {
namespace http = boost::beast::http;
namespace {

constexpr const char* kExpositionType = "text/plain; version=0.0.4; charset=utf-8";
constexpr const char* kPlainText = "text/plain; charset=utf-8";

HttpResponse reply(http::status status, unsigned version, const char* type, std::string body) {
  HttpResponse response{status, version};
  response.set(http::field::content_type, type);
  // Health and metrics are live values: a cache in between would hide the daemon's state.
  response.set(http::field::cache_control, "no-store");
  response.body() = std::move(body);
  return response;
}

HttpResponse route(std::string_view path, bool read_only, unsigned version,
                   const HttpHandlers& handlers) {
  const bool known = path == "/metrics" || path == "/healthz";
  if (!known) return reply(http::status::not_found, version, kPlainText, "not found\n");
  if (!read_only) {
    HttpResponse response =
        reply(http::status::method_not_allowed, version, kPlainText, "method not allowed\n");
    response.set(http::field::allow, "GET, HEAD");
    return response;
  }
  if (path == "/metrics")
    return reply(http::status::ok, version, kExpositionType, handlers.metrics());
  HealthReport health = handlers.health();
  if (health.ok) return reply(http::status::ok, version, kPlainText, "ok\n");
  return reply(http::status::service_unavailable, version, kPlainText, health.status + "\n");
}

}  // namespace

HttpResponse answer(const HttpRequest& request, const HttpHandlers& handlers) {
  // The query string does not choose the resource; Prometheus sends none anyway.
  std::string_view path(request.target().data(), request.target().size());
  path = path.substr(0, path.find('?'));
  const bool head = request.method() == http::verb::head;
  const bool read_only = head || request.method() == http::verb::get;

  HttpResponse response;
  try {
    response = route(path, read_only, request.version(), handlers);
  } catch (const std::exception&) {
    // A failing handler costs this request, not the daemon's loop.
    response = reply(http::status::internal_server_error, request.version(), kPlainText,
                     "internal error\n");
  }
  response.keep_alive(request.keep_alive());
  response.prepare_payload();  // Content-Length of the full body, HEAD included
  if (head) response.body().clear();
  return response;
}

HttpResponse refusal(http::status status) {
  const auto reason = http::obsolete_reason(status);
  HttpResponse response =
      reply(status, 11, kPlainText, std::string(reason.data(), reason.size()) + "\n");
  response.keep_alive(false);
  response.prepare_payload();
  return response;
}

}  // namespace yoke::daemon::metrics
