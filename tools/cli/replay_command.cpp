#include "replay_command.h"

#include <algorithm>
#include <charconv>
#include <chrono>
#include <cmath>
#include <filesystem>
#include <span>
#include <iostream>
#include <optional>
#include <set>
#include <utility>
#include <vector>

#include "certified_matching.h"
#include "cli_error.h"
#include "client_options.h"
#include "yoke/certificate.h"
#include "yoke/pool.h"
#include "file_io.h"
#include "input_files.h"
#include "journal_commits.h"
#include "progress_bar.h"
#include "replay_log.h"
#include "replay_report.h"
#include "replay_why.h"

namespace yoke::cli {
namespace {

constexpr const char* kScriptHelp =
    "Script: one event per line; blank lines and '#' comments are ignored.\n"
    "  add U        add vertex U, with no edges yet\n"
    "  set U V W    insert edge {U,V} or change its weight (adds U and V if new)\n"
    "  unset U V    remove edge {U,V}; U and V stay\n"
    "  remove U     remove vertex U and all its edges\n"
    "  hold U V     match U with V from now on, whatever the weights (edge {U,V} must exist;\n"
    "               until release, unset of the edge or removal of U or V)\n"
    "  release U V  the held pair {U,V} is optimised again\n"
    "  commit       end of a batch: repair the optimum and report it\n"
    "Ids are unsigned 64-bit, W signed 64-bit. Events after the last commit are committed at\n"
    "the end of the file. A batch the pool rejects stops the replay (exit 2) before any of it\n"
    "is applied.\n"
    "Output, per commit I (from 1):\n"
    "  commit I weight W pairs K repair_us T\n"
    "  (from a journal directory or a cluster the line ends in `seq S`, the pool's sequence\n"
    "  number)\n"
    "  note: commit I: no perfect matching (K pairs for N vertices)    [perfect mode]\n"
    "  - A B / + A B    pairs removed, then added (A < B, sorted)     [--diffs]\n"
    "and after the last commit with --stats:\n"
    "  stats commits N events E\n"
    "  stats repair_us p50 A p90 B p99 C max D\n"
    "  stats searches_per_commit mean X max Y\n"
    "  stats touched_per_commit mean X p99 Y max Z\n"
    "  stats events_per_second X\n"
    "Only the timings differ between runs.\n"
    "A cluster's log (yoked with [cluster] backend = \"jetstream\"): instead of SCRIPT,\n"
    "  --cluster nats://HOST:PORT[,...] [--stream NAME] [--subject-prefix P] --pool P\n"
    "replays pool P from the installation's JetStream stream (the windows the log counts, from\n"
    "its snapshots as a data directory's), with the same output and options.\n"
    "--all-pools (a data directory or a cluster) replays every pool of the log in name order,\n"
    "each after a line `pool P` (with --stats, each pool's own stats lines).";

using KeyPair = std::pair<VertexKey, VertexKey>;

// Sized to the whole script: every id it mentions may be alive at once, and the largest |W|
// it sets is the bound (the smallest bound keeps max-cardinality's offset exact the longest).
PoolLimits limits_for(const formats::EventScript& script) {
  PoolLimits limits;
  limits.max_vertices = std::max<std::size_t>(2, script.distinct_vertices);
  const auto largest = std::min<std::uint64_t>(script.largest_abs_weight, kMaxAbsWeight);
  limits.max_abs_weight = std::max<Weight>(1, static_cast<Weight>(largest));
  return limits;
}

// A pool for the script. When the script's weights are beyond what the mode keeps exact, the
// pool takes the mode's largest bound instead, so that Pool::check names the offending line.
Pool make_pool(Mode mode, const formats::EventScript& script, const std::string& path) {
  PoolLimits limits = limits_for(script);
  try {
    return Pool(mode, limits);
  } catch (const InputError&) {
  }
  limits.max_abs_weight = 0;
  try {
    return Pool(mode, limits);
  } catch (const InputError& error) {
    throw CliError(display_name(path) + ": " + error.what());
  }
}

// --verify: the diffs must add up to the certificate's matching, and the certificate must hold.
class CommitVerifier {
 public:
  // The matching the later diffs apply to, when the replay does not start from empty.
  void start_from(const std::vector<MatchedPair>& pairs) {
    for (const MatchedPair& pair : pairs) matched_.insert({pair.a, pair.b});
  }

