#include "watch_command.h"

#include <signal.h>

#include <atomic>
#include <iostream>
#include <map>
#include <memory>
#include <optional>

#include "cli_error.h"
#include "cluster_diff_reader.h"
#include "number_options.h"
#include "proto_json.h"
#include "endpoint_route.h"
#include "query_client.h"
#include "yoke/v1/publish.pb.h"
#include "zmq_endpoint_client.h"

namespace yoke::cli {
namespace {

using yoke::v1::Diff;

constexpr const char* kWatchHelp =
    "Output: one JSON object per diff, one per line:\n"
    "  {\"pool\",\"seq\",\"prev_seq\",\"weight\",\"pairs\",\"no_perfect_matching\",\n"
    "   \"removed\":[[A,B,W],...],\"added\":[[A,B,W],...],\"repair_us\",\n"
    "   \"commit_to_publish_us\",\"publish_unix_us\",\"stats\":{...}}\n"
    "and \"retired\":true on a pool's last diff (`yoke retire`: every pair removed); the pool\n"
    "made again later under that name starts over at seq 1.\n"
    "With --catch-up, first the pool's whole matching with \"catch_up\":true (as `yoke query\n"
    "matching` prints it), then the diffs after its seq; a missed diff is noted on stderr\n"
    "(note: ...) and the matching fetched again, printed the same way, as is a diff of a\n"
    "later pool of that name met in its middle (Diff.incarnation; a missed retirement).\n"
    "Several --publish endpoints (a cluster): every one is subscribed to, and each diff\n"
    "(pool, seq) is printed once, in seq order; a diff that skips seqs waits a moment for the\n"
    "ones between from another daemon. The --catch-up query follows NOT_OWNER refusals among\n"
    "the --query endpoints (for at most --owner-wait-ms).\n"
    "--cluster URL[,URL...] reads the diffs from the cluster's JetStream stream instead of\n"
    "the publication sockets (subject <subject-prefix>.diff.<pool>, stored by whichever daemon\n"
    "serves the pool), checked the same way: each seq printed once, in order. Without\n"
    "--from-seq only diffs stored from now on; with --from-seq N every diff still stored from\n"
    "seq N on (a watcher resumes where it stopped, across failovers).\n"
    "Exit codes: 0 after --count diffs, or on SIGINT/SIGTERM; 2 an unreadable publication or\n"
    "query error; 4 nothing within --timeout-ms.";

// Used when --timeout-ms is 0 ("watch for ever") but the catch-up query still needs a bound.
constexpr std::chrono::milliseconds kCatchUpTimeout{5000};

static_assert(std::atomic<bool>::is_always_lock_free, "set from a signal handler");
std::atomic<bool> stop_requested{false};

void request_stop(int) { stop_requested.store(true); }

// No SA_RESTART: the signal interrupts the wait for the next publication.
void stop_on_signals() {
  struct sigaction action = {};
  action.sa_handler = request_stop;
  sigemptyset(&action.sa_mask);
  sigaction(SIGINT, &action, nullptr);
  sigaction(SIGTERM, &action, nullptr);
}

void print_line(const Json& value) {
  std::cout << json_line(value) << '\n' << std::flush;
  if (!std::cout) throw CliError("cannot write to stdout");
}

class Watcher {
 public:
  explicit Watcher(const WatchOptions& options)
      : options_(options),
        timeout_(timeout_from_option(options.timeout_ms)),
        several_(options.publish.size() > 1 || !options.cluster.servers.empty()),
        query_route_(options.query, SocketKind::query, options.pool,
                     timeout_from_option(options.owner_wait_ms)) {
    if (!options.cluster.servers.empty()) {
      stored_ = std::make_unique<ClusterDiffReader>(options.cluster, options.pool, options.from_seq);
      // Diffs from N on follow N - 1: one that does not is a gap, as after the last printed.
      if (options.from_seq && *options.from_seq > 0) last_printed_ = *options.from_seq - 1;
      return;
    }
    subscriber_ = std::make_unique<EndpointClient>(zmq::socket_type::sub, options.publish.front());
    for (std::size_t i = 1; i < options.publish.size(); ++i) {
      subscriber_->connect(options.publish[i]);
    }
    subscriber_->subscribe(options.pool);
  }

  int run() {
    // Subscribed before the matching is fetched, so no diff after it can slip past.
    if (options_.catch_up) catch_up();
    Deadline deadline = deadline_after(timeout_);
    while (!done()) {
      Deadline wait = deadline;
      if (!held_back_.empty()) {
        const auto release = held_since_ + kReorderWait;
        if (!wait || release < *wait) wait = release;
      }
      const std::optional<std::string> publication = receive(wait);
      if (!publication) {
        if (stop_requested.load()) return kExitOk;
        if (!held_back_.empty() && Clock::now() >= held_since_ + kReorderWait) {
          release_held_back();
          continue;
        }
        throw UnavailableError("no publication for pool " + options_.pool + " from " +
                               endpoints_text() + " within " + std::to_string(timeout_.count()) +
                               " ms");
      }
      deadline = deadline_after(timeout_);
      if (const auto diff = read_diff(*publication)) offer(*diff);
    }
    return kExitOk;
  }

