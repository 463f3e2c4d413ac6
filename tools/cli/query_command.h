// `yoke query KIND [--pool P] [--query ENDPOINT[,ENDPOINT...]] [--vertex V] [--alternatives N]
// [--all-pools] [--text] [--timeout-ms T] [--owner-wait-ms T]`: asks yoked's query socket one
// question and prints the answer as one JSON object (layouts in proto_json.h). KIND is one of
//
//     summary    seq, weight, pairs, vertices, edges, mode, no_perfect_matching
//     mate       --vertex V: its mate and the pair's weight (both null when exposed)
//     matching   every pair as [a, b, weight] (`matching`) and their count (`pairs`), with the
//                seq they describe
//     explain    --vertex V [--alternatives N] [--text]: its price and its nearest
//                alternatives, in the shape `yoke replay --explain --json` prints
//                (explanation_text.h; --text: the same in sentences)
//     stats      the pool's counters, limits and last repair
//     snapshot   write a snapshot now (--all-pools: of every pool)
//     health     whether the daemon serves
//
// A reply of kind error is printed as "error: CODE_NAME: message" (exit 2); no reply within
// the timeout is exit 4. With several query endpoints (a cluster), a NOT_OWNER refusal is
// followed to the daemon that serves the pool (endpoint_route.h).
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include <CLI/CLI.hpp>

#include "client_options.h"

namespace yoke::cli {

struct QueryOptions {
  std::string kind;
  std::string pool = kDefaultPool;
  std::vector<std::string> endpoints{kDefaultQueryEndpoint};
  std::optional<std::uint64_t> vertex;  // mate and explain
  std::uint32_t alternatives = 0;       // explain: alternatives at most; 0 the daemon's default
  bool all_pools = false;               // snapshot
  bool text = false;                    // explain: in words (explanation_text.h), not JSON
  std::uint64_t timeout_ms = 5000;
  std::uint64_t owner_wait_ms = kDefaultOwnerWaitMs;
};

CLI::App* add_query_command(CLI::App& app, QueryOptions& options);

// Returns kExitOk. Throws CliError for an option that does not fit KIND, for a reply of kind
// error ("CODE_NAME: message") or one of the wrong kind, UnavailableError when no reply comes.
int run_query(const QueryOptions& options);

}  // namespace yoke::cli
