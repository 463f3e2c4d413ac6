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
#include "number_options.h"
#include "proto_json.h"
#include "replay_log.h"
#include "tools/postmortem/replay_driver.h"
#include "tools/postmortem/script_source.h"
#include "tools/postmortem/vertex_explanations.h"
#include "tools/postmortem/vertex_history.h"

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
  postmortem::HistoryUnit unit = postmortem::HistoryUnit::seq;
  std::optional<std::string> pool;  // journal replays
  std::string where;                // "pool P" or the script's name, for the text headers
};

// Prints the answers once the replay has stopped at `at`.
void print_answers(const ReplayOptions& options, const WhySource& source,
                   const postmortem::HistoryBuilder& histories,
                   const postmortem::VertexExplanations& explanations, std::uint64_t at) {
  std::ostream& out = std::cout;
  const std::string point =
      at == 0
          ? std::string("the start")
          : (source.unit == postmortem::HistoryUnit::seq ? "seq " : "commit ") + std::to_string(at);
  bool first = true;
  for (const postmortem::VertexHistory& history : histories.histories()) {
    if (options.json) {
      out << json_line(postmortem::history_json(history, source.pool)) << '\n';
    } else {
      if (!first) out << '\n';
      out << postmortem::history_text(history, source.where);
    }
    first = false;
  }
  for (const postmortem::VertexAnswer& answer : explanations.answers()) {
    const VertexKey vertex = answer.vertex;
    const std::optional<VertexExplanation>& explanation = answer.explanation;
    if (options.json) {
      Json head{{"kind", "explanation"},
                {"pool", source.pool ? Json(*source.pool) : Json(nullptr)},
                {"unit", source.unit == postmortem::HistoryUnit::seq ? "seq" : "commit"},
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

// Replays `source` from its start with the histories and explanations asked for as its
// observers, then prints the answers.
int answer_questions(const ReplayOptions& options, const WhySource& where,
                     postmortem::CommitSource& source, Pool& pool) {
  postmortem::HistoryBuilder histories(options.history_vertices, source.unit());
  postmortem::VertexExplanations explanations(options.explain_vertices, options.alternatives);
  std::vector<postmortem::CommitObserver*> observers{&histories, &explanations};
  const postmortem::ReplayOutcome outcome = postmortem::replay(source, pool, observers);
  print_answers(options, where, histories, explanations, outcome.at);
  return kExitOk;
}

int run_script(const ReplayOptions& options) {
  const Mode mode = parse_mode(options.mode);
  const formats::EventScript script = load_event_script(options.script_path);
  const std::string name = display_name(options.script_path);
  postmortem::ScriptSource source(script, name, mode, options.until);
  Pool& pool = source.start();
  return answer_questions(options, WhySource{postmortem::HistoryUnit::commit, std::nullopt, name},
                          source, pool);
}

int run_journal(const ReplayOptions& options) {
  ReplayLog log(options);
  const std::unique_ptr<postmortem::LogSource> source = log.read(options, note_stream(options));
  Pool& pool = source->start();
  if (source->from_snapshot()) {
    note_stream(options) << "note: starting from the snapshot at seq " << source->start_point()
                         << "\n";
  }
  return answer_questions(
      options, WhySource{postmortem::HistoryUnit::seq, options.pool, "pool " + options.pool},
      *source, pool);
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

}  // namespace yoke::cli