  // The reason the commit fails verification, or nothing.
  std::optional<std::string> check(const Pool& pool, const CommitResult& result) {
    if (auto problem = apply_diff(result.diff)) return problem;
    const PoolExport exported = pool.export_certified();
    const CheckResult verdict = check_certificate(exported.graph, exported.certificate);
    if (!verdict.ok) return verdict.failure;

    const CertifiedMatching certified = certified_matching(exported);
    if (certified.pairs.size() != result.pairs) {
      return "the certificate's matching has " + std::to_string(certified.pairs.size()) +
             " pairs, the commit reported " + std::to_string(result.pairs);
    }
    if (certified.weight != result.weight) {
      return "the certificate's matching weighs " + int128_text(certified.weight) +
             ", the commit reported " + std::to_string(result.weight);
    }
    if (!std::equal(certified.pairs.begin(), certified.pairs.end(), matched_.begin(),
                    matched_.end())) {
      return std::string("the certificate's matching differs from the one the diffs add up to");
    }
    return std::nullopt;
  }

 private:
  std::optional<std::string> apply_diff(const MatchingDiff& diff) {
    for (const MatchedPair& pair : diff.removed) {
      if (matched_.erase({pair.a, pair.b}) == 0) {
        return "the diff removes " + text(pair) + ", which was not matched";
      }
    }
    for (const MatchedPair& pair : diff.added) {
      if (!matched_.insert({pair.a, pair.b}).second) {
        return "the diff adds " + text(pair) + ", which was already matched";
      }
    }
    return std::nullopt;
  }

  static std::string text(const MatchedPair& pair) {
    return "pair " + std::to_string(pair.a) + " " + std::to_string(pair.b);
  }

  std::set<KeyPair> matched_;  // the matching the diffs so far add up to
};

// --stats: per-commit numbers kept for percentiles, totals for the rates.
class ReplayStats {
 public:
  void record(const CommitResult& result, std::size_t events, std::uint64_t repair_ns) {
    repair_us_.push_back(repair_ns / 1000);
    searches_.push_back(result.stats.searches);
    touched_.push_back(result.stats.vertices_touched);
    events_ += events;
    repair_ns_ += repair_ns;
  }

  void print(std::ostream& out) {
    std::sort(repair_us_.begin(), repair_us_.end());
    std::sort(searches_.begin(), searches_.end());
    std::sort(touched_.begin(), touched_.end());
    out << "stats commits " << repair_us_.size() << " events " << events_ << '\n';
    out << "stats repair_us p50 " << percentile(repair_us_, 50) << " p90 "
        << percentile(repair_us_, 90) << " p99 " << percentile(repair_us_, 99) << " max "
        << percentile(repair_us_, 100) << '\n';
    out << "stats searches_per_commit mean " << mean(searches_) << " max "
        << percentile(searches_, 100) << '\n';
    out << "stats touched_per_commit mean " << mean(touched_) << " p99 "
        << percentile(touched_, 99) << " max " << percentile(touched_, 100) << '\n';
    const double per_second =
        events_ == 0 ? 0.0
                     : static_cast<double>(events_) * 1e9 /
                           static_cast<double>(std::max<std::uint64_t>(repair_ns_, 1));
    out << "stats events_per_second " << std::llround(per_second) << '\n';
  }

 private:
  // Nearest rank: the smallest value with at least p% of the list at or below it. 0 if empty.
  static std::uint64_t percentile(const std::vector<std::uint64_t>& sorted, std::uint64_t p) {
    if (sorted.empty()) return 0;
    const std::uint64_t rank = std::max<std::uint64_t>(1, (p * sorted.size() + 99) / 100);
    return sorted[rank - 1];
  }

  // With two decimals; 0.00 if empty.
  static std::string mean(const std::vector<std::uint64_t>& values) {
    double sum = 0;
    for (const std::uint64_t v : values) sum += static_cast<double>(v);
    const double value = values.empty() ? 0.0 : sum / static_cast<double>(values.size());
    char text[64];
    const auto end = std::to_chars(text, text + sizeof text, value, std::chars_format::fixed, 2);
    return std::string(text, end.ptr);
  }

