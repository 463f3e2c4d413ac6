// `yoke verify GRAPH CERT`: checks a certificate against an edge list with the engine's
// independent checker and prints the verdict as one JSON line.
#pragma once

#include <string>

#include <CLI/CLI.hpp>

namespace yoke::cli {

struct VerifyOptions {
  std::string graph_path;
  std::string certificate_path;
};

CLI::App* add_verify_command(CLI::App& app, VerifyOptions& options);

// Returns kExitOk when the certificate holds, kExitCertificateRejected when it does not.
// Throws CliError for unreadable input or a certificate that does not fit the graph.
int run_verify(const VerifyOptions& options);

}  // namespace yoke::cli
