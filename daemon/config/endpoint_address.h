// The address an endpoint setting binds, so that settings can be checked before any socket
// exists: well formed, and no two settings binding the same place.
#pragma once

#include <optional>
#include <string>
#include <string_view>

namespace yoke::daemon {

struct BindAddress {
  enum class Kind { tcp, ipc } kind = Kind::tcp;
  std::string host;  // tcp only; "*" binds every interface
  unsigned port = 0;  // tcp only, 1..65535
  std::string path;  // ipc only
};

// "tcp://HOST:PORT" or "ipc://PATH"; nothing when malformed.
std::optional<BindAddress> parse_zmq_endpoint(std::string_view text);
// "HOST:PORT" (the metrics HTTP listener); nothing when malformed.
std::optional<BindAddress> parse_host_port(std::string_view text);

// Whether binding both would collide: the same ipc path, or the same tcp port on the same host
// or with either on every interface.
bool addresses_collide(const BindAddress& a, const BindAddress& b);

}  // namespace yoke::daemon
