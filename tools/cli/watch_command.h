// `yoke watch [--pool P] [--publish ENDPOINT] [--count N] [--catch-up] [--query ENDPOINT]
// [--timeout-ms T]`: subscribes to a pool's diffs on yoked's publication socket and prints one
// JSON object per diff, one per line, flushed at once (layout in proto_json.h):
//
//     {"pool","seq","prev_seq","weight","pairs","no_perfect_matching","removed":[[a,b,w],...],
//      "added":[[a,b,w],...],"repair_us","commit_to_publish_us","publish_unix_us","stats":{...}}
//
// It stops after N diffs (exit 0), on SIGINT or SIGTERM (exit 0), or when no publication for
// the pool arrives within T ms (exit 4; T = 0, the default, waits for ever).
//
// --catch-up follows publish.proto's recipe for a late subscriber: subscribe, then fetch the
// whole matching from the query socket and print it as one line with "catch_up": true (layout
// of Matching; a pool that does not exist yet is the empty matching at seq 0), then print only
// the diffs after its seq, each checked to start where the last one ended (prev_seq). On a gap
// it prints a note on stderr ("note: pool P: diff S follows seq ...") and catches up again.
#pragma once

#include <cstdint>
#include <string>

#include <CLI/CLI.hpp>

#include "client_options.h"

namespace yoke::cli {

struct WatchOptions {
  std::string pool = kDefaultPool;
  std::string publish = kDefaultPublishEndpoint;
  std::string query = kDefaultQueryEndpoint;  // --catch-up only
  std::uint64_t count = 0;                    // 0: until a signal
  bool catch_up = false;
  std::uint64_t timeout_ms = 0;  // 0: no timeout
};

CLI::App* add_watch_command(CLI::App& app, WatchOptions& options);

// Returns kExitOk after --count diffs or a signal. Throws UnavailableError when --timeout-ms
// passes without a publication (or the catch-up query gets no reply), CliError for a
// publication or reply this client cannot read.
int run_watch(const WatchOptions& options);

}  // namespace yoke::cli
