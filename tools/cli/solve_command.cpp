#include "solve_command.h"

#include <algorithm>
#include <chrono>
#include <iostream>
#include <utility>
#include <vector>

#include "certificate_json.h"
#include "cli_error.h"
#include "yoke/solve.h"
#include "file_io.h"
#include "input_files.h"
#include "json_writer.h"

namespace yoke::cli {
namespace {

using IdPair = std::pair<std::uint64_t, std::uint64_t>;

// The matched pairs in external ids, smaller id first, sorted: the same output for the same
// matching whatever the dense numbering.
std::vector<IdPair> matched_pairs(const std::vector<Vertex>& mate,
                                  const std::vector<std::uint64_t>& external_ids) {
  std::vector<IdPair> pairs;
  for (Vertex v = 0; v < mate.size(); ++v) {
    if (mate[v] == kNoVertex || mate[v] < v) continue;
    const std::uint64_t a = external_ids[v];
    const std::uint64_t b = external_ids[mate[v]];
    pairs.emplace_back(std::min(a, b), std::max(a, b));
  }
  std::sort(pairs.begin(), pairs.end());
  return pairs;
}

const char* status_name(SolveStatus status) {
  return status == SolveStatus::optimal ? "optimal" : "no_perfect_matching";
}

void write_result(std::ostream& out, const SolveResult& result, Mode mode, const Graph& graph,
                  double solve_ms, const std::vector<IdPair>& pairs) {
  JsonWriter json(out);
  json.begin_object();
  json.key("status");
  json.string(status_name(result.status));
  json.key("mode");
  json.string(mode_name(mode));
  json.key("vertices");
  json.unsigned_integer(graph.vertex_count());
  json.key("edges");
  json.unsigned_integer(graph.edge_count());
  json.key("weight");
  json.integer(result.weight);
  json.key("pairs");
  json.unsigned_integer(result.pairs);
  json.key("solve_ms");
  json.number(solve_ms, 3);
  json.key("matching");
  json.begin_array();
  for (const auto& [a, b] : pairs) {
    json.begin_array();
    json.unsigned_integer(a);
    json.unsigned_integer(b);
    json.end_array();
  }
  json.end_array();
  json.end_object();
  json.finish();
}

}  // namespace

CLI::App* add_solve_command(CLI::App& app, SolveOptions& options) {
  CLI::App* command = app.add_subcommand(
      "solve", "Solve an edge list (one 'U V W' per line) and print the matching as JSON");
  command->add_option("GRAPH", options.graph_path, "Edge-list file, or - for stdin")->required();
  command->add_option("--mode", options.mode, "What to optimise")
      ->check(CLI::IsMember({"max-weight", "max-cardinality", "perfect"}))
      ->capture_default_str();
  command->add_option("--certificate", options.certificate_path,
                      "Also write the optimality certificate (JSON) to this file");
  return command;
}

int run_solve(const SolveOptions& options) {
  const Mode mode = parse_mode(options.mode);
  if (options.certificate_path == "-") {
    // Standard output carries the solution; a file named "-" would surprise everyone.
    throw CliError("--certificate needs a file path: standard output carries the solution");
  }
  formats::EdgeList input = load_edge_list(options.graph_path);
  const std::vector<std::uint64_t> external_ids = std::move(input.external_ids);
  const Graph graph = Graph::from_edges(external_ids.size(), std::move(input.edges));

  SolveResult result;
  const auto start = std::chrono::steady_clock::now();
  try {
    result = solve(graph, mode);
  } catch (const InputError& error) {
    throw CliError(display_name(options.graph_path) + ": " + error.what());
  }
  const std::chrono::duration<double, std::milli> elapsed =
      std::chrono::steady_clock::now() - start;

  if (!options.certificate_path.empty()) {
    std::ofstream out = open_output_file(options.certificate_path);
    write_certificate_json(out, result.certificate, external_ids);
    close_output_file(out, options.certificate_path);
  }

  write_result(std::cout, result, mode, graph, elapsed.count(),
               matched_pairs(result.mate, external_ids));
  if (!std::cout) throw CliError("cannot write the result to stdout");
  return result.status == SolveStatus::optimal ? kExitOk : kExitNoPerfectMatching;
}

}  // namespace yoke::cli
