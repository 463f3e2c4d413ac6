// `yoke retire POOL [--at-seq N] [--ingest ENDPOINT[,ENDPOINT...]] [--client-id ID]
// [--timeout-ms T] [--retries R] [--owner-wait-ms T]`: retires (deletes) a pool of yoked
// (RetirePool in proto/yoke/v1/ingest.proto) and exits 0 once the daemon has made the
// retirement durable, printing one line:
//
//     {"pool":P,"retired_at_seq":S}
//
// S is the retirement's own seq (the pool's last seq + 1), which the pool's last diff carries.
// With --at-seq N the daemon retires the pool only if its last seq is N (SEQ_MISMATCH else).
// Refusals exit 2 with the daemon's code: UNKNOWN_POOL (no such pool: never created, or
// retired already, also by an earlier attempt of this command whose reply was lost),
// SEQ_MISMATCH, RETIRE_NOT_SUPPORTED (a daemon of a cluster). Silence and UNAVAILABLE are
// retried as `yoke send` retries a batch (batch_sender.h).
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include <CLI/CLI.hpp>

#include "client_options.h"
#include "resend_options.h"

namespace yoke::cli {

struct RetireOptions {
  std::string pool;
  std::uint64_t at_seq = 0;
  std::vector<std::string> ingest{kDefaultIngestEndpoint};
  ResendOptions resend;
};

CLI::App* add_retire_command(CLI::App& app, RetireOptions& options);

// Returns kExitOk. Throws CliError when the daemon refuses (naming its code and message) or
// answers what this client cannot read, UnavailableError when it stays silent through every
// retry.
int run_retire(const RetireOptions& options);

}  // namespace yoke::cli