  std::vector<std::uint64_t> repair_us_;
  std::vector<std::uint64_t> searches_;
  std::vector<std::uint64_t> touched_;
  std::uint64_t events_ = 0;
  std::uint64_t repair_ns_ = 0;
};

void print_diff(std::ostream& out, const MatchingDiff& diff) {
  for (const MatchedPair& pair : diff.removed) out << "- " << pair.a << ' ' << pair.b << '\n';
  for (const MatchedPair& pair : diff.added) out << "+ " << pair.a << ' ' << pair.b << '\n';
}

}  // namespace

CLI::App* add_replay_command(CLI::App& app, ReplayOptions& options) {
  CLI::App* command = app.add_subcommand(
      "replay", "Replay an event script through an incremental pool, one line per commit");
  command->add_option("SCRIPT", options.script_path,
                      "Event-script file, - for stdin, or a yoked data or journal directory "
                      "(none with --cluster)");
  command->add_option("--mode", options.mode, "What to optimise")
      ->check(CLI::IsMember({"max-weight", "max-cardinality", "perfect"}))
      ->capture_default_str();
  command->add_flag("--verify", options.verify,
                    "Check the optimality certificate after every commit (exit 1 if one fails)");
  command->add_flag("--stats", options.stats, "Print summary lines after the last commit");
  command->add_flag("--diffs", options.diffs, "Print the pairs each commit removed and added");
  command->add_option("--until", options.until,
                      "Stop at the state after seq SEQ (the last commit ending at or before it); "
                      "for a script, after commit SEQ");
  command->add_option("--from", options.from,
                      "Journal: start from the newest snapshot at or before seq SEQ");
  command->add_option("--pool", options.pool,
                      "Which pool of a journal directory to replay (--mode is then the pool's own)")
      ->capture_default_str();
  command->add_flag("--all-pools", options.all_pools,
                    "A daemon's log: replay every pool it holds, in name order, each after a "
                    "line 'pool P'");
  command
      ->add_option("--cluster", options.cluster.servers,
                   "Replay --pool from a cluster's JetStream stream instead of SCRIPT: its NATS "
                   "servers, a comma-separated list or the option repeated")
      ->delimiter(',')
      ->type_name("URL")
      ->check(kNotEmpty);
  command
      ->add_option("--stream", options.cluster.stream,
                   "With --cluster: the installation's stream ([cluster] stream)")
      ->capture_default_str();
  command
      ->add_option("--subject-prefix", options.cluster.subject_prefix,
                   "With --cluster: the stream's subject prefix ([cluster] subject_prefix)")
      ->capture_default_str();
  command->add_option("--report", options.report,
                      "Also write a self-contained HTML page of charts about the replay to FILE "
                      "(needs Debian's libjs-chart.js)")
      ->type_name("FILE.html");
  command->footer(kScriptHelp);
  add_why_options(*command, options);
  return command;
}

namespace {

// The commit loop both sources share: repair, print, and optionally verify and count.
class ReplayRun {
 public:
  ReplayRun(const ReplayOptions& options, std::ostream& out, ReportSource source)
      : options_(options), out_(out) {
    if (!options.report.empty()) report_.emplace(std::move(source));
  }

  // A progress bar on stderr over `total` commits, when stderr is a terminal (progress_bar.h).
  void show_progress(std::uint64_t total) {
    progress_.emplace(total, "commits", std::cerr, ProgressBar::wanted());
  }
  // --report: the wall-clock time of the next commit (journal replays).
  void note_wall_time(std::uint64_t unix_us) {
    if (report_) report_->note_wall_time(unix_us);
  }

  // Commits one batch (already checked) and prints its lines. Returns kExitCertificateRejected
  // when --verify finds the certificate failing (the message is on stderr), else nothing.
  // `seq`: the pool's sequence number after this commit, printed for journal replays.
  std::optional<int> commit(Pool& pool, std::span<const Event> events,
                            std::optional<std::uint64_t> seq = std::nullopt) {
    ++index_;
    const auto start = std::chrono::steady_clock::now();
    const CommitResult result = pool.commit(events);
    const auto repair_ns = static_cast<std::uint64_t>(
        std::chrono::duration_cast<std::chrono::nanoseconds>(std::chrono::steady_clock::now() -
                                                             start)
            .count());

    out_ << "commit " << index_ << " weight " << result.weight << " pairs " << result.pairs
         << " repair_us " << repair_ns / 1000;
    if (seq) out_ << " seq " << *seq;
    out_ << '\n';
    if (result.status == SolveStatus::no_perfect_matching) {
      out_ << "note: commit " << index_ << ": no perfect matching (" << result.pairs
           << " pairs for " << pool.vertex_count() << " vertices)\n";
    }
    if (options_.diffs) print_diff(out_, result.diff);
    if (options_.stats) stats_.record(result, events.size(), repair_ns);
    if (report_) report_->record(pool, result, events.size(), repair_ns, seq);
    if (progress_) progress_->step();
    if (options_.verify) {
      if (const auto failure = verifier_.check(pool, result)) {
        if (progress_) progress_->finish();
        out_.flush();
        std::cerr << "error: commit " << index_ << ": certificate check failed: " << *failure
                  << "\n";
        return kExitCertificateRejected;
      }
    }
    return std::nullopt;
  }

