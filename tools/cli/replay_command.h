// `yoke replay SCRIPT [--mode M] [--verify] [--stats] [--diffs]`: feeds an event script to a
// pool batch by batch and prints one line per commit (docs/contracts.md §3). The options and
// the choice of source and observers are here; the replay itself is the postmortem library's
// (tools/postmortem/replay_driver.h: one loop, sources, observers):
//
//     commit I weight W pairs K repair_us T
//
// with, in this order after it: `note: commit I: no perfect matching (K pairs for N vertices)`
// (perfect mode only), and with --diffs one `- A B` per removed pair then one `+ A B` per added
// pair (A < B, sorted). With --stats, summary lines follow the last commit:
//
//     stats commits N events E
//     stats repair_us p50 A p90 B p99 C max D
//     stats searches_per_commit mean X max Y
//     stats touched_per_commit mean X p99 Y max Z
//     stats events_per_second X
//
// repair_us is the time of Pool::commit alone (not the check, not --verify), in whole
// microseconds. Percentiles are nearest-rank, means have two decimals, events_per_second is
// all events over all repair time. Only the timings vary between runs of the same script.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include <CLI/CLI.hpp>

#include "cluster_log.h"
#include "yoke/pool.h"
#include "input_files.h"

namespace yoke::cli {

struct ReplayOptions {
  std::string script_path;
  std::string mode = "max-weight";
  bool verify = false;  // check the certificate after every commit
  bool stats = false;   // summary lines at the end
  bool diffs = false;   // the pairs each commit removed and added
  std::string pool = "default";  // which pool of a journal directory
  // Stop after the last commit whose seq (a script: commit number) is at most `until`; journal
  // directories only: start from the newest snapshot of the pool at or before `from` (0: none asked for).
  std::uint64_t until = 0;
  std::uint64_t from = 0;
  // --report FILE.html: a self-contained page of charts about the replay (replay_report.h).
  std::string report;
  // Postmortem questions (replay_why.h): --history V histories, --explain V explanations with
  // at most `alternatives` alternatives, --json answers.
  std::vector<std::uint64_t> history_vertices;
  std::vector<std::uint64_t> explain_vertices;
  std::size_t alternatives = 5;
  bool json = false;
  // --cluster URL[,URL...] --stream NAME --subject-prefix P: read the pool's log from a
  // cluster's JetStream stream instead of SCRIPT (cluster_log.h).
  ClusterLogOptions cluster;
  // A daemon's log only: every pool it holds, in name order, each after a line "pool P".
  bool all_pools = false;
};

// Whether the replay reads a daemon's log (a data directory, or a cluster's with --cluster)
// rather than an event script.
bool replays_a_log(const ReplayOptions& options);

CLI::App* add_replay_command(CLI::App& app, ReplayOptions& options);

// Returns kExitOk, or kExitCertificateRejected when --verify finds a commit whose certificate
// fails (the message is on stderr). Throws CliError for an unreadable or malformed script and
// for a batch the pool rejects ("FILE:LINE: why", nothing of that batch applied).
int run_replay(const ReplayOptions& options);

}  // namespace yoke::cli
