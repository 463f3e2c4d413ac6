#include "replay_why.h"

#include <algorithm>
#include <filesystem>
#include <iostream>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "cli_error.h"
#include "yoke/pool.h"
#include "explanation_text.h"
#include "file_io.h"
#include "journal_commits.h"
#include "number_options.h"
#include "proto_json.h"
#include "replay_log.h"
#include "vertex_history.h"

namespace yoke::cli {
namespace {

constexpr const char* kWhyHelp =
    "Postmortem questions (instead of the commit lines):\n"
    "  --history V   the history of V: when it was added and removed, every pair it gained and\n"
    "                lost, each with its cause (the event of the batch the engine traced the\n"
    "                change to, in script words, with its seq, client and batch number, or its\n"
    "                script line), and its partners 'from A to B' (gained at A, lost at B)\n"
    "  --explain V   V in the state where the replay stops (--until SEQ picks it): its pair and\n"
    "                the pair's weight, its price, and its closest alternatives (--alternatives\n"
    "                N, default 5) with their slack: how much more weight each would need\n"
    "Points are the pool's seq numbers for a journal, commit numbers for a script; both\n"
    "options may be repeated. With --json, one object per line:\n"
    "  {\"kind\":\"history\",\"vertex\",\"pool\" (null: script),\"unit\":\"seq\"|\"commit\",\n"
    "   \"start\":STATE,\"changes\":[{\"first\",\"at\",\"change\":\"added\"|\"removed\"|\n"
    "   \"pair_gained\"|\"pair_lost\",\"other\",\"weight\",\"cause\":CAUSE},...],\n"
    "   \"partners\":[{\"other\",\"weight\",\"from\",\"from_start\",\"to\" (null: still)},...],\n"
    "   \"end\":STATE}\n"
    "  STATE: {\"at\" (0: before the first commit),\"present\",\"mate\",\"pair_weight\"}\n"
    "  CAUSE: {\"kind\":\"event\",\"index\",\"event\":\"set 2 3 9\",\"seq\",\"client_id\",\n"
    "   \"client_batch\"} (a script: \"line\" instead of the last three) | {\"kind\":\n"
    "   \"first_solve\"} | {\"kind\":\"batch\",\"events\"} (no cause reported)\n"
    "  {\"kind\":\"explanation\",\"pool\",\"unit\",\"at\"} and the explanation keys, as\n"
    "  `yoke query explain` prints them (an absent vertex has only \"vertex\" and\n"
    "  \"present\":false):\n";

// Where the replay stands: what the questions are asked about.
struct WhySource {
  HistoryUnit unit = HistoryUnit::seq;
  std::optional<std::string> pool;  // journal replays
  std::string where;                // "pool P" or the script's name, for the text headers
};

// Prints the answers once the replay has stopped at `at`.
void print_answers(const ReplayOptions& options, const WhySource& source,
                   const HistoryBuilder& histories, const Pool& pool, std::uint64_t at) {
  std::ostream& out = std::cout;
  const std::string point =
      at == 0 ? std::string("the start")
              : (source.unit == HistoryUnit::seq ? "seq " : "commit ") + std::to_string(at);
  bool first = true;
  for (const VertexHistory& history : histories.histories()) {
    if (options.json) {
      out << json_line(history_json(history, source.pool)) << '\n';
    } else {
      if (!first) out << '\n';
      out << history_text(history, source.where);
    }
    first = false;
  }
  for (const VertexKey vertex : options.explain_vertices) {
    const auto explanation = pool.explain(vertex, options.alternatives);
    if (options.json) {
      Json head{{"kind", "explanation"},
                {"pool", source.pool ? Json(*source.pool) : Json(nullptr)},
                {"unit", source.unit == HistoryUnit::seq ? "seq" : "commit"},
                {"at", at}};
      if (explanation) {
        head.update(vertex_explanation_json(vertex, *explanation));
      } else {
        head["vertex"] = vertex;
        head["present"] = false;
      }
      out << json_line(head) << '\n';
    } else {
      if (!first) out << '\n';
      out << "explain " << vertex << " at " << point << " (" << source.where << "):\n";
      if (explanation) {
        out << explanation_text(vertex, *explanation);
      } else {
        out << vertex << " is not in the pool at " << point << ".\n";
      }
    }
    first = false;
  }
  out.flush();
  if (!out) throw CliError("cannot write the result to stdout");
}

// Notes on the way (a start from a snapshot, a seq inside a commit): on stdout with the text
// answers, on stderr with --json so that stdout stays one object per line.
std::ostream& note_stream(const ReplayOptions& options) {
  return options.json ? std::cerr : std::cout;
}

int run_script(const ReplayOptions& options) {
  const Mode mode = parse_mode(options.mode);
  const formats::EventScript script = load_event_script(options.script_path);
  Pool pool = make_script_pool(mode, script, options.script_path);
  const WhySource source{HistoryUnit::commit, std::nullopt, display_name(options.script_path)};
  HistoryBuilder histories(options.history_vertices, HistoryUnit::commit);
  histories.start(pool, 0);
  std::uint64_t at = 0;
  for (const formats::ScriptBatch& batch : batches_until(script, options.until)) {
    if (const auto rejected = pool.check(batch.events)) {
      throw CliError(display_name(options.script_path) + ":" +
                     std::to_string(batch.lines[rejected->index]) + ": " + rejected->message);
    }
    ++at;
    const CommitResult result = pool.commit(batch.events);
    ReplayedCommit commit{at, at, batch.events, [&batch](std::size_t i) {
                            EventOrigin origin;
                            origin.line = batch.lines[i];
                            return origin;
                          }};
    histories.record(commit, result);
  }
  histories.finish(pool, at);
  print_answers(options, source, histories, pool, at);
  return kExitOk;
}

int run_journal(const ReplayOptions& options) {
  ReplayLog log(options);
  JournalCommits& journal = log.read(options.pool, true);
  std::unique_ptr<Pool> pool = journal.start(options.from);
  const WhySource source{HistoryUnit::seq, options.pool, "pool " + options.pool};
  const std::uint64_t start_at = journal.snapshot_seq().value_or(0);
  if (journal.snapshot_seq()) {
    note_stream(options) << "note: starting from the snapshot at seq " << start_at << "\n";
  }
  HistoryBuilder histories(options.history_vertices, HistoryUnit::seq);
  histories.start(*pool, start_at);
  std::uint64_t at = start_at;
  while (const daemon::CommitGroup* group = journal.next()) {
    const std::uint64_t first_seq = group->records.front().seq();
    const std::uint64_t last_seq = group->records.back().seq();
    if (options.until != 0 && last_seq > options.until) {
      if (first_seq <= options.until) {
        note_stream(options) << "note: seq " << options.until
                             << " was committed together with seqs up to " << last_seq
                             << ": stopping before that commit\n";
      }
      break;
    }
    if (const auto rejected = pool->check(group->events)) {
      throw CliError(log.name() + ": pool " + options.pool + " seq " +
                     std::to_string(first_seq) + ": the journal holds an event " +
                     "that does not apply: " + rejected->message);
    }
    const CommitResult result = pool->commit(group->events);
    // Event i of the commit belongs to the record whose events cover position i.
    const auto origin = [group, &journal](std::size_t i) {
      EventOrigin out;
      for (const v1::JournalRecord& record : group->records) {
        const std::size_t count = journal.events_in(record.seq());
        if (i < count) {
          out.seq = record.seq();
          out.client_id = record.client_id();
          out.client_batch = record.client_batch();
          return out;
        }
        i -= count;
      }
      return out;
    };
    histories.record(ReplayedCommit{first_seq, last_seq, group->events, origin}, result);
    at = last_seq;
  }
  histories.finish(*pool, at);
  print_answers(options, source, histories, *pool, at);
  return kExitOk;
}

}  // namespace

void add_why_options(CLI::App& command, ReplayOptions& options) {
  command
      .add_option("--history", options.history_vertices,
                  "Print the history of vertex V over the replay (repeatable)")
      ->check(kNotNegative);
  command
      .add_option("--explain", options.explain_vertices,
                  "Explain vertex V's pair in the state where the replay stops (repeatable)")
      ->check(kNotNegative);
  command
      .add_option("--alternatives", options.alternatives,
                  "With --explain: how many alternatives to list at most")
      ->check(kAtLeastOne)
      ->capture_default_str();
  command.add_flag("--json", options.json,
                   "With --history or --explain: one JSON object per answer and line");
  command.footer(command.get_footer() + "\n" + kWhyHelp + kExplanationJsonHelp);
}

bool wants_why(const ReplayOptions& options) {
  return !options.history_vertices.empty() || !options.explain_vertices.empty() || options.json;
}

int run_why_replay(const ReplayOptions& options) {
  if (options.history_vertices.empty() && options.explain_vertices.empty()) {
    throw CliError("--json goes with --history or --explain");
  }
  if (options.all_pools) {
    throw CliError("--all-pools replays the commit lines of every pool: --history and --explain "
                   "are about one pool (--pool P)");
  }
  if (options.diffs || options.stats || options.verify || !options.report.empty()) {
    throw CliError("--history and --explain print their answers instead of the commit lines: "
                   "--diffs, --stats, --verify and --report do not go with them");
  }
  if (replays_a_log(options)) return run_journal(options);
  if (options.from != 0) {
    throw CliError("--from applies to a daemon's log (a data directory or --cluster), not a "
                   "script");
  }
  return run_script(options);
}

std::span<const formats::ScriptBatch> batches_until(const formats::EventScript& script,
                                                     std::uint64_t until) {
  std::span<const formats::ScriptBatch> batches(script.batches);
  if (until != 0 && until < batches.size()) return batches.first(static_cast<std::size_t>(until));
  return batches;
}

}  // namespace yoke::cli
