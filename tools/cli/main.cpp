// The `yoke` command line: parses the invocation, runs one command, and turns every failure
// into a message on stderr and a documented exit code (never an uncaught exception).
#include <iostream>
#include <new>

#include <CLI/CLI.hpp>

#include "cli_error.h"
#include "yoke/types.h"
#include "gen_command.h"
#include "query_command.h"
#include "replay_command.h"
#include "retire_command.h"
#include "send_command.h"
#include "solve_command.h"
#include "verify_command.h"
#include "watch_command.h"

namespace {

using namespace yoke::cli;

constexpr const char* kExitCodesHelp =
    "Exit codes: 0 done; 1 verify rejected the certificate, or replay --verify found a commit\n"
    "whose certificate fails; 2 error in the invocation or the input (the message names\n"
    "FILE:LINE; for replay also a batch the pool rejects; for send, query and watch also an\n"
    "error the daemon answered); 3 solve --mode perfect found no perfect matching; 4 send,\n"
    "query or watch got no answer from the daemon in time (send: after its retries).";

int report_usage_error(const CLI::App& app, const CLI::ParseError& error) {
  if (error.get_exit_code() == 0) return app.exit(error);  // --help, --version
  std::cerr << "error: " << error.what() << "\n"
            << "Run 'yoke --help' (or 'yoke COMMAND --help') for usage.\n";
  return kExitError;
}

int report_error(const char* kind, const char* message, int exit_code = kExitError) {
  std::cerr << "error: " << kind << message << "\n";
  return exit_code;
}

}  // namespace

int main(int argc, char** argv) {
  // All output goes through iostreams; unsynchronised they are as fast as stdio.
  std::ios::sync_with_stdio(false);

  CLI::App app("yoke: exact maximum-weight matchings with a certificate anyone can check", "yoke");
  app.set_version_flag("--version", "yoke " YOKE_VERSION);
  app.require_subcommand(1);
  app.footer(kExitCodesHelp);

  SolveOptions solve_options;
  VerifyOptions verify_options;
  GenOptions gen_options;
  ReplayOptions replay_options;
  SendOptions send_options;
  WatchOptions watch_options;
  QueryOptions query_options;
  RetireOptions retire_options;
  const CLI::App* solve = add_solve_command(app, solve_options);
  const CLI::App* verify = add_verify_command(app, verify_options);
  const CLI::App* gen = add_gen_command(app, gen_options);
  const CLI::App* replay = add_replay_command(app, replay_options);
  const CLI::App* send = add_send_command(app, send_options);
  const CLI::App* watch = add_watch_command(app, watch_options);
  const CLI::App* query = add_query_command(app, query_options);
  const CLI::App* retire = add_retire_command(app, retire_options);

  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& error) {
    return report_usage_error(app, error);
  }

  try {
    if (solve->parsed()) return run_solve(solve_options);
    if (verify->parsed()) return run_verify(verify_options);
    if (gen->parsed()) return run_gen(gen_options);
    if (replay->parsed()) return run_replay(replay_options);
    if (send->parsed()) return run_send(send_options);
    if (watch->parsed()) return run_watch(watch_options);
    if (query->parsed()) return run_query(query_options);
    if (retire->parsed()) return run_retire(retire_options);
    return report_error("", "no command given");
  } catch (const UnavailableError& error) {
    return report_error("", error.what(), kExitUnavailable);
  } catch (const CliError& error) {
    return report_error("", error.what());
  } catch (const yoke::InputError& error) {
    return report_error("", error.what());
  } catch (const std::bad_alloc&) {
    return report_error("", "out of memory");
  } catch (const std::exception& error) {
    return report_error("internal error: ", error.what());
  }
}
