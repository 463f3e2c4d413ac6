#include "free_ports.h"

#include <netinet/in.h>
#include <sys/socket.h>
#include <unistd.h>

#include <stdexcept>

namespace yoke::nats_cluster {

std::vector<int> free_loopback_ports(int count) {
  std::vector<int> sockets;
  std::vector<int> ports;
  const auto close_all = [&] {
    for (const int fd : sockets) ::close(fd);
  };
  for (int k = 0; k < count; ++k) {
    const int fd = ::socket(AF_INET, SOCK_STREAM, 0);
    if (fd < 0) {
      close_all();
      throw std::runtime_error("cannot open a socket to find a free port");
    }
    sockets.push_back(fd);
    sockaddr_in address{};
    address.sin_family = AF_INET;
    address.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
    socklen_t length = sizeof address;
    if (::bind(fd, reinterpret_cast<sockaddr*>(&address), sizeof address) != 0 ||
        ::getsockname(fd, reinterpret_cast<sockaddr*>(&address), &length) != 0) {
      close_all();
      throw std::runtime_error("cannot find a free loopback port");
    }
    ports.push_back(ntohs(address.sin_port));
  }
  close_all();
  return ports;
}

}  // namespace yoke::nats_cluster
