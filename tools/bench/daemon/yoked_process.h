// A yoked child process for the daemon benchmark: started on a data directory with a config
// file, waited for until its query socket answers health, stopped by SIGTERM or SIGKILL.
#pragma once

#include <sys/types.h>

#include <chrono>
#include <filesystem>
#include <string>

#include <zmq.hpp>

namespace yoke::bench {

struct YokedEndpoints {
  std::string ingest, publish, query, metrics;
};

// Loopback TCP endpoints on four consecutive free ports.
YokedEndpoints free_loopback_endpoints();

class YokedProcess {
 public:
  // Starts `binary` with --data-dir and --config; its log goes to data_dir/../yoked.log.
  YokedProcess(const std::filesystem::path& binary, const std::filesystem::path& data_dir,
               const std::filesystem::path& config_file);
  ~YokedProcess();  // SIGKILL if still running
  YokedProcess(const YokedProcess&) = delete;
  YokedProcess& operator=(const YokedProcess&) = delete;

  // Blocks until the daemon answers a health query (or throws after `limit`). Returns the time
  // from the process start to that answer.
  std::chrono::duration<double> wait_ready(zmq::context_t& context, const std::string& query,
                                           std::chrono::seconds limit);
  // Blocks until a summary query of `pool` is answered other than NOT_OWNER (or throws after
  // `limit`): a daemon of a cluster answers health queries before its claim on the pools it
  // owns is stored, and refuses their batches until then (seen on a loaded machine).
  void wait_serving(zmq::context_t& context, const std::string& query, const std::string& pool,
                    std::chrono::seconds limit);
  // SIGTERM (clean: final snapshot) or SIGKILL; waits for the exit and returns its status.
  int stop(bool kill);
  // The child's process id (-1 once stopped), e.g. to read /proc/PID/status.
  pid_t pid() const { return pid_; }

 private:
  pid_t pid_ = -1;
  std::chrono::steady_clock::time_point started_;
};

}  // namespace yoke::bench