 private:
  bool done() const { return options_.count != 0 && printed_ >= options_.count; }

  // The next publication's bytes of the pool; nothing at the deadline or a stop.
  std::optional<std::string> receive(Deadline wait) {
    if (stored_) return stored_->next(wait, &stop_requested);
    while (true) {
      auto frames = subscriber_->receive(wait, &stop_requested);
      if (!frames) return std::nullopt;
      // Subscriptions match prefixes: pool "city" also receives "city-east".
      if (frames->empty() || frames->front() != options_.pool) continue;
      if (frames->size() != 2) throw CliError(unreadable_text());
      return std::move((*frames)[1]);
    }
  }

  std::string unreadable_text() const {
    return endpoints_text() + (stored_ ? ": a message that is not a yoke.v1.Publication"
                                       : ": a publication that is not a topic frame and a "
                                         "yoke.v1.Publication");
  }

  std::string endpoints_text() const {
    if (stored_) return stored_->describe();
    std::string text;
    for (const std::string& endpoint : options_.publish) {
      text += (text.empty() ? "" : ", ") + endpoint;
    }
    return text;
  }

  // The diff a message carries; nothing for a kind this client does not know.
  std::optional<Diff> read_diff(const std::string& bytes) const {
    yoke::v1::Publication publication;
    if (!publication.ParseFromString(bytes)) throw CliError(unreadable_text());
    if (publication.version() != yoke::v1::PROTOCOL_VERSION_1) {
      throw CliError(endpoints_text() + ": a publication in protocol version " +
                     std::to_string(publication.version()) + " (this yoke speaks version 1)");
    }
    if (!publication.has_diff()) return std::nullopt;
    return publication.diff();
  }

  // The seq the next diff should follow: the caught-up state's, else the last printed.
  std::optional<std::uint64_t> reference() const {
    return options_.catch_up ? held_seq_ : last_printed_;
  }

  // One daemon publishes in order, so its diffs go straight to take(). From several, a diff
  // already printed (or held back) is dropped, and one that skips seqs is held back.
  void offer(const Diff& diff) {
    if (!several_) {
      take(diff);
      return;
    }
    const auto last = reference();
    if ((last && diff.seq() <= *last) || held_back_.count(diff.seq()) != 0) return;
    if (last && diff.prev_seq() != *last) {
      if (held_back_.empty()) held_since_ = Clock::now();
      held_back_.emplace(diff.seq(), diff);
      return;
    }
    take(diff);
    take_followers();
  }

  // Held-back diffs that now follow on, in seq order.
  void take_followers() {
    while (!done() && !held_back_.empty()) {
      const auto last = reference();
      const auto first = held_back_.begin();
      if (last && first->first <= *last) {
        held_back_.erase(first);
        continue;
      }
      if (last && first->second.prev_seq() != *last) break;
      const Diff diff = first->second;
      held_back_.erase(first);
      take(diff);
    }
    held_since_ = Clock::now();  // what is still held back waits afresh
  }

  // The diffs between never came: the gap is real. take() deals with it as for one daemon
  // (with --catch-up: a note and a new catch-up); without --catch-up it is noted here.
  void release_held_back() {
    const Diff diff = held_back_.begin()->second;
    if (!options_.catch_up && last_printed_) {
      std::cerr << "note: pool " << options_.pool << ": diff " << diff.seq() << " follows seq "
                << diff.prev_seq() << ", but the last seq printed is " << *last_printed_
                << "; the diffs between are missing\n";
    }
    held_back_.erase(held_back_.begin());
    take(diff);
    take_followers();
  }

  // Prints `diff` unless the state held already covers it.
  void take(const Diff& diff) {
    if (held_seq_) {
      // Another pool of the name (docs/protocol.md, "Catching up"): an earlier one's diff is
      // dropped; a later one's first diff follows the empty pool a retirement left, and one
      // met in its middle means the retirement was missed: the lines printed must add up.
      if (diff.incarnation() < held_incarnation_) return;
      if (diff.incarnation() > held_incarnation_) {
        if (diff.prev_seq() != 0 || *held_seq_ != 0) {
          std::cerr << "note: pool " << options_.pool << ": diff " << diff.seq()
                    << " is of a later pool of that name than the one held; catching up again\n";
          catch_up();
          if (diff.incarnation() != held_incarnation_) return;
        }
        held_incarnation_ = diff.incarnation();
      }
      if (diff.seq() <= *held_seq_) return;
      if (diff.prev_seq() != *held_seq_) {
        std::cerr << "note: pool " << options_.pool << ": diff " << diff.seq()
                  << " follows seq " << diff.prev_seq() << ", but the last seq held is "
                  << *held_seq_ << "; catching up again\n";
        catch_up();
        // Checked once more against the fresh matching; a diff that still does not fit is left
        // to the next one to report.
        if (diff.seq() <= *held_seq_ || diff.prev_seq() != *held_seq_) return;
      }
      held_seq_ = diff.seq();
    }
    print_line(diff_json(diff));
    last_printed_ = diff.seq();
    ++printed_;
    if (diff.retired()) {
      // The pool's last diff: a pool of the same name made later starts again from seq 0.
      last_printed_ = 0;
      if (held_seq_) held_seq_ = 0;
    }
  }

