// The options of the commands that send requests to the ingest socket and resend them until
// answered (`yoke send`, `yoke retire`): the client id, the silence before a resend, how many
// resends, how long to follow a pool's owner; and the sender's settings they give.
#pragma once

#include <cstdint>
#include <string>

#include <CLI/CLI.hpp>

#include "batch_sender.h"
#include "client_options.h"

namespace yoke::cli {

struct ResendOptions {
  std::string client_id;  // empty: yoke-COMMAND-HOST-PID
  std::uint64_t timeout_ms = 5000;
  unsigned retries = 5;
  std::uint64_t owner_wait_ms = kDefaultOwnerWaitMs;
};

// Each command's wording of the options in its --help.
struct ResendHelp {
  std::string client_id;
  std::string timeout;
  std::string retries;
};

// --client-id, --timeout-ms, --retries and --owner-wait-ms, in that order.
void add_resend_options(CLI::App& command, ResendOptions& options, const ResendHelp& help);

// The sender's settings: `options`' client id or yoke-COMMAND-HOST-PID, batch numbers from the
// current Unix time in microseconds (a restarted command never reuses a number), one request in
// flight (the caller raises it).
SenderSettings sender_settings(const ResendOptions& options, const std::string& command);

}  // namespace yoke::cli
