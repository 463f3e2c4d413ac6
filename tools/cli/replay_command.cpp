#include "replay_command.h"

#include <iostream>
#include <optional>
#include <utility>
#include <vector>

#include "cli_error.h"
#include "client_options.h"
#include "yoke/pool.h"
#include "file_io.h"
#include "input_files.h"
#include "progress_bar.h"
#include "replay_log.h"
#include "replay_report.h"
#include "replay_why.h"
#include "tools/postmortem/commit_printer.h"
#include "tools/postmortem/commit_verifier.h"
#include "tools/postmortem/replay_driver.h"
#include "tools/postmortem/replay_error.h"
#include "tools/postmortem/replay_stats.h"
#include "tools/postmortem/script_source.h"

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

// The report page (replay_report.h) fed by the replay.
class ReportObserver : public postmortem::CommitObserver {
 public:
  ReportObserver(ReportSource source, std::string path)
      : report_(std::move(source)), path_(std::move(path)) {}
  bool committed(const Pool& pool, const postmortem::CommitStep& step) override {
    if (step.commit.wall_time_us) report_.note_wall_time(*step.commit.wall_time_us);
    report_.record(pool, step.result, step.commit.events.size(), step.repair_ns, step.commit.seq);
    return true;
  }
  void finished(const Pool&, std::uint64_t) override { report_.write(path_); }

 private:
  ReplayReport report_;
  std::string path_;
};

// The progress bar on stderr (progress_bar.h), one step per commit.
class ProgressObserver : public postmortem::CommitObserver {
 public:
  explicit ProgressObserver(std::uint64_t total)
      : bar_(total, "commits", std::cerr, ProgressBar::wanted()) {}
  bool committed(const Pool&, const postmortem::CommitStep&) override {
    bar_.step();
    return true;
  }
  void finished(const Pool&, std::uint64_t) override { bar_.finish(); }
  void stop() { bar_.finish(); }

 private:
  ProgressBar bar_;
};

// The commit lines of one source (the replay's observers as the options ask), after its
// start. Returns kExitCertificateRejected when --verify finds a commit failing (the message is
// on stderr), else kExitOk.
int print_commits(const ReplayOptions& options, postmortem::CommitSource& source, Pool& pool,
                  ReportSource report_source) {
  std::ostream& out = std::cout;
  ProgressObserver progress(source.remaining());
  postmortem::CommitPrinter printer(out, options.diffs);
  postmortem::ReplayStats stats(out);
  std::optional<ReportObserver> report;
  postmortem::CommitVerifier verifier;
  // In this order: the bar ends before the stats are printed, the page is written last.
  std::vector<postmortem::CommitObserver*> observers{&progress, &printer};
  if (options.stats) observers.push_back(&stats);
  if (!options.report.empty()) {
    report.emplace(std::move(report_source), options.report);
    observers.push_back(&*report);
  }
  if (options.verify) observers.push_back(&verifier);
  if (!postmortem::replay(source, pool, observers).completed) {
    progress.stop();
    out.flush();
    std::cerr << "error: " << verifier.failure().value_or("the replay stopped") << "\n";
    return kExitCertificateRejected;
  }
  out.flush();
  if (!out) throw CliError("cannot write the result to stdout");
  return kExitOk;
}

int run_script_replay(const ReplayOptions& options) {
  const Mode mode = parse_mode(options.mode);
  const formats::EventScript script = load_event_script(options.script_path);
  postmortem::ScriptSource source(script, display_name(options.script_path), mode, options.until);
  Pool& pool = source.start();
  return print_commits(options, source, pool,
                       ReportSource{options.script_path, false, options.pool, "event script"});
}

int run_pool_replay(const ReplayOptions& options, ReplayLog& log) {
  const std::unique_ptr<postmortem::LogSource> source = log.read(options, std::cout);
  Pool& pool = source->start();
  if (source->from_snapshot()) {
    std::cout << "note: starting from the snapshot at seq " << source->start_point() << "\n";
  }
  return print_commits(options, *source, pool,
                       ReportSource{log.name(), true, options.pool, log.kind()});
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

int run_checked_replay(const ReplayOptions& options) {
  if (wants_why(options)) return run_why_replay(options);
  if (replays_a_log(options)) return run_journal_replay(options);
  if (options.all_pools) throw CliError("--all-pools applies to a daemon's log, not a script");
  if (options.from != 0) {
    throw CliError(
        "--from applies to a daemon's log (a data directory or --cluster), not a "
        "script");
  }
  return run_script_replay(options);
}

}  // namespace

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
  try {
    return run_checked_replay(options);
  } catch (const postmortem::ReplayError& error) {
    throw CliError(error.what());
  }
}

}  // namespace yoke::cli