  // After a snapshot start: the diffs of later commits apply to the restored matching.
  void start_from(const Pool& pool) { verifier_.start_from(pool.matching()); }

  int finish() {
    if (progress_) progress_->finish();
    if (options_.stats) stats_.print(out_);
    if (report_) report_->write(options_.report);
    out_.flush();
    if (!out_) throw CliError("cannot write the result to stdout");
    return kExitOk;
  }

 private:
  const ReplayOptions& options_;
  std::ostream& out_;
  CommitVerifier verifier_;
  ReplayStats stats_;
  std::optional<ReplayReport> report_;
  std::optional<ProgressBar> progress_;
  std::uint64_t index_ = 0;
};

int run_script_replay(const ReplayOptions& options) {
  const Mode mode = parse_mode(options.mode);
  const formats::EventScript script = load_event_script(options.script_path);
  Pool pool = make_pool(mode, script, options.script_path);
  ReplayRun run(options, std::cout,
                ReportSource{options.script_path, false, options.pool, "event script"});
  run.show_progress(batches_until(script, options.until).size());
  for (const formats::ScriptBatch& batch : batches_until(script, options.until)) {
    if (const auto rejected = pool.check(batch.events)) {
      throw CliError(display_name(options.script_path) + ":" +
                     std::to_string(batch.lines[rejected->index]) + ": " + rejected->message);
    }
    if (const auto failed = run.commit(pool, batch.events)) return *failed;
  }
  return run.finish();
}

int run_pool_replay(const ReplayOptions& options, ReplayLog& log) {
  JournalCommits& journal = log.read(options.pool, false);
  std::unique_ptr<Pool> pool = journal.start(options.from);
  ReplayRun run(options, std::cout, ReportSource{log.name(), true, options.pool, log.kind()});
  if (const auto snapshot = journal.snapshot_seq()) {
    std::cout << "note: starting from the snapshot at seq " << *snapshot << "\n";
    run.start_from(*pool);
  }
  run.show_progress(journal.remaining());
  while (const daemon::CommitGroup* group = journal.next()) {
    if (options.until != 0 && group->records.back().seq() > options.until) {
      if (group->records.front().seq() <= options.until) {
        std::cout << "note: seq " << options.until << " was committed together with seqs up to "
                  << group->records.back().seq() << ": stopping before that commit\n";
      }
      break;
    }
    if (const auto rejected = pool->check(group->events)) {
      throw CliError(log.name() + ": pool " + options.pool + " seq " +
                     std::to_string(group->records.front().seq()) +
                     ": the journal holds an event that does not apply: " + rejected->message);
    }
    run.note_wall_time(group->records.back().wall_time_unix_us());
    if (const auto failed = run.commit(*pool, group->events, group->records.back().seq())) {
      return *failed;
    }
  }
  return run.finish();
}

int run_journal_replay(const ReplayOptions& options) {
  ReplayLog log(options);
  if (!options.all_pools) return run_pool_replay(options, log);
  if (!options.report.empty()) {
    throw CliError("--report draws one pool: name it with --pool P instead of --all-pools");
  }
  const std::vector<std::string> pools = log.pools();
  if (pools.empty()) throw CliError(log.name() + ": the log holds no pool");
  ReplayOptions one = options;
  for (const std::string& pool : pools) {
    one.pool = pool;
    std::cout << "pool " << pool << '\n';
    if (const int code = run_pool_replay(one, log); code != kExitOk) return code;
  }
  return kExitOk;
}

}  // namespace

Pool make_script_pool(Mode mode, const formats::EventScript& script, const std::string& path) {
  return make_pool(mode, script, path);
}

void check_source(const ReplayOptions& options) {
  if (options.cluster.servers.empty() && options.script_path.empty()) {
    throw CliError("replay needs SCRIPT (a script or a data directory) or --cluster URL");
  }
  if (!options.cluster.servers.empty() && !options.script_path.empty()) {
    throw CliError("--cluster replays a cluster's log: it takes no SCRIPT ('" +
                   options.script_path + "')");
  }
}

int run_replay(const ReplayOptions& options) {
  check_source(options);
  if (wants_why(options)) return run_why_replay(options);
  if (replays_a_log(options)) return run_journal_replay(options);
  if (options.all_pools) throw CliError("--all-pools applies to a daemon's log, not a script");
  if (options.from != 0) {
    throw CliError("--from applies to a daemon's log (a data directory or --cluster), not a "
                   "script");
  }
  return run_script_replay(options);
}

}  // namespace yoke::cli
