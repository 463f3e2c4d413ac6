// What the endpoint answers to one request, apart from any socket: the routing table of
// http_endpoint.h as a pure function, so it can be read and tested on its own.
#pragma once

#include <boost/beast/http/empty_body.hpp>
#include <boost/beast/http/message.hpp>
#include <boost/beast/http/status.hpp>
#include <boost/beast/http/string_body.hpp>

#include "daemon/metrics/http_endpoint.h"

namespace yoke::daemon::metrics {

using HttpRequest = boost::beast::http::request<boost::beast::http::empty_body>;
using HttpResponse = boost::beast::http::response<boost::beast::http::string_body>;

// The reply to a parsed request; keep-alive as the request asks. Calls one handler at most.
HttpResponse answer(const HttpRequest& request, const HttpHandlers& handlers);

// The reply to a request that could not be read (400, 413, 431): always closes the connection.
HttpResponse refusal(boost::beast::http::status status);

}  // namespace yoke::daemon::metrics
