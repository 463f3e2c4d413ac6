#include "verify_command.h"

#include <iostream>

#include "certificate_json.h"
#include "cli_error.h"
#include "yoke/certificate.h"
#include "file_io.h"
#include "input_files.h"
#include "json_writer.h"
#include "tools/formats/id_map.h"

namespace yoke::cli {
namespace {

struct MatchingTotals {
  Int128 weight = 0;
  std::uint64_t pairs = 0;
};

// Weight and size of the certificate's matching in the original weights. Only meaningful once
// the checker has accepted the matching (every mate pair is an edge).
MatchingTotals matching_totals(const Graph& graph, const Certificate& cert) {
  MatchingTotals totals;
  for (const Edge& e : graph.edges()) {
    if (cert.mate[e.a] == e.b) {
      totals.weight += e.w;
      ++totals.pairs;
    }
  }
  return totals;
}

Certificate load_certificate(const std::string& path, const formats::IdMap& graph_ids) {
  const std::string text = read_whole_input(path);
  try {
    return parse_certificate_json(text, graph_ids);
  } catch (const CertificateFormatError& error) {
    throw CliError(display_name(path) + ": " + error.what());
  }
}

}  // namespace

CLI::App* add_verify_command(CLI::App& app, VerifyOptions& options) {
  CLI::App* command = app.add_subcommand(
      "verify", "Check that a certificate proves its matching optimal for an edge list");
  command->add_option("GRAPH", options.graph_path, "Edge-list file, or - for stdin")->required();
  command->add_option("CERTIFICATE", options.certificate_path,
                      "Certificate JSON written by 'yoke solve --certificate'")
      ->required();
  return command;
}

int run_verify(const VerifyOptions& options) {
  if (options.graph_path == "-" && options.certificate_path == "-") {
    throw CliError("the graph and the certificate cannot both come from stdin");
  }
  formats::EdgeList input = load_edge_list(options.graph_path);
  const formats::IdMap graph_ids(input.external_ids);
  const Certificate cert = load_certificate(options.certificate_path, graph_ids);
  const Graph graph = Graph::from_edges(input.external_ids.size(), std::move(input.edges));

  const CheckResult check = check_certificate(graph, cert);
  JsonWriter json(std::cout);
  json.begin_object();
  json.key("valid");
  json.boolean(check.ok);
  if (check.ok) {
    const MatchingTotals totals = matching_totals(graph, cert);
    json.key("weight");
    json.wide_integer(totals.weight);
    json.key("pairs");
    json.unsigned_integer(totals.pairs);
  } else {
    json.key("reason");
    json.string(check.failure);
  }
  json.end_object();
  json.finish();
  if (!std::cout) throw CliError("cannot write the result to stdout");
  return check.ok ? kExitOk : kExitCertificateRejected;
}

}  // namespace yoke::cli
