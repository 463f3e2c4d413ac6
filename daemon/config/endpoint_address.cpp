#include "endpoint_address.h"

namespace yoke::daemon {
namespace {

bool binds_everywhere(const std::string& host) {
  return host == "*" || host == "0.0.0.0" || host == "[::]";
}

}  // namespace

std::optional<BindAddress> parse_host_port(std::string_view text) {
  // The last colon splits, so that "[::1]:7413" keeps its bracketed IPv6 host.
  const std::size_t colon = text.rfind(':');
  if (colon == std::string_view::npos || colon == 0) return std::nullopt;
  const std::string_view host = text.substr(0, colon);
  const std::string_view digits = text.substr(colon + 1);
  if (digits.empty() || digits.size() > 5) return std::nullopt;
  unsigned port = 0;
  for (const char c : digits) {
    if (c < '0' || c > '9') return std::nullopt;
    port = port * 10 + static_cast<unsigned>(c - '0');
  }
  if (port == 0 || port > 65535) return std::nullopt;
  for (const char c : host) {
    if (c == '/' || static_cast<unsigned char>(c) <= ' ') return std::nullopt;
  }
  BindAddress address;
  address.host = std::string(host);
  address.port = port;
  return address;
}

std::optional<BindAddress> parse_zmq_endpoint(std::string_view text) {
  if (text.starts_with("tcp://")) return parse_host_port(text.substr(6));
  if (text.starts_with("ipc://") && text.size() > 6) {
    BindAddress address;
    address.kind = BindAddress::Kind::ipc;
    address.path = std::string(text.substr(6));
    return address;
  }
  return std::nullopt;
}

bool addresses_collide(const BindAddress& a, const BindAddress& b) {
  if (a.kind != b.kind) return false;
  if (a.kind == BindAddress::Kind::ipc) return a.path == b.path;
  return a.port == b.port &&
         (a.host == b.host || binds_everywhere(a.host) || binds_everywhere(b.host));
}

}  // namespace yoke::daemon
