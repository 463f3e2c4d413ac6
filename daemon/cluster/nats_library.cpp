#include "nats_library.h"

#include <cstdio>

#include <nats/nats.h>

#include "cluster_error.h"

namespace yoke::cluster {

NatsLibrary::NatsLibrary() : NatsLibrary(std::chrono::milliseconds(5000)) {}

NatsLibrary::NatsLibrary(std::chrono::milliseconds shutdown_limit)
    : shutdown_limit_(shutdown_limit) {
  throw_on_failure(nats_Open(-1), "cannot start libnats");
}

NatsLibrary::~NatsLibrary() {
  const natsStatus status = nats_CloseAndWait(shutdown_limit_.count());
  if (status != NATS_OK) {
    // A destructor cannot throw; a leftover object keeps the library's threads alive.
    std::fprintf(stderr, "libnats did not shut down cleanly: %s\n", natsStatus_GetText(status));
  }
}

}  // namespace yoke::cluster
