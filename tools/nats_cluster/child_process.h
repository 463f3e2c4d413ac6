// A child process started by the test, known by its PID, signalled and reaped by that PID only.
#pragma once

#include <sys/types.h>

#include <chrono>
#include <filesystem>
#include <string>
#include <vector>

namespace yoke::nats_cluster {

class ChildProcess {
 public:
  ChildProcess() = default;
  // Starts `argv` (argv[0] looked up in PATH) with stdout and stderr appended to `log_file`.
  // The child gets SIGKILL if the thread that started it dies (PR_SET_PDEATHSIG), so a test
  // that crashes leaves no server behind; start children from the main thread. Throws
  // std::runtime_error when the program cannot be started.
  ChildProcess(const std::vector<std::string>& argv, const std::filesystem::path& log_file);
  // SIGCONT, SIGKILL and reap, if still running.
  ~ChildProcess();
  ChildProcess(ChildProcess&& other) noexcept;
  ChildProcess& operator=(ChildProcess&& other) noexcept;
  ChildProcess(const ChildProcess&) = delete;
  ChildProcess& operator=(const ChildProcess&) = delete;

  pid_t pid() const { return pid_; }
  bool running() const { return pid_ > 0; }

  // kill(pid, signal); a no-op when not running.
  void signal(int signal_number) const;
  // SIGTERM, then SIGKILL if it has not exited after `grace`; reaps it. Returns the wait status
  // (-1 when it was not running).
  int stop(std::chrono::milliseconds grace);
  // SIGKILL and reap (after SIGCONT, so a paused child dies too). Returns the wait status.
  int kill_now();
  // Whether it exited by itself (reaped then); never blocks.
  bool exited();

 private:
  int reap_within(std::chrono::milliseconds limit);
  pid_t pid_ = -1;
};

}  // namespace yoke::nats_cluster
