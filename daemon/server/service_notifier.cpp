#include "service_notifier.h"

#include <atomic>
#include <cerrno>
#include <cstddef>
#include <cstdlib>
#include <cstring>
#include <utility>

#include <sys/socket.h>
#include <sys/un.h>
#include <unistd.h>

#include "daemon/logging/log_event.h"

namespace yoke::daemon {
namespace {

// Logs the first failed report only: a manager that went away would otherwise fill the log.
void log_notify_failure(std::string_view address, std::string_view reason) {
  static std::atomic<bool> logged{false};
  if (logged.exchange(true)) return;
  log_event(LogLevel::warn, "service_notify_failed",
            {{"socket", std::string(address)}, {"reason", std::string(reason)}});
}

// Closes the descriptor on every way out of notify().
class SocketFd {
 public:
  SocketFd() : fd_(::socket(AF_UNIX, SOCK_DGRAM | SOCK_CLOEXEC, 0)) {}
  ~SocketFd() {
    if (fd_ >= 0) ::close(fd_);
  }
  SocketFd(const SocketFd&) = delete;
  SocketFd& operator=(const SocketFd&) = delete;
  int get() const { return fd_; }

 private:
  int fd_;
};

bool speaks(std::string_view address) {
  return !address.empty() && (address.front() == '/' || address.front() == '@');
}

}  // namespace

ServiceNotifier ServiceNotifier::from_environment() {
  const char* address = std::getenv("NOTIFY_SOCKET");
  if (address == nullptr) return ServiceNotifier("");
  if (!speaks(address)) {
    // systemd may also name vsock addresses (virtual machines): not ours to reach.
    log_event(LogLevel::warn, "service_notify_unsupported", {{"socket", std::string(address)}});
    return ServiceNotifier("");
  }
  return ServiceNotifier(address);
}

ServiceNotifier::ServiceNotifier(std::string address) : address_(std::move(address)) {
  if (!speaks(address_)) address_.clear();
}

bool ServiceNotifier::notify(std::string_view assignments) const {
  if (!enabled()) return false;
  sockaddr_un target{};
  target.sun_family = AF_UNIX;
  if (address_.size() > sizeof(target.sun_path) - 1) {
    log_notify_failure(address_, "socket path too long");
    return false;
  }
  std::memcpy(target.sun_path, address_.data(), address_.size());
  if (address_.front() == '@') target.sun_path[0] = '\0';
  // An abstract name is exactly its bytes (no terminator); a path may carry its NUL.
  const socklen_t length = static_cast<socklen_t>(
      offsetof(sockaddr_un, sun_path) + address_.size() + (address_.front() == '@' ? 0 : 1));

  const SocketFd socket;
  if (socket.get() < 0) {
    log_notify_failure(address_, std::strerror(errno));
    return false;
  }
  const ssize_t sent = ::sendto(socket.get(), assignments.data(), assignments.size(), MSG_NOSIGNAL,
                                reinterpret_cast<const sockaddr*>(&target), length);
  if (sent != static_cast<ssize_t>(assignments.size())) {
    log_notify_failure(address_, sent < 0 ? std::strerror(errno) : "short datagram");
    return false;
  }
  return true;
}

bool ServiceNotifier::ready(std::string_view status_line) const {
  return notify("READY=1\nSTATUS=" + std::string(status_line));
}

bool ServiceNotifier::stopping(std::string_view status_line) const {
  return notify("STOPPING=1\nSTATUS=" + std::string(status_line));
}

bool ServiceNotifier::status(std::string_view status_line) const {
  return notify("STATUS=" + std::string(status_line));
}

}  // namespace yoke::daemon
