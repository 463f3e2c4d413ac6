#include "child_process.h"

#include <fcntl.h>
#include <signal.h>
#include <sys/prctl.h>
#include <sys/wait.h>
#include <unistd.h>

#include <cerrno>
#include <stdexcept>
#include <thread>
#include <utility>

namespace yoke::nats_cluster {

ChildProcess::ChildProcess(const std::vector<std::string>& argv,
                           const std::filesystem::path& log_file) {
  if (argv.empty()) throw std::runtime_error("no program to start");
  std::vector<std::string> copies = argv;
  std::vector<char*> pointers;
  for (std::string& argument : copies) pointers.push_back(argument.data());
  pointers.push_back(nullptr);
  const std::string log = log_file.string();
  const int log_fd = ::open(log.c_str(), O_WRONLY | O_CREAT | O_APPEND | O_CLOEXEC, 0644);
  if (log_fd < 0) throw std::runtime_error("cannot open " + log);
  int ready_pipe[2];
  if (::pipe2(ready_pipe, O_CLOEXEC) != 0) {
    ::close(log_fd);
    throw std::runtime_error("cannot create a pipe");
  }
  const pid_t parent = ::getpid();
  const pid_t pid = ::fork();
  if (pid < 0) {
    ::close(log_fd);
    ::close(ready_pipe[0]);
    ::close(ready_pipe[1]);
    throw std::runtime_error("cannot fork for " + argv[0]);
  }
  if (pid == 0) {
    // Only async-signal-safe calls between fork and exec (the parent has threads).
    ::prctl(PR_SET_PDEATHSIG, SIGKILL);
    if (::getppid() != parent) ::_exit(127);
    ::dup2(log_fd, STDOUT_FILENO);
    ::dup2(log_fd, STDERR_FILENO);
    ::execvp(pointers[0], pointers.data());
    const int error = errno;
    [[maybe_unused]] const auto written = ::write(ready_pipe[1], &error, sizeof error);
    ::_exit(127);
  }
  ::close(log_fd);
  ::close(ready_pipe[1]);
  // The pipe closes on a successful exec (O_CLOEXEC) or carries exec's errno.
  int exec_error = 0;
  const auto got = ::read(ready_pipe[0], &exec_error, sizeof exec_error);
  ::close(ready_pipe[0]);
  pid_ = pid;
  if (got == static_cast<ssize_t>(sizeof exec_error)) {
    reap_within(std::chrono::milliseconds(1000));
    pid_ = -1;
    throw std::runtime_error("cannot run " + argv[0] + ": " + std::to_string(exec_error) +
                             " (is it installed? tools/setup.sh)");
  }
}

ChildProcess::~ChildProcess() {
  if (running()) kill_now();
}

ChildProcess::ChildProcess(ChildProcess&& other) noexcept
    : pid_(std::exchange(other.pid_, -1)) {}

ChildProcess& ChildProcess::operator=(ChildProcess&& other) noexcept {
  if (this != &other) {
    if (running()) kill_now();
    pid_ = std::exchange(other.pid_, -1);
  }
  return *this;
}

void ChildProcess::signal(int signal_number) const {
  if (running()) ::kill(pid_, signal_number);
}

int ChildProcess::reap_within(std::chrono::milliseconds limit) {
  const auto deadline = std::chrono::steady_clock::now() + limit;
  for (;;) {
    int status = 0;
    const pid_t done = ::waitpid(pid_, &status, WNOHANG);
    if (done == pid_ || (done < 0 && errno == ECHILD)) {
      pid_ = -1;
      return status;
    }
    if (std::chrono::steady_clock::now() >= deadline) return -1;
    std::this_thread::sleep_for(std::chrono::milliseconds(5));
  }
}

int ChildProcess::stop(std::chrono::milliseconds grace) {
  if (!running()) return -1;
  ::kill(pid_, SIGCONT);
  ::kill(pid_, SIGTERM);
  const int status = reap_within(grace);
  if (!running()) return status;
  return kill_now();
}

int ChildProcess::kill_now() {
  if (!running()) return -1;
  ::kill(pid_, SIGKILL);
  ::kill(pid_, SIGCONT);
  int status = 0;
  while (::waitpid(pid_, &status, 0) < 0 && errno == EINTR) {
  }
  pid_ = -1;
  return status;
}

bool ChildProcess::exited() {
  if (!running()) return true;
  int status = 0;
  const pid_t done = ::waitpid(pid_, &status, WNOHANG);
  if (done == pid_) pid_ = -1;
  return !running();
}

}  // namespace yoke::nats_cluster
