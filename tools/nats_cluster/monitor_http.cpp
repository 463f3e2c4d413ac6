#include "monitor_http.h"

#include <netinet/in.h>
#include <poll.h>
#include <sys/socket.h>
#include <unistd.h>

#include <cerrno>
#include <cstdlib>
#include <fcntl.h>

namespace yoke::nats_cluster {
namespace {

struct SocketCloser {
  int fd;
  ~SocketCloser() {
    if (fd >= 0) ::close(fd);
  }
};

int remaining_ms(std::chrono::steady_clock::time_point deadline) {
  const auto left = std::chrono::duration_cast<std::chrono::milliseconds>(
      deadline - std::chrono::steady_clock::now());
  return left.count() > 0 ? static_cast<int>(left.count()) : 0;
}

}  // namespace

HttpReply monitor_get(int port, const std::string& path, std::chrono::milliseconds limit) {
  const auto deadline = std::chrono::steady_clock::now() + limit;
  SocketCloser socket{::socket(AF_INET, SOCK_STREAM | SOCK_NONBLOCK | SOCK_CLOEXEC, 0)};
  if (socket.fd < 0) return {};
  sockaddr_in address{};
  address.sin_family = AF_INET;
  address.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  address.sin_port = htons(static_cast<std::uint16_t>(port));
  if (::connect(socket.fd, reinterpret_cast<sockaddr*>(&address), sizeof address) != 0) {
    if (errno != EINPROGRESS) return {};
    pollfd writable{socket.fd, POLLOUT, 0};
    if (::poll(&writable, 1, remaining_ms(deadline)) != 1) return {};
    int error = 0;
    socklen_t length = sizeof error;
    ::getsockopt(socket.fd, SOL_SOCKET, SO_ERROR, &error, &length);
    if (error != 0) return {};
  }
  const std::string request = "GET " + path + " HTTP/1.0\r\nHost: 127.0.0.1\r\n\r\n";
  std::size_t sent = 0;
  while (sent < request.size()) {
    const auto n = ::send(socket.fd, request.data() + sent, request.size() - sent, MSG_NOSIGNAL);
    if (n > 0) {
      sent += static_cast<std::size_t>(n);
      continue;
    }
    if (n < 0 && errno != EAGAIN) return {};
    pollfd writable{socket.fd, POLLOUT, 0};
    if (::poll(&writable, 1, remaining_ms(deadline)) != 1) return {};
  }
  std::string raw;
  char buffer[8192];
  for (;;) {
    const auto n = ::recv(socket.fd, buffer, sizeof buffer, 0);
    if (n > 0) {
      raw.append(buffer, static_cast<std::size_t>(n));
      continue;
    }
    if (n == 0) break;  // the server closed: the reply is complete
    if (errno != EAGAIN && errno != EINTR) return {};
    pollfd readable{socket.fd, POLLIN, 0};
    if (::poll(&readable, 1, remaining_ms(deadline)) != 1) return {};
  }
  // "HTTP/1.x NNN ..." then headers, a blank line, the body.
  HttpReply reply;
  const auto space = raw.find(' ');
  const auto header_end = raw.find("\r\n\r\n");
  if (space == std::string::npos || header_end == std::string::npos) return {};
  reply.status = std::atoi(raw.c_str() + space + 1);
  reply.body = raw.substr(header_end + 4);
  return reply;
}

}  // namespace yoke::nats_cluster
