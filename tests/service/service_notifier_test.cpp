// ServiceNotifier against real unix datagram sockets bound by the test: a socket file and an
// abstract name, as systemd's $NOTIFY_SOCKET names them; a manager that is gone; no manager.
#include "daemon/server/service_notifier.h"

#include <cstdlib>
#include <filesystem>
#include <string>

#include <gtest/gtest.h>
#include <sys/socket.h>
#include <sys/un.h>
#include <unistd.h>

namespace yoke::daemon {
namespace {

// A bound datagram socket standing in for the service manager's end.
class ManagerSocket {
 public:
  // `name` is "/path" or "@abstract".
  explicit ManagerSocket(const std::string& name) : name_(name) {
    fd_ = ::socket(AF_UNIX, SOCK_DGRAM | SOCK_CLOEXEC, 0);
    EXPECT_GE(fd_, 0);
    sockaddr_un address{};
    address.sun_family = AF_UNIX;
    name.copy(address.sun_path, name.size());
    socklen_t length = static_cast<socklen_t>(offsetof(sockaddr_un, sun_path) + name.size());
    if (name.front() == '@') {
      address.sun_path[0] = '\0';
    } else {
      ++length;
    }
    EXPECT_EQ(::bind(fd_, reinterpret_cast<const sockaddr*>(&address), length), 0);
    timeval wait{5, 0};  // a datagram that never comes fails the test instead of hanging it
    ::setsockopt(fd_, SOL_SOCKET, SO_RCVTIMEO, &wait, sizeof wait);
  }
  ~ManagerSocket() {
    ::close(fd_);
    if (name_.front() == '/') std::filesystem::remove(name_);
  }
  ManagerSocket(const ManagerSocket&) = delete;
  ManagerSocket& operator=(const ManagerSocket&) = delete;

  std::string receive() const {
    char buffer[4096];
    const ssize_t got = ::recv(fd_, buffer, sizeof buffer, 0);
    return got < 0 ? std::string("(nothing)") : std::string(buffer, static_cast<size_t>(got));
  }

 private:
  std::string name_;
  int fd_ = -1;
};

std::string temp_socket_path(const std::string& leaf) {
  return (std::filesystem::temp_directory_path() /
          ("yoke-notify-" + std::to_string(::getpid()) + "-" + leaf))
      .string();
}

TEST(ServiceNotifier, ReportsReachASocketFile) {
  const std::string path = temp_socket_path("file");
  const ManagerSocket manager(path);
  const ServiceNotifier notifier(path);
  ASSERT_TRUE(notifier.enabled());
  EXPECT_TRUE(notifier.status("recovering"));
  EXPECT_EQ(manager.receive(), "STATUS=recovering");
  EXPECT_TRUE(notifier.ready("serving"));
  EXPECT_EQ(manager.receive(), "READY=1\nSTATUS=serving");
  EXPECT_TRUE(notifier.stopping("final snapshot"));
  EXPECT_EQ(manager.receive(), "STOPPING=1\nSTATUS=final snapshot");
}

TEST(ServiceNotifier, ReportsReachAnAbstractName) {
  const std::string name = "@yoke-notify-" + std::to_string(::getpid());
  const ManagerSocket manager(name);
  EXPECT_TRUE(ServiceNotifier(name).ready("up"));
  EXPECT_EQ(manager.receive(), "READY=1\nSTATUS=up");
}

TEST(ServiceNotifier, ReadsTheEnvironment) {
  const std::string path = temp_socket_path("env");
  const ManagerSocket manager(path);
  ASSERT_EQ(::setenv("NOTIFY_SOCKET", path.c_str(), 1), 0);
  EXPECT_TRUE(ServiceNotifier::from_environment().notify("READY=1"));
  EXPECT_EQ(manager.receive(), "READY=1");

  ASSERT_EQ(::unsetenv("NOTIFY_SOCKET"), 0);
  EXPECT_FALSE(ServiceNotifier::from_environment().enabled());
  EXPECT_FALSE(ServiceNotifier::from_environment().ready("nobody listens"));
}

TEST(ServiceNotifier, AGoneManagerIsAFailureNotACrash) {
  const ServiceNotifier notifier(temp_socket_path("never-bound"));
  EXPECT_TRUE(notifier.enabled());
  EXPECT_FALSE(notifier.ready("nobody listens"));
  EXPECT_FALSE(notifier.stopping("still nobody"));
}

TEST(ServiceNotifier, AddressesItDoesNotSpeakAreOff) {
  EXPECT_FALSE(ServiceNotifier("").enabled());
  EXPECT_FALSE(ServiceNotifier("vsock:2:1234").enabled());
  EXPECT_FALSE(ServiceNotifier("relative/path").notify("READY=1"));
  EXPECT_FALSE(ServiceNotifier("/" + std::string(200, 'x')).notify("READY=1"));  // > sun_path
}

}  // namespace
}  // namespace yoke::daemon
