#include "client_options.h"

#include <unistd.h>

#include <array>

#include "number_options.h"

namespace yoke::cli {

std::string default_client_id(const std::string& command) {
  std::array<char, 256> host{};
  if (gethostname(host.data(), host.size() - 1) != 0) host[0] = '\0';
  return "yoke-" + command + "-" + std::string(host.data()) + "-" + std::to_string(getpid());
}

const CLI::Validator kNotEmpty(
    [](std::string& text) { return text.empty() ? std::string("must not be empty") : ""; }, "");

CLI::Option* add_pool_option(CLI::App& command, std::string& pool) {
  return command.add_option("--pool", pool, "The pool's name")
      ->check(kNotEmpty)
      ->capture_default_str();
}

namespace {

// "a,b": how the help shows a list default, in the form the option takes.
std::string joined(const std::vector<std::string>& endpoints) {
  std::string text;
  for (const std::string& endpoint : endpoints) text += (text.empty() ? "" : ",") + endpoint;
  return text;
}

}  // namespace

const char* const kEndpointsHelp =
    "Several daemons (a cluster): give each endpoint option a comma-separated list, or repeat\n"
    "it. Each pool is served by one daemon at a time; the others refuse its batches and\n"
    "queries with NOT_OWNER naming the daemon that serves it, and the command sends the same\n"
    "message there (a note on stderr says so: note: pool P moved to instance I (ENDPOINT)).\n"
    "While no daemon serves the pool (a takeover), and when an endpoint stays silent, the\n"
    "command tries the next endpoint after a short backoff, for at most --owner-wait-ms.";

CLI::Option* add_endpoints_option(CLI::App& command, const std::string& flag,
                                  std::vector<std::string>& endpoints,
                                  const std::string& socket) {
  return command
      .add_option(flag, endpoints,
                  socket + ": tcp://HOST:PORT or ipc://PATH; several: a comma-separated list "
                           "or the option repeated")
      ->delimiter(',')
      ->type_name("ENDPOINT")
      ->check(kNotEmpty)
      ->default_str(joined(endpoints));
}

CLI::Option* add_owner_wait_option(CLI::App& command, std::uint64_t& owner_wait_ms) {
  return command
      .add_option("--owner-wait-ms", owner_wait_ms,
                  "How long to look for the daemon that serves the pool (NOT_OWNER refusals, "
                  "silent endpoints) before giving up")
      ->check(kAtLeastOne)
      ->capture_default_str();
}

CLI::Option* add_timeout_option(CLI::App& command, std::uint64_t& timeout_ms,
                                const std::string& description, bool allow_zero) {
  return command.add_option("--timeout-ms", timeout_ms, description)
      ->check(allow_zero ? kNotNegative : kAtLeastOne)
      ->capture_default_str();
}

}  // namespace yoke::cli