  void catch_up() {
    yoke::v1::QueryRequest request;
    request.set_pool(options_.pool);
    request.mutable_matching();
    const auto reply =
        ask_query(query_route_, request, timeout_.count() == 0 ? kCatchUpTimeout : timeout_);
    yoke::v1::Matching matching;
    if (reply.has_matching()) {
      matching = reply.matching();
    } else if (!reply.has_error()) {
      throw CliError(query_route_.current() + ": the daemon answered a matching query with a " +
                     "reply of another kind");
    } else if (reply.error().code() != yoke::v1::Error::UNKNOWN_POOL) {
      throw CliError(query_error_text(reply.error()));
    }
    // else: a pool not created yet is the empty matching at seq 0; its first diff follows 0.
    Json start = matching_json(options_.pool, matching);
    start["catch_up"] = true;
    print_line(start);
    held_seq_ = matching.seq();
    held_incarnation_ = matching.incarnation();
  }

  const WatchOptions& options_;
  const std::chrono::milliseconds timeout_;
  std::unique_ptr<EndpointClient> subscriber_;  // the publication sockets, or
  std::unique_ptr<ClusterDiffReader> stored_;   // --cluster: the pool's diffs in the stream
  const bool several_;
  EndpointRoute query_route_;
  std::optional<std::uint64_t> held_seq_;      // --catch-up: the seq the printed lines add up to
  std::uint64_t held_incarnation_ = 0;         // --catch-up: which pool of the name they are of
  std::optional<std::uint64_t> last_printed_;  // the seq of the last diff printed
  std::uint64_t printed_ = 0;
  std::map<std::uint64_t, Diff> held_back_;    // several publishers: diffs after a gap, by seq
  Clock::time_point held_since_;
};

}  // namespace

CLI::App* add_watch_command(CLI::App& app, WatchOptions& options) {
  CLI::App* command =
      app.add_subcommand("watch", "Print a pool's published diffs as JSON lines");
  add_pool_option(*command, options.pool);
  CLI::Option* publish = add_endpoints_option(*command, "--publish", options.publish,
                                              "The daemon's publication socket");
  command->add_option("--count", options.count, "Exit after this many diffs [default: no limit]")
      ->check(kAtLeastOne);
  command->add_flag("--catch-up", options.catch_up,
                    "Start from the whole matching (fetched from the query socket)");
  add_endpoints_option(*command, "--query", options.query,
                       "The daemon's query socket (for --catch-up)");
  add_timeout_option(*command, options.timeout_ms,
                     "Exit 4 when nothing arrives for this long (0: wait for ever)", true);
  add_owner_wait_option(*command, options.owner_wait_ms);
  CLI::Option* cluster =
      command->add_option("--cluster", options.cluster.servers,
                   "Read the diffs from a cluster's JetStream stream instead of --publish: its "
                   "NATS servers, a comma-separated list or the option repeated")
      ->delimiter(',')
      ->type_name("URL")
      ->check(kNotEmpty)
      ->excludes(publish);
  command
      ->add_option("--stream", options.cluster.stream,
                   "With --cluster: the installation's stream ([cluster] stream)")
      ->capture_default_str()
      ->needs(cluster);
  command
      ->add_option("--subject-prefix", options.cluster.subject_prefix,
                   "With --cluster: the stream's subject prefix ([cluster] subject_prefix)")
      ->capture_default_str()
      ->needs(cluster);
  command
      ->add_option("--from-seq", options.from_seq,
                   "With --cluster: print every diff still stored from this seq on [default: "
                   "only new diffs]")
      ->type_name("N")
      ->needs(cluster);
  command->footer(kWatchHelp);
  return command;
}

int run_watch(const WatchOptions& options) {
  if (options.from_seq && options.catch_up) {
    throw CliError("--from-seq and --catch-up do not go together: --catch-up starts from the "
                   "whole matching, --from-seq from a stored diff");
  }
  stop_on_signals();
  return Watcher(options).run();
}

}  // namespace yoke::cli
