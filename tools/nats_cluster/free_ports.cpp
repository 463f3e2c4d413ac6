#include "free_ports.h"

#include <netinet/in.h>
#include <sys/socket.h>
#include <unistd.h>

#include <algorithm>
#include <random>
#include <stdexcept>

namespace yoke::nats_cluster {
namespace {

// A socket bound to `port` on 127.0.0.1, or -1 when the port is taken.
int bind_loopback(int port) {
  const int fd = ::socket(AF_INET, SOCK_STREAM | SOCK_CLOEXEC, 0);
  if (fd < 0) return -1;
  sockaddr_in address{};
  address.sin_family = AF_INET;
  address.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  address.sin_port = htons(static_cast<std::uint16_t>(port));
  if (::bind(fd, reinterpret_cast<sockaddr*>(&address), sizeof address) != 0) {
    ::close(fd);
    return -1;
  }
  return fd;
}

}  // namespace

std::vector<int> free_loopback_ports(int count) {
  constexpr int first = 20000;
  constexpr int last = 32767;
  std::mt19937 random(std::random_device{}());
  std::uniform_int_distribution<int> pick(first, last);
  std::vector<int> sockets;
  std::vector<int> ports;
  for (int tries = 0; static_cast<int>(ports.size()) < count && tries < 10000; ++tries) {
    const int port = pick(random);
    if (std::find(ports.begin(), ports.end(), port) != ports.end()) continue;
    const int fd = bind_loopback(port);
    if (fd < 0) continue;
    sockets.push_back(fd);  // held until all are picked
    ports.push_back(port);
  }
  for (const int fd : sockets) ::close(fd);
  if (static_cast<int>(ports.size()) < count) {
    throw std::runtime_error("cannot find " + std::to_string(count) + " free loopback ports");
  }
  return ports;
}

}  // namespace yoke::nats_cluster
