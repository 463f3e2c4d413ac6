// The options `yoke send`, `yoke query` and `yoke watch` share: the pool, the daemon's
// endpoints (defaults of docs/contracts.md §5, the same as yoked's) and a timeout.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include <CLI/CLI.hpp>

namespace yoke::cli {

inline constexpr const char* kDefaultPool = "default";
inline constexpr const char* kDefaultIngestEndpoint = "tcp://127.0.0.1:7410";
inline constexpr const char* kDefaultPublishEndpoint = "tcp://127.0.0.1:7411";
inline constexpr const char* kDefaultQueryEndpoint = "tcp://127.0.0.1:7412";

// Rejects an empty value: an empty pool would mean "default" on the wire but subscribe to
// every pool, and an empty client id would turn off the daemon's retry protection.
extern const CLI::Validator kNotEmpty;

// --pool P.
CLI::Option* add_pool_option(CLI::App& command, std::string& pool);

// `flag` ENDPOINT[,ENDPOINT...], repeatable: the socket of each daemon of a cluster that the
// command may try (one daemon: one endpoint, as before). `socket` says which of the daemons'
// sockets it reaches, for the help. The default stays in `endpoints` unless the flag is given.
CLI::Option* add_endpoints_option(CLI::App& command, const std::string& flag,
                                  std::vector<std::string>& endpoints, const std::string& socket);

// --owner-wait-ms T: how long send and query follow NOT_OWNER refusals and silent endpoints
// (endpoint_route.h) before giving up.
inline constexpr std::uint64_t kDefaultOwnerWaitMs = 20000;
CLI::Option* add_owner_wait_option(CLI::App& command, std::uint64_t& owner_wait_ms);

// The text for --help footers of the commands that take several endpoints.
extern const char* const kEndpointsHelp;

// "yoke-COMMAND-HOST-PID": the client id a command that sends to the ingest socket uses when
// none is given.
std::string default_client_id(const std::string& command);

// --timeout-ms T, a whole number of milliseconds; `allow_zero` when 0 means "no timeout".
CLI::Option* add_timeout_option(CLI::App& command, std::uint64_t& timeout_ms,
                                const std::string& description, bool allow_zero);

}  // namespace yoke::cli
