#include "client_options.h"

#include "number_options.h"

namespace yoke::cli {

const CLI::Validator kNotEmpty(
    [](std::string& text) { return text.empty() ? std::string("must not be empty") : ""; }, "");

CLI::Option* add_pool_option(CLI::App& command, std::string& pool) {
  return command.add_option("--pool", pool, "The pool's name")
      ->check(kNotEmpty)
      ->capture_default_str();
}

CLI::Option* add_endpoint_option(CLI::App& command, const std::string& flag,
                                 std::string& endpoint, const std::string& socket) {
  return command.add_option(flag, endpoint, socket + ": tcp://HOST:PORT or ipc://PATH")
      ->check(kNotEmpty)
      ->capture_default_str();
}

CLI::Option* add_timeout_option(CLI::App& command, std::uint64_t& timeout_ms,
                                const std::string& description, bool allow_zero) {
  return command.add_option("--timeout-ms", timeout_ms, description)
      ->check(allow_zero ? kNotNegative : kAtLeastOne)
      ->capture_default_str();
}

}  // namespace yoke::cli
