#include <gtest/gtest.h>

#include <cstdio>
#include <filesystem>
#include <fstream>

#include <unistd.h>

#include "config_test_util.h"
#include "daemon/config/config_overrides.h"
#include "daemon/config/config_validate.h"
#include "daemon/config/endpoint_address.h"

namespace yoke::daemon {
namespace {

using testing::read_text;

// The message of the ConfigError validate_config throws for `config` plus a data dir.
std::string validate_error(DaemonConfig config) {
  config.data_dir = "/tmp/yoke-data";
  try {
    validate_config(config);
  } catch (const ConfigError& error) {
    return error.what();
  }
  return "";
}

std::string validate_error(const std::string& text) { return validate_error(read_text(text)); }

TEST(ConfigValidate, RequiresADataDir) {
  EXPECT_THROW(validate_config(DaemonConfig{}), ConfigError);
}

TEST(ConfigValidate, EndpointsMustBeDistinct) {
  EXPECT_EQ(validate_error("[endpoints]\npublish = \"tcp://127.0.0.1:7410\"\n"),
            "endpoints.publish and endpoints.ingest bind the same address "
            "(tcp://127.0.0.1:7410)");
  // "*" binds every interface, so it collides with loopback on the same port.
  EXPECT_EQ(validate_error("[endpoints]\nquery = \"tcp://*:7411\"\n"),
            "endpoints.query and endpoints.publish bind the same address (tcp://*:7411)");
  // The metrics listener is a TCP port like the others.
  EXPECT_EQ(validate_error("[endpoints]\nmetrics = \"127.0.0.1:7412\"\n"),
            "endpoints.metrics and endpoints.query bind the same address (127.0.0.1:7412)");
  EXPECT_EQ(validate_error("[endpoints]\ningest = \"ipc:///tmp/y\"\npublish = \"ipc:///tmp/y\"\n"),
            "endpoints.publish and endpoints.ingest bind the same address (ipc:///tmp/y)");
  // Same port on different hosts, or ipc beside tcp, is fine.
  EXPECT_EQ(validate_error("[endpoints]\npublish = \"tcp://10.0.0.1:7410\"\n"
                           "query = \"ipc:///tmp/q\"\n"),
            "");
}

TEST(ConfigValidate, EndpointsMustBeWellFormed) {
  EXPECT_EQ(validate_error("[endpoints]\ningest = \"127.0.0.1:7410\"\n"),
            "endpoints.ingest is '127.0.0.1:7410', not tcp://HOST:PORT or ipc://PATH");
  EXPECT_NE(validate_error("[endpoints]\npublish = \"tcp://127.0.0.1:0\"\n"), "");
  EXPECT_NE(validate_error("[endpoints]\nquery = \"tcp://127.0.0.1:65536\"\n"), "");
  EXPECT_NE(validate_error("[endpoints]\nquery = \"tcp://:7412\"\n"), "");
  EXPECT_NE(validate_error("[endpoints]\nquery = \"ipc://\"\n"), "");
  EXPECT_EQ(validate_error("[endpoints]\nmetrics = \"http://127.0.0.1:7413\"\n"),
            "endpoints.metrics is 'http://127.0.0.1:7413', not HOST:PORT");
}

// Settings made in code (a file's are refused by the reader, naming the line: config_file_test).
TEST(ConfigValidate, PoolSettingsMustStayExact) {
  // The max-cardinality offset for |w| = 2^50 passes 2^52 (PoolRegistry refuses it).
  DaemonConfig wide;
  wide.pools["wide"].mode = Mode::max_cardinality;
  wide.pools["wide"].limits.max_abs_weight = std::int64_t{1} << 50;
  const std::string declared = validate_error(wide);
  EXPECT_EQ(declared.rfind("pools.wide cannot stay exact: ", 0), 0u) << declared;
  // 2^22 vertices x 2^52 passes the 2^61 bound on the total weight.
  DaemonConfig heavy;
  heavy.pool_defaults.limits.max_abs_weight = std::int64_t{1} << 52;
  const std::string defaults = validate_error(heavy);
  EXPECT_EQ(defaults.rfind("pool_defaults cannot stay exact: ", 0), 0u) << defaults;
  heavy.pool_defaults.limits.max_vertices = 1000;
  EXPECT_EQ(validate_error(heavy), "");
}

// Declared pools have their slots reserved under max_pools: they must all fit.
TEST(ConfigValidate, DeclaredPoolsMustFitUnderMaxPools) {
  const std::string pools = "[pools.vardolune]\nmode = \"max-weight\"\n"
                            "[pools.quillory]\nmode = \"max-weight\"\n";
  EXPECT_EQ(validate_error("[limits]\nmax_pools = 1\n" + pools),
            "the config declares 2 pools but limits.max_pools is 1: every declared pool has a "
            "slot reserved");
  EXPECT_EQ(validate_error("[limits]\nmax_pools = 2\n" + pools), "");
}

TEST(ConfigValidate, AMessageMustFitAJournalRecord) {
  DaemonConfig config;
  config.limits.max_message_bytes = 33554432;
  EXPECT_EQ(validate_error(config),
            "limits.max_message_bytes (33554432) exceeds journal.max_record_bytes (16777216): "
            "an accepted batch must fit one journal record");
}

TEST(EndpointAddress, ParsesTcpIpcAndHostPort) {
  const auto tcp = parse_zmq_endpoint("tcp://[::1]:7410");
  ASSERT_TRUE(tcp.has_value());
  EXPECT_EQ(tcp->host, "[::1]");
  EXPECT_EQ(tcp->port, 7410u);
  const auto ipc = parse_zmq_endpoint("ipc:///run/yoke/ingest");
  ASSERT_TRUE(ipc.has_value());
  EXPECT_EQ(ipc->kind, BindAddress::Kind::ipc);
  EXPECT_EQ(ipc->path, "/run/yoke/ingest");
  EXPECT_FALSE(parse_zmq_endpoint("inproc://x").has_value());
  EXPECT_FALSE(parse_host_port("host:74a0").has_value());
  EXPECT_FALSE(parse_host_port("host:").has_value());
}

TEST(ConfigOverrides, FlagsWinOverTheFile) {
  const auto file = std::filesystem::temp_directory_path() /
                    ("yoke_config_test_" + std::to_string(::getpid()) + ".toml");
  {
    std::ofstream out(file);
    out << "[endpoints]\ningest = \"tcp://127.0.0.1:9000\"\npublish = \"tcp://127.0.0.1:9001\"\n"
           "[logging]\nformat = \"text\"\nlevel = \"warn\"\n";
  }
  ConfigOverrides overrides;
  overrides.data_dir = "/tmp/yoke-data";
  overrides.config_file = file;
  overrides.ingest = "tcp://127.0.0.1:9100";
  overrides.metrics = "127.0.0.1:9103";
  overrides.log_format = LogFormat::json;
  const DaemonConfig config = load_config(overrides);
  std::filesystem::remove(file);
  EXPECT_EQ(config.data_dir, std::filesystem::path("/tmp/yoke-data"));
  EXPECT_EQ(config.endpoints.ingest, "tcp://127.0.0.1:9100");   // flag over file
  EXPECT_EQ(config.endpoints.publish, "tcp://127.0.0.1:9001");  // file over default
  EXPECT_EQ(config.endpoints.query, "tcp://127.0.0.1:7412");    // default
  EXPECT_EQ(config.endpoints.metrics, "127.0.0.1:9103");
  EXPECT_EQ(config.logging.format, LogFormat::json);
  EXPECT_EQ(config.logging.level, LogLevel::warn);
}

TEST(ConfigOverrides, AreValidatedWithTheRest) {
  ConfigOverrides overrides;
  overrides.data_dir = "/tmp/yoke-data";
  overrides.query = "tcp://127.0.0.1:7410";  // the ingest default
  EXPECT_THROW(load_config(overrides), ConfigError);
  overrides.query.reset();
  EXPECT_NO_THROW(load_config(overrides));  // no file at all: the embedded defaults
  overrides.config_file = "/nonexistent/yoked.toml";
  EXPECT_THROW(load_config(overrides), ConfigError);
}

}  // namespace
}  // namespace yoke::daemon
