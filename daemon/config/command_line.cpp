#include "command_line.h"

#include <sstream>

#include <CLI/CLI.hpp>

namespace yoke::daemon {

CommandLine parse_command_line(int argc, const char* const* argv) {
  CLI::App app{"yoked: the streaming maximum-weight matching daemon"};
  app.name("yoked");
  app.set_version_flag("--version", "yoked " YOKE_VERSION);
  std::string data_dir, config_file, ingest, publish, query, metrics, log_format;
  app.add_option("--data-dir", data_dir, "directory of the journal and snapshots")->required();
  app.add_option("--config", config_file, "TOML config file (see yoked.example.toml)");
  app.add_option("--ingest", ingest, "ingest endpoint, tcp://HOST:PORT or ipc://PATH");
  app.add_option("--publish", publish, "publish endpoint, tcp://HOST:PORT or ipc://PATH");
  app.add_option("--query", query, "query endpoint, tcp://HOST:PORT or ipc://PATH");
  app.add_option("--metrics", metrics, "metrics and health HTTP address, HOST:PORT");
  app.add_option("--log-format", log_format, "text or json")
      ->check(CLI::IsMember({"text", "json"}));

  CommandLine result;
  try {
    app.parse(argc, argv);
  } catch (const CLI::ParseError& error) {
    std::ostringstream out, err;
    result.exit_code = app.exit(error, out, err);
    result.message = out.str() + err.str();
    return result;
  }
  ConfigOverrides& overrides = result.overrides;
  overrides.data_dir = data_dir;
  // An option given on the command line wins, even when its value equals the default.
  if (app.count("--config") != 0) overrides.config_file = config_file;
  if (app.count("--ingest") != 0) overrides.ingest = ingest;
  if (app.count("--publish") != 0) overrides.publish = publish;
  if (app.count("--query") != 0) overrides.query = query;
  if (app.count("--metrics") != 0) overrides.metrics = metrics;
  if (app.count("--log-format") != 0) overrides.log_format = parse_log_format(log_format);
  return result;
}

}  // namespace yoke::daemon
