// The lifetime of libnats itself. libnats starts process-wide threads (timers, asynchronous
// callbacks, garbage collection) on first use and keeps them until nats_Close; a process that
// wants to end with none of them running (a leak checker, a clean exit) holds one NatsLibrary
// in main() for as long as it uses daemon/cluster.
#pragma once

#include <chrono>

namespace yoke::cluster {

class NatsLibrary {
 public:
  // nats_Open: starts the library (cost: a few threads). Throws ClusterError if it cannot.
  NatsLibrary();
  // nats_CloseAndWait: stops the library's threads and frees its memory, waiting up to
  // `shutdown_limit` (set in the constructor). Every connection, subscription and message must
  // be released first, and this must not run on a libnats thread.
  ~NatsLibrary();
  NatsLibrary(const NatsLibrary&) = delete;
  NatsLibrary& operator=(const NatsLibrary&) = delete;

  explicit NatsLibrary(std::chrono::milliseconds shutdown_limit);

 private:
  std::chrono::milliseconds shutdown_limit_{5000};
};

}  // namespace yoke::cluster
