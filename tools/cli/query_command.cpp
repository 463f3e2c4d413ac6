#include "query_command.h"

#include <iostream>
#include <string>

#include "cli_error.h"
#include "explanation_text.h"
#include "number_options.h"
#include "proto_json.h"
#include "query_client.h"
#include "zmq_endpoint_client.h"

namespace yoke::cli {
namespace {

using yoke::v1::QueryReply;
using yoke::v1::QueryRequest;

constexpr const char* kQueryHelp =
    "Kinds:\n"
    "  summary    {\"pool\",\"seq\",\"weight\",\"pairs\",\"vertices\",\"edges\",\"mode\",\n"
    "              \"no_perfect_matching\"}\n"
    "  mate       --vertex V: {\"pool\",\"seq\",\"vertex\",\"mate\" (null: unpaired),\n"
    "              \"pair_weight\" (null: unpaired)}\n"
    "  matching   {\"pool\",\"seq\",\"weight\",\"pairs\" (a count),\"matching\":[[A,B,W],...],\n"
    "              \"mode\",\"no_perfect_matching\"}\n"
    "  explain    --vertex V [--alternatives N]: {\"pool\",\"seq\"} and the explanation keys\n"
    "              below; --text prints it in sentences instead, as `yoke replay --explain`\n"
    "              does\n"
    "  stats      the pool's counters, limits, last repair and timings\n"
    "  snapshot   write a snapshot now [--all-pools]: {\"pools\":[{\"pool\",\"seq\"}],\"path\"}\n"
    "  health     {\"ok\",\"status\",\"uptime_s\",\"pools\",\"daemon_version\"}\n"
    "Exit codes: 0 answered; 2 the daemon answered with an error (printed as\n"
    "'error: CODE: message') or the options do not fit KIND; 4 no reply within --timeout-ms,\n"
    "or no daemon served the pool within --owner-wait-ms.\n";

constexpr const char* kExplanationKeysHead =
    "Explanation keys (the same as `yoke replay --explain V --json`):\n";

// Options that only some kinds take: naming one for another kind is a mistake worth reporting.
void check_options_fit(const QueryOptions& options) {
  const bool about_vertex = options.kind == "mate" || options.kind == "explain";
  if (about_vertex && !options.vertex) {
    throw CliError("query " + options.kind + " needs --vertex V");
  }
  if (!about_vertex && options.vertex) {
    throw CliError("--vertex goes with query mate or explain, not " + options.kind);
  }
  if (options.alternatives != 0 && options.kind != "explain") {
    throw CliError("--alternatives goes with query explain, not " + options.kind);
  }
  if (options.text && options.kind != "explain") {
    throw CliError("--text goes with query explain, not " + options.kind);
  }
  if (options.all_pools && options.kind != "snapshot") {
    throw CliError("--all-pools goes with query snapshot, not " + options.kind);
  }
}

QueryRequest build_request(const QueryOptions& options) {
  QueryRequest request;
  request.set_pool(options.pool);
  const std::string& kind = options.kind;
  if (kind == "summary") {
    request.mutable_summary();
  } else if (kind == "mate") {
    request.mutable_mate()->set_vertex(*options.vertex);
  } else if (kind == "matching") {
    request.mutable_matching();
  } else if (kind == "explain") {
    request.mutable_explain()->set_vertex(*options.vertex);
    request.mutable_explain()->set_max_alternatives(options.alternatives);
  } else if (kind == "stats") {
    request.mutable_stats();
  } else if (kind == "snapshot") {
    request.mutable_snapshot()->set_all_pools(options.all_pools);
  } else {
    request.mutable_health();
  }
  return request;
}

}  // namespace

CLI::App* add_query_command(CLI::App& app, QueryOptions& options) {
  CLI::App* command =
      app.add_subcommand("query", "Ask yoked about a pool (or itself); one JSON object out");
  command->add_option("KIND", options.kind, "What to ask")
      ->required()
      ->check(CLI::IsMember(
          {"summary", "mate", "matching", "explain", "stats", "snapshot", "health"}));
  add_pool_option(*command, options.pool);
  add_endpoints_option(*command, "--query", options.endpoints, "The daemon's query socket");
  command
      ->add_option_function<std::uint64_t>(
          "--vertex", [&options](const std::uint64_t& vertex) { options.vertex = vertex; },
          "The vertex's key (mate, explain)")
      ->check(kNotNegative);
  command
      ->add_option("--alternatives", options.alternatives,
                   "Alternatives to list at most (explain; default: the daemon's)")
      ->check(kAtLeastOne);
  command->add_flag("--all-pools", options.all_pools, "Snapshot every pool (snapshot)");
  command->add_flag("--text", options.text, "Explain in sentences instead of JSON (explain)");
  add_timeout_option(*command, options.timeout_ms, "How long to wait for the reply", false);
  add_owner_wait_option(*command, options.owner_wait_ms);
  command->footer(std::string(kQueryHelp) + kEndpointsHelp + "\n" + kExplanationKeysHead +
                  kExplanationJsonHelp);
  return command;
}

int run_query(const QueryOptions& options) {
  check_options_fit(options);
  const QueryRequest request = build_request(options);
  EndpointRoute route(options.endpoints, SocketKind::query, options.pool,
                      timeout_from_option(options.owner_wait_ms));
  const QueryReply reply = ask_query(route, request, timeout_from_option(options.timeout_ms));
  if (reply.has_error()) throw CliError(query_error_text(reply.error()));
  // The schema numbers each reply kind as its request kind (query.proto, fields 10 to 16).
  if (static_cast<int>(reply.kind_case()) != static_cast<int>(request.kind_case())) {
    throw CliError(route.current() + ": the daemon answered a " + options.kind +
                   " query with a reply of another kind");
  }
  if (options.text) {
    const yoke::v1::Explanation& explanation = reply.explain();
    std::cout << "explain " << explanation.vertex() << " at seq " << explanation.seq()
              << " (pool " << reply.pool() << "):\n"
              << explanation_text(explanation.vertex(), explanation_from_wire(explanation))
              << std::flush;
  } else {
    std::cout << json_line(query_reply_json(reply)) << '\n' << std::flush;
  }
  if (!std::cout) throw CliError("cannot write the result to stdout");
  return kExitOk;
}

}  // namespace yoke::cli
