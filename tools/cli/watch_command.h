// `yoke watch [--pool P] [--publish ENDPOINT[,ENDPOINT...]] [--count N] [--catch-up]
// [--query ENDPOINT[,ENDPOINT...]] [--timeout-ms T] [--owner-wait-ms T]`: subscribes to a
// pool's diffs on yoked's publication socket and prints one JSON object per diff, one per line,
// flushed at once (layout in proto_json.h):
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
//
// Several publish endpoints (a cluster): it subscribes to all of them, since a pool's diffs
// come from whichever daemon serves it, and a new server may publish again diffs its
// predecessor had published. A diff is known by (pool, seq): each is printed once, in seq
// order; one that does not follow the last printed waits up to kReorderWait for the diffs
// between (from another daemon) before the gap counts as one (without --catch-up: a note on
// stderr, "note: pool P: diff S follows seq ..., but the last seq printed is ...").
//
// --cluster URL[,URL...] [--stream S] [--subject-prefix P] [--from-seq N] (issue 12): the
// diffs come from the cluster's JetStream stream instead (cluster_diff_reader.h: the pool's
// subject "<P>.diff.<pool>", stored by whichever daemon serves the pool), printed the same
// way and checked the same way as from several publish endpoints: a seq already printed is
// dropped, one that skips seqs waits kReorderWait and then counts as a gap (a note on stderr,
// or a new catch-up with --catch-up). Without --from-seq only diffs stored from now on are
// printed; with it, every diff still stored from seq N on (the stream keeps a pool's diffs
// from its oldest snapshot kept), so a watcher that stopped resumes where it left off, across
// failovers of the daemons.
#pragma once

#include <chrono>
#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include <CLI/CLI.hpp>

#include "client_options.h"
#include "cluster_log.h"

namespace yoke::cli {

struct WatchOptions {
  std::string pool = kDefaultPool;
  std::vector<std::string> publish{kDefaultPublishEndpoint};
  std::vector<std::string> query{kDefaultQueryEndpoint};  // --catch-up only
  std::uint64_t count = 0;                    // 0: until a signal
  bool catch_up = false;
  std::uint64_t timeout_ms = 0;  // 0: no timeout
  std::uint64_t owner_wait_ms = kDefaultOwnerWaitMs;  // --catch-up's queries
  // --cluster: read the diffs from the cluster's stream instead of the PUB sockets.
  ClusterLogOptions cluster;
  std::optional<std::uint64_t> from_seq;  // --cluster: start at this seq (else: new diffs)
};

// With several publish endpoints: how long a diff that does not follow the last one printed
// waits for the diffs between.
inline constexpr std::chrono::milliseconds kReorderWait{300};

CLI::App* add_watch_command(CLI::App& app, WatchOptions& options);

// Returns kExitOk after --count diffs or a signal. Throws UnavailableError when --timeout-ms
// passes without a publication (or the catch-up query gets no reply), CliError for a
// publication or reply this client cannot read.
int run_watch(const WatchOptions& options);

}  // namespace yoke::cli
