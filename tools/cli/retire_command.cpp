#include "retire_command.h"

#include <iostream>

#include "cli_error.h"
#include "daemon/service/wire_types.h"
#include "proto_json.h"
#include "resend_options.h"
#include "number_options.h"
#include "yoke/v1/ingest.pb.h"

namespace yoke::cli {
namespace {

constexpr const char* kRetireHelp =
    "Retiring a pool drops its matching, graph, seqs and its clients' retry marks, and frees\n"
    "its slot under the daemon's limits.max_pools; a later batch naming it creates it afresh\n"
    "at seq 1. Subscribers get its last diff (\"retired\": every pair removed). Retire a pool\n"
    "once its clients are done: a retry of a batch sent before the retirement would be applied\n"
    "to the new pool. A daemon of a cluster does not retire pools (RETIRE_NOT_SUPPORTED).\n"
    "Output: {\"pool\":P,\"retired_at_seq\":S}\n"
    "Exit codes: 0 retired; 2 refused (UNKNOWN_POOL: no such pool, also when an earlier\n"
    "attempt retired it; SEQ_MISMATCH; RETIRE_NOT_SUPPORTED); 4 no answer after the retries.\n";

std::string retire_request(const RetireOptions& options, const std::string& client_id,
                           std::uint64_t number) {
  yoke::v1::IngestRequest request;
  request.set_version(yoke::v1::PROTOCOL_VERSION_1);
  yoke::v1::RetirePool& retire = *request.mutable_retire();
  retire.set_client_id(client_id);
  retire.set_client_batch(number);
  retire.set_pool(options.pool);
  retire.set_at_seq(options.at_seq);
  return request.SerializeAsString();
}

void throw_retire_failure(const RetireOptions& options, const SendReport& report) {
  using Outcome = SendReport::Outcome;
  const std::string refused = "pool " + options.pool + " not retired: " +
                              error_code_name(report.error.code()) + ": " +
                              report.error.message();
  switch (report.outcome) {
    case Outcome::acknowledged: return;
    case Outcome::rejected:
    case Outcome::unreadable: throw CliError(refused);
    case Outcome::refused_on_retry:
      if (report.error.code() == yoke::v1::Error::UNAVAILABLE) throw UnavailableError(refused);
      throw CliError(refused);
    case Outcome::no_acknowledgement:
      throw UnavailableError("no answer from " + report.endpoint + " after " +
                             std::to_string(options.resend.retries) + " retries: pool " + options.pool +
                             " may or may not be retired");
    case Outcome::bad_reply: throw CliError(report.endpoint + ": " + report.problem);
  }
}

}  // namespace

CLI::App* add_retire_command(CLI::App& app, RetireOptions& options) {
  CLI::App* command = app.add_subcommand("retire", "Retire (delete) a pool of yoked");
  command->add_option("POOL", options.pool, "The pool's name")->required()->check(kNotEmpty);
  command->add_option("--at-seq", options.at_seq,
                      "Retire only if the pool's last seq is this one (0: whatever it is)")
      ->check(kNotNegative)
      ->capture_default_str();
  add_endpoints_option(*command, "--ingest", options.ingest, "The daemon's ingest socket");
  add_resend_options(*command, options.resend,
                     {"Names the request for its reply [default: yoke-retire-HOST-PID]",
                      "Silence after which the request is sent again", "Resends before giving up"});
  command->footer(std::string(kRetireHelp) + kEndpointsHelp);
  return command;
}

int run_retire(const RetireOptions& options) {
  const SenderSettings settings = sender_settings(options.resend, "retire");
  EndpointRoute route(options.ingest, SocketKind::ingest, options.pool,
                      timeout_from_option(options.resend.owner_wait_ms));
  const SendReport report = send_batches(
      route, {retire_request(options, settings.client_id, settings.first_batch_number)}, settings);
  throw_retire_failure(options, report);
  const Json result{{"pool", options.pool}, {"retired_at_seq", report.last_seq}};
  std::cout << json_line(result) << '\n' << std::flush;
  if (!std::cout) throw CliError("cannot write the result to stdout");
  return kExitOk;
}

}  // namespace yoke::cli
