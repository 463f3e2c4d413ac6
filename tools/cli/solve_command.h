// `yoke solve GRAPH [--mode M] [--certificate CERT.json]`: the optimum matching of an edge
// list as one JSON object on stdout, and optionally its certificate.
#pragma once

#include <string>

#include <CLI/CLI.hpp>

namespace yoke::cli {

struct SolveOptions {
  std::string graph_path;
  std::string mode = "max-weight";
  std::string certificate_path;  // empty: no certificate written
};

CLI::App* add_solve_command(CLI::App& app, SolveOptions& options);

// Returns the exit code: kExitOk, or kExitNoPerfectMatching. Throws CliError.
int run_solve(const SolveOptions& options);

}  // namespace yoke::cli
