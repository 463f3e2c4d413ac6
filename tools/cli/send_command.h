// `yoke send SCRIPT [--pool P] [--ingest ENDPOINT[,ENDPOINT...]] [--client-id ID]
// [--in-flight N] [--timeout-ms T] [--retries R] [--owner-wait-ms T]`: streams an event script
// to yoked's ingest socket, one EventBatch per commit (events after the last `commit` form one
// more batch, as in replay), and exits 0 once every batch is acknowledged (docs/contracts.md
// §5), printing one line:
//
//     {"pool":P,"batches":N,"events":E,"first_seq":S1,"last_seq":S2,"duplicates":D}
//
// first_seq and last_seq are the pool's sequence numbers of the first and last batch (null for
// a script without batches); duplicates counts batches the daemon had already applied (a
// retry whose first copy had arrived).
//
// The client id defaults to "yoke-send-HOST-PID"; batch numbers start at the current Unix time
// in microseconds and go up by one per batch, so a rerun under the same id sends fresh batches
// while a resend within the run keeps its number and is applied once. With several ingest
// endpoints (a cluster), NOT_OWNER refusals and silent endpoints are followed (batch_sender.h,
// endpoint_route.h): the same batches, same numbers, to the daemon that serves the pool.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include <CLI/CLI.hpp>

#include "client_options.h"
#include "resend_options.h"

namespace yoke::cli {

struct SendOptions {
  std::string script_path;
  std::string pool = kDefaultPool;
  std::vector<std::string> ingest{kDefaultIngestEndpoint};
  std::uint64_t in_flight = 32;
  ResendOptions resend;
};

CLI::App* add_send_command(CLI::App& app, SendOptions& options);

// Returns kExitOk. Throws CliError for a malformed script, a batch the daemon rejects
// ("FILE:LINE: batch K rejected by the daemon: CODE: message", after the batches before it
// are acknowledged) or a reply it cannot read, and UnavailableError when the daemon does not
// acknowledge a batch through every retry or no daemon serves the pool within --owner-wait-ms.
int run_send(const SendOptions& options);

}  // namespace yoke::cli
