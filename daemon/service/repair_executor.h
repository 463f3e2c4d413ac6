// Where the PoolService runs its pools' repairs: two tasks per sealed window of a pool (stage,
// then repair), several windows of a pool possibly queued, which the executor must run in the
// order given (a strand per pool); it may run those of different pools at once. The service's own
// default runs each task at once, on the caller's thread: tests and the fuzzer that drive the
// service without sockets stay deterministic. The daemon gives worker threads
// (daemon/server/repair_threads.h).
#pragma once

#include <functional>
#include <string>

namespace yoke::daemon {

class RepairExecutor {
 public:
  virtual ~RepairExecutor() = default;
  // Runs `task` (which touches only `pool`'s engine state) now or later, on any thread; the
  // tasks of one pool in the order given. Never throws from a task: the service's tasks catch
  // their own failures.
  virtual void run(const std::string& pool, std::function<void()> task) = 0;
  // `pool` is gone (retired, given up, or refused before it existed) and no task of it is
  // queued or running: what the executor keeps for it may go, or a daemon that sees many
  // short-lived pools would keep something for every name it ever saw. A later run() of the
  // same name starts afresh.
  virtual void forget(const std::string& /*pool*/) {}
};

// Runs every task at once, on the thread that gives it. O(1) beyond the task.
class InlineRepairs final : public RepairExecutor {
 public:
  void run(const std::string& /*pool*/, std::function<void()> task) override { task(); }
};

}  // namespace yoke::daemon
