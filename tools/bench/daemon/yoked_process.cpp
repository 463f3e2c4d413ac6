#include "yoked_process.h"

#include <fcntl.h>
#include <netinet/in.h>
#include <signal.h>
#include <spawn.h>
#include <sys/socket.h>
#include <sys/wait.h>
#include <unistd.h>

#include <stdexcept>
#include <thread>
#include <vector>

#include "yoke/v1/query.pb.h"

extern char** environ;

namespace yoke::bench {
namespace {

// A port that was free a moment ago (the kernel's pick for port 0).
int free_port() {
  const int fd = ::socket(AF_INET, SOCK_STREAM, 0);
  sockaddr_in address{};
  address.sin_family = AF_INET;
  address.sin_addr.s_addr = htonl(INADDR_LOOPBACK);
  socklen_t length = sizeof address;
  if (fd < 0 || ::bind(fd, reinterpret_cast<sockaddr*>(&address), sizeof address) != 0 ||
      ::getsockname(fd, reinterpret_cast<sockaddr*>(&address), &length) != 0) {
    throw std::runtime_error("cannot find a free loopback port");
  }
  ::close(fd);
  return ntohs(address.sin_port);
}

// A DEALER socket to `endpoint` that drops what it has not sent when it closes.
zmq::socket_t dealer_to(zmq::context_t& context, const std::string& endpoint) {
  zmq::socket_t socket(context, zmq::socket_type::dealer);
  socket.set(zmq::sockopt::linger, 0);
  socket.connect(endpoint);
  return socket;
}

}  // namespace

YokedEndpoints free_loopback_endpoints() {
  const auto tcp = [](int port) { return "tcp://127.0.0.1:" + std::to_string(port); };
  return {tcp(free_port()), tcp(free_port()), tcp(free_port()),
          "127.0.0.1:" + std::to_string(free_port())};
}

YokedProcess::YokedProcess(const std::filesystem::path& binary,
                           const std::filesystem::path& data_dir,
                           const std::filesystem::path& config_file) {
  const std::string log = (data_dir.parent_path() / "yoked.log").string();
  std::vector<std::string> arguments = {binary.string(), "--data-dir", data_dir.string(),
                                        "--config", config_file.string()};
  std::vector<char*> argv;
  for (std::string& argument : arguments) argv.push_back(argument.data());
  argv.push_back(nullptr);
  posix_spawn_file_actions_t actions;
  posix_spawn_file_actions_init(&actions);
  posix_spawn_file_actions_addopen(&actions, STDERR_FILENO, log.c_str(),
                                   O_WRONLY | O_CREAT | O_APPEND, 0644);
  posix_spawn_file_actions_addopen(&actions, STDOUT_FILENO, "/dev/null", O_WRONLY, 0);
  started_ = std::chrono::steady_clock::now();
  const int error = posix_spawn(&pid_, argv[0], &actions, nullptr, argv.data(), environ);
  posix_spawn_file_actions_destroy(&actions);
  if (error != 0) throw std::runtime_error("cannot start " + binary.string());
}

YokedProcess::~YokedProcess() {
  if (pid_ > 0) stop(true);
}

std::chrono::duration<double> YokedProcess::wait_ready(zmq::context_t& context,
                                                       const std::string& query,
                                                       std::chrono::seconds limit) {
  zmq::socket_t socket = dealer_to(context, query);
  v1::QueryRequest request;
  request.set_version(v1::PROTOCOL_VERSION_1);
  request.mutable_health();
  const std::string bytes = request.SerializeAsString();
  const auto deadline = started_ + limit;
  while (std::chrono::steady_clock::now() < deadline) {
    socket.send(zmq::buffer(bytes), zmq::send_flags::dontwait);
    zmq::pollitem_t item{socket.handle(), 0, ZMQ_POLLIN, 0};
    if (zmq::poll(&item, 1, std::chrono::milliseconds(5)) > 0) {
      zmq::message_t reply;
      (void)socket.recv(reply);
      return std::chrono::steady_clock::now() - started_;
    }
    int status = 0;
    if (waitpid(pid_, &status, WNOHANG) == pid_) {
      pid_ = -1;
      throw std::runtime_error("yoked exited while starting; see yoked.log");
    }
  }
  throw std::runtime_error("yoked did not answer within the start limit");
}

void YokedProcess::wait_serving(zmq::context_t& context, const std::string& query,
                                const std::string& pool, std::chrono::seconds limit) {
  zmq::socket_t socket = dealer_to(context, query);
  v1::QueryRequest request;
  request.set_version(v1::PROTOCOL_VERSION_1);
  request.set_pool(pool);
  request.mutable_summary();
  const std::string bytes = request.SerializeAsString();
  const auto deadline = std::chrono::steady_clock::now() + limit;
  while (std::chrono::steady_clock::now() < deadline) {
    socket.send(zmq::buffer(bytes), zmq::send_flags::none);
    zmq::pollitem_t item{socket.handle(), 0, ZMQ_POLLIN, 0};
    if (zmq::poll(&item, 1, std::chrono::milliseconds(1000)) <= 0) continue;
    zmq::message_t message;
    (void)socket.recv(message);
    v1::QueryReply reply;
    if (!reply.ParseFromArray(message.data(), static_cast<int>(message.size()))) {
      throw std::runtime_error("an unreadable reply from " + query);
    }
    if (!reply.has_error() || reply.error().code() != v1::Error::NOT_OWNER) return;
    std::this_thread::sleep_for(std::chrono::milliseconds(20));
  }
  throw std::runtime_error("pool " + pool + " not served at " + query + " within " +
                           std::to_string(limit.count()) + " s");
}

int YokedProcess::stop(bool kill) {
  if (pid_ <= 0) return -1;
  ::kill(pid_, kill ? SIGKILL : SIGTERM);
  int status = 0;
  waitpid(pid_, &status, 0);
  pid_ = -1;
  return WIFEXITED(status) ? WEXITSTATUS(status) : 128 + WTERMSIG(status);
}

}  // namespace yoke::bench
