#include "send_command.h"

#include <iostream>

#include "cli_error.h"
#include "daemon/service/wire_types.h"
#include "file_io.h"
#include "input_files.h"
#include "number_options.h"
#include "proto_json.h"
#include "resend_options.h"
#include "yoke/v1/ingest.pb.h"

namespace yoke::cli {
namespace {

constexpr const char* kSendHelp =
    "The script is the one `yoke replay` reads (see `yoke replay --help`); each commit is sent\n"
    "as one batch, and events after the last commit as one more. Up to --in-flight batches\n"
    "wait for their acknowledgement at once. A batch the daemon refuses with OUT_OF_ORDER or\n"
    "UNAVAILABLE, or does not acknowledge within --timeout-ms, is sent again with every\n"
    "unacknowledged batch after it, under the same numbers (the daemon applies each once), at\n"
    "most --retries times (with several endpoints, a silent one is left for the next).\n"
    "The script is read whole first: a malformed one sends nothing. A run numbers its\n"
    "batches from the microseconds since the epoch, so a second run under the same\n"
    "--client-id sends new batches (applied again), not retries of the first run's.\n"
    "Output once every batch is acknowledged (an empty script sends nothing: 0 batches,\n"
    "first_seq and last_seq null):\n"
    "  {\"pool\":P,\"batches\":N,\"events\":E,\"first_seq\":S1,\"last_seq\":S2,\"duplicates\":D}\n"
    "Exit codes: 0 all acknowledged; 2 a malformed script, or a batch the daemon rejects\n"
    "(FILE:LINE names its event); 4 no acknowledgement after the retries, or no daemon\n"
    "served the pool within --owner-wait-ms.\n";

// One batch as the ingest socket takes it.
std::string ingest_request(const formats::ScriptBatch& batch, const SendOptions& options,
                           const std::string& client_id, std::uint64_t number,
                           std::uint64_t after) {
  yoke::v1::IngestRequest request;
  request.set_version(yoke::v1::PROTOCOL_VERSION_1);
  yoke::v1::EventBatch& out = *request.mutable_batch();
  out.set_client_id(client_id);
  out.set_client_batch(number);
  out.set_pool(options.pool);
  out.set_after_batch(after);
  out.mutable_events()->Reserve(static_cast<int>(batch.events.size()));
  for (const Event& event : batch.events) *out.add_events() = daemon::to_wire(event);
  return request.SerializeAsString();
}

// The line a refusal is about: its event's, or else the batch's `commit` (the last event's
// line for the batch the end of the file closes).
std::size_t refused_line(const formats::ScriptBatch& batch, const yoke::v1::Error& error) {
  if (error.has_event_index() && error.event_index() < batch.lines.size()) {
    return batch.lines[error.event_index()];
  }
  if (batch.commit_line != 0 || batch.lines.empty()) return batch.commit_line;
  return batch.lines.back();
}

std::string refusal(const SendOptions& options, const formats::EventScript& script,
                    const SendReport& report) {
  const formats::ScriptBatch& batch = script.batches[report.failed_batch];
  return display_name(options.script_path) + ":" +
         std::to_string(refused_line(batch, report.error)) + ": batch " +
         std::to_string(report.failed_batch + 1) + " rejected by the daemon: " +
         error_code_name(report.error.code()) + ": " + report.error.message();
}

// Turns every way a send can fail into the exception main() reports.
void throw_failure(const SendOptions& options, const formats::EventScript& script,
                   const SendReport& report) {
  using Outcome = SendReport::Outcome;
  const std::string retries = std::to_string(options.resend.retries) + " retries";
  switch (report.outcome) {
    case Outcome::acknowledged: return;
    case Outcome::rejected: throw CliError(refusal(options, script, report));
    case Outcome::refused_on_retry: {
      const std::string message =
          refusal(options, script, report) + " (still refused after " + retries + ")";
      if (report.error.code() == yoke::v1::Error::UNAVAILABLE) throw UnavailableError(message);
      throw CliError(message);
    }
    case Outcome::no_acknowledgement: {
      std::string message = "no acknowledgement from " + report.endpoint + " after " + retries;
      if (report.error.code() != yoke::v1::Error::CODE_UNSPECIFIED) {
        message += " (last answer: " + error_code_name(report.error.code()) + ": " +
                   report.error.message() + ")";
      }
      throw UnavailableError(message);
    }
    case Outcome::unreadable:
      throw CliError(display_name(options.script_path) + ": the daemon at " + report.endpoint +
                     " could not read a batch: " + error_code_name(report.error.code()) + ": " +
                     report.error.message());
    case Outcome::bad_reply:
      throw CliError(report.endpoint + ": " + report.problem);
  }
}

}  // namespace

CLI::App* add_send_command(CLI::App& app, SendOptions& options) {
  CLI::App* command =
      app.add_subcommand("send", "Stream an event script to yoked, one batch per commit");
  command->add_option("SCRIPT", options.script_path, "Event-script file, or - for stdin")
      ->required();
  add_pool_option(*command, options.pool);
  add_endpoints_option(*command, "--ingest", options.ingest, "The daemon's ingest socket");
  command->add_option("--in-flight", options.in_flight, "Batches awaiting acknowledgement, at most")
      ->check(kAtLeastOne)
      ->capture_default_str();
  add_resend_options(*command, options.resend,
                     {"The sender's name for exactly-once retries [default: yoke-send-HOST-PID]",
                      "Silence after which unacknowledged batches are sent again",
                      "Resends of one batch before giving up"});
  command->footer(std::string(kSendHelp) + kEndpointsHelp);
  return command;
}

int run_send(const SendOptions& options) {
  const formats::EventScript script = load_event_script(options.script_path);
  SenderSettings settings = sender_settings(options.resend, "send");
  settings.in_flight = static_cast<std::size_t>(options.in_flight);
  const std::string& client_id = settings.client_id;

  std::vector<std::string> requests;
  requests.reserve(script.batches.size());
  for (std::size_t i = 0; i < script.batches.size(); ++i) {
    const std::uint64_t number = settings.first_batch_number + i;
    requests.push_back(ingest_request(script.batches[i], options, client_id, number,
                                      i == 0 ? 0 : number - 1));
  }

  SendReport report;
  if (!requests.empty()) {  // nothing to send: no need for a daemon either
    EndpointRoute route(options.ingest, SocketKind::ingest, options.pool,
                        timeout_from_option(options.resend.owner_wait_ms));
    report = send_batches(route, requests, settings);
  }
  throw_failure(options, script, report);

  const bool any = report.accepted > 0;
  const Json result{{"pool", options.pool},
                    {"batches", script.batches.size()},
                    {"events", script.event_count},
                    {"first_seq", any ? Json(report.first_seq) : Json(nullptr)},
                    {"last_seq", any ? Json(report.last_seq) : Json(nullptr)},
                    {"duplicates", report.duplicates}};
  std::cout << json_line(result) << '\n' << std::flush;
  if (!std::cout) throw CliError("cannot write the result to stdout");
  return kExitOk;
}

}  // namespace yoke::cli
