#include <gtest/gtest.h>

#include "config_test_util.h"
#include "daemon/config/config_validate.h"
#include "yoke/types.h"

namespace yoke::daemon {
namespace {

using testing::read_error;
using testing::read_text;

void expect_same_pool(const PoolSettings& a, const PoolSettings& b) {
  EXPECT_EQ(a.mode, b.mode);
  EXPECT_EQ(a.limits.max_vertices, b.limits.max_vertices);
  EXPECT_EQ(a.limits.max_edges, b.limits.max_edges);
  EXPECT_EQ(a.limits.max_abs_weight, b.limits.max_abs_weight);
  EXPECT_EQ(a.churn_bonus, b.churn_bonus);
}

void expect_same_cluster(const ClusterSettings& a, const ClusterSettings& b) {
  EXPECT_EQ(a.backend, b.backend);
  EXPECT_EQ(a.servers, b.servers);
  EXPECT_EQ(a.stream, b.stream);
  EXPECT_EQ(a.subject_prefix, b.subject_prefix);
  EXPECT_EQ(a.replicas, b.replicas);
  EXPECT_EQ(a.max_bytes, b.max_bytes);
  EXPECT_EQ(a.instance, b.instance);
  EXPECT_EQ(a.heartbeat, b.heartbeat);
  EXPECT_EQ(a.takeover, b.takeover);
  EXPECT_EQ(a.publish_timeout, b.publish_timeout);
  ASSERT_EQ(a.instances.size(), b.instances.size());
  for (const auto& [name, instance] : a.instances) {
    ASSERT_TRUE(b.instances.contains(name)) << name;
    const InstanceSettings& other = b.instances.at(name);
    EXPECT_EQ(instance.ingest, other.ingest);
    EXPECT_EQ(instance.query, other.query);
    EXPECT_EQ(instance.publish, other.publish);
    EXPECT_EQ(instance.owns, other.owns);
    EXPECT_EQ(instance.stands_by, other.stands_by);
  }
}

void expect_same(const DaemonConfig& a, const DaemonConfig& b) {
  EXPECT_EQ(a.data_dir, b.data_dir);
  EXPECT_EQ(a.endpoints.ingest, b.endpoints.ingest);
  EXPECT_EQ(a.endpoints.publish, b.endpoints.publish);
  EXPECT_EQ(a.endpoints.query, b.endpoints.query);
  EXPECT_EQ(a.endpoints.metrics, b.endpoints.metrics);
  EXPECT_EQ(a.batching.max_delay_us, b.batching.max_delay_us);
  EXPECT_EQ(a.batching.max_events, b.batching.max_events);
  EXPECT_EQ(a.service.repair_threads, b.service.repair_threads);
  EXPECT_EQ(a.service.worker_nice, b.service.worker_nice);
  EXPECT_EQ(a.journal.durability, b.journal.durability);
  EXPECT_EQ(a.journal.segment_bytes, b.journal.segment_bytes);
  EXPECT_EQ(a.journal.max_record_bytes, b.journal.max_record_bytes);
  EXPECT_EQ(a.journal.lock_wait_ms, b.journal.lock_wait_ms);
  EXPECT_EQ(a.snapshots.interval_seconds, b.snapshots.interval_seconds);
  EXPECT_EQ(a.snapshots.keep, b.snapshots.keep);
  EXPECT_EQ(a.snapshots.after_events, b.snapshots.after_events);
  EXPECT_EQ(a.limits.max_message_bytes, b.limits.max_message_bytes);
  EXPECT_EQ(a.limits.max_events_per_batch, b.limits.max_events_per_batch);
  EXPECT_EQ(a.limits.max_pools, b.limits.max_pools);
  EXPECT_EQ(a.ledger.batches_per_client, b.ledger.batches_per_client);
  EXPECT_EQ(a.ledger.idle_seconds, b.ledger.idle_seconds);
  EXPECT_EQ(a.ledger.max_clients_per_pool, b.ledger.max_clients_per_pool);
  expect_same_pool(a.pool_defaults, b.pool_defaults);
  ASSERT_EQ(a.pools.size(), b.pools.size());
  for (const auto& [name, settings] : a.pools) {
    ASSERT_TRUE(b.pools.contains(name)) << name;
    expect_same_pool(settings, b.pools.at(name));
  }
  EXPECT_TRUE(a.logging == b.logging);
  expect_same_cluster(a.cluster, b.cluster);
}

TEST(ConfigDefaults, AreTheDocumentedOnesAndStartWithNoFile) {
  const DaemonConfig config;
  EXPECT_EQ(config.endpoints.ingest, "tcp://127.0.0.1:7410");
  EXPECT_EQ(config.endpoints.publish, "tcp://127.0.0.1:7411");
  EXPECT_EQ(config.endpoints.query, "tcp://127.0.0.1:7412");
  EXPECT_EQ(config.endpoints.metrics, "127.0.0.1:7413");
  EXPECT_EQ(config.journal.durability, journal::Durability::group);
  EXPECT_EQ(config.journal.lock_wait_ms, 10000u);
  EXPECT_EQ(config.pool_defaults.mode, Mode::max_weight);
  EXPECT_EQ(config.pool_defaults.limits.max_abs_weight, 0);
  EXPECT_TRUE(config.pools.empty());
  EXPECT_EQ(config.logging.format, LogFormat::text);
  EXPECT_FALSE(config.logging.file.has_value());
  EXPECT_EQ(config.cluster.backend, StorageBackend::local);
  EXPECT_TRUE(config.cluster.servers.empty());
  EXPECT_EQ(config.cluster.stream, "yoke");
  EXPECT_EQ(config.cluster.subject_prefix, "yoke");
  EXPECT_EQ(config.cluster.replicas, 3);
  EXPECT_EQ(config.cluster.max_bytes, 1073741824);
  EXPECT_EQ(config.cluster.instance, "");
  EXPECT_EQ(config.cluster.heartbeat, std::chrono::milliseconds(500));
  EXPECT_EQ(config.cluster.takeover, std::chrono::milliseconds(3000));
  EXPECT_EQ(config.cluster.publish_timeout, std::chrono::milliseconds(5000));
  EXPECT_TRUE(config.cluster.instances.empty());
  EXPECT_EQ(config.ledger.batches_per_client, 64u);
  EXPECT_EQ(config.ledger.idle_seconds, 86400u);
  EXPECT_EQ(config.ledger.max_clients_per_pool, 4096u);

  DaemonConfig with_dir;
  with_dir.data_dir = "/tmp/yoke-data";
  EXPECT_NO_THROW(validate_config(with_dir));
  expect_same(read_text(""), DaemonConfig{});  // an empty file changes nothing
}

TEST(ConfigSample, GivesTheEmbeddedDefaultsPlusItsExamplePool) {
  DaemonConfig from_sample;
  read_config_file(YOKE_EXAMPLE_CONFIG, from_sample);
  DaemonConfig expected;
  PoolSettings airport = expected.pool_defaults;
  airport.mode = Mode::max_cardinality;
  airport.limits.max_vertices = 100000;
  airport.limits.max_edges = 10000000;
  expected.pools["airport"] = airport;
  expect_same(from_sample, expected);
  from_sample.data_dir = "/tmp/yoke-data";
  EXPECT_NO_THROW(validate_config(from_sample));
}

TEST(ConfigFile, ReadsEverySection) {
  const DaemonConfig config = read_text(R"(
[endpoints]
ingest = "ipc:///tmp/yoke-ingest"
metrics = "[::1]:9100"
[batching]
max_delay_us = 0
max_events = 7
[service]
repair_threads = 3
worker_nice = 12
[journal]
durability = "every-batch"
segment_bytes = 2097152
max_record_bytes = 8388608
lock_wait_ms = 250
[snapshots]
interval_seconds = 60
keep = 5
after_events = 0
[limits]
max_message_bytes = 65536
max_events_per_batch = 500
max_pools = 3
[ledger]
batches_per_client = 8
idle_seconds = 0
max_clients_per_pool = 100
[pool_defaults]
mode = "perfect"
max_vertices = 1000
[pools.night-shift]
max_abs_weight = 1000000
churn_bonus = 250
[pools."quay 4"]
mode = "max-weight"
[logging]
level = "debug"
format = "json"
file = "/var/log/yoked.log"
)");
  EXPECT_EQ(config.endpoints.ingest, "ipc:///tmp/yoke-ingest");
  EXPECT_EQ(config.endpoints.publish, "tcp://127.0.0.1:7411");  // left out: the default
  EXPECT_EQ(config.endpoints.metrics, "[::1]:9100");
  EXPECT_EQ(config.batching.max_delay_us, 0u);
  EXPECT_EQ(config.batching.max_events, 7u);
  EXPECT_EQ(config.service.repair_threads, 3u);
  EXPECT_EQ(config.service.worker_nice, 12u);
  EXPECT_EQ(config.journal.durability, journal::Durability::every_batch);
  EXPECT_EQ(config.journal.segment_bytes, 2097152u);
  EXPECT_EQ(config.journal.max_record_bytes, 8388608u);
  EXPECT_EQ(config.journal.lock_wait_ms, 250u);
  EXPECT_EQ(config.snapshots.interval_seconds, 60u);
  EXPECT_EQ(config.snapshots.keep, 5u);
  EXPECT_EQ(config.snapshots.after_events, 0u);
  EXPECT_EQ(config.limits.max_message_bytes, 65536u);
  EXPECT_EQ(config.limits.max_events_per_batch, 500u);
  EXPECT_EQ(config.limits.max_pools, 3u);
  EXPECT_EQ(config.ledger.batches_per_client, 8u);
  EXPECT_EQ(config.ledger.idle_seconds, 0u);
  EXPECT_EQ(config.ledger.max_clients_per_pool, 100u);
  EXPECT_EQ(config.pool_defaults.mode, Mode::perfect);
  // A declared pool starts from [pool_defaults], wherever the tables sit in the file.
  const PoolSettings& night = config.pools.at("night-shift");
  EXPECT_EQ(night.mode, Mode::perfect);
  EXPECT_EQ(night.limits.max_vertices, 1000u);
  EXPECT_EQ(night.limits.max_abs_weight, 1000000);
  EXPECT_EQ(night.churn_bonus, 250);
  EXPECT_EQ(config.pools.at("quay 4").churn_bonus, 0);
  EXPECT_EQ(config.pools.at("quay 4").mode, Mode::max_weight);
  EXPECT_EQ(config.logging.level, LogLevel::debug);
  EXPECT_EQ(config.logging.format, LogFormat::json);
  EXPECT_EQ(config.logging.file, std::filesystem::path("/var/log/yoked.log"));
  EXPECT_FALSE(read_text("[logging]\nfile = \"\"\n").logging.file.has_value());
}

TEST(ConfigFile, UnknownKeysAreErrorsNamingKeyAndLine) {
  EXPECT_EQ(read_error("[journal]\ndurability = \"group\"\ndurabilty = \"none\"\n"),
            "t.toml:3: unknown key 'journal.durabilty'");
  EXPECT_EQ(read_error("# comment\n[jornal]\nsegment_bytes = 2097152\n"),
            "t.toml:2: unknown key 'jornal'");
  EXPECT_EQ(read_error("data_dir = \"/x\"\n"), "t.toml:1: unknown key 'data_dir'");
  EXPECT_EQ(read_error("[pools.a]\nmode = \"perfect\"\nmax_vertex = 5\n"),
            "t.toml:3: unknown key 'pools.a.max_vertex'");
  // Of two unknown keys, the first in the file is named (the table itself is sorted).
  EXPECT_EQ(read_error("[limits]\nzz = 1\naa = 2\n"), "t.toml:2: unknown key 'limits.zz'");
}

TEST(ConfigFile, WrongTypesAreErrorsNamingKeyAndLine) {
  EXPECT_EQ(read_error("[batching]\nmax_delay_us = \"1000\"\n"),
            "t.toml:2: 'batching.max_delay_us' must be an integer, not a string");
  EXPECT_EQ(read_error("[batching]\n\nmax_events = 1.5\n"),
            "t.toml:3: 'batching.max_events' must be an integer, not a floating-point number");
  EXPECT_EQ(read_error("[endpoints]\ningest = 7410\n"),
            "t.toml:2: 'endpoints.ingest' must be a string, not an integer");
  EXPECT_EQ(read_error("batching = 5\n"), "t.toml:1: 'batching' must be a table, not an integer");
  EXPECT_EQ(read_error("[pools]\nairport = true\n"),
            "t.toml:2: 'pools.airport' must be a table, not a boolean");
  EXPECT_EQ(read_error("[logging]\nfile = [\"a\"]\n"),
            "t.toml:2: 'logging.file' must be a string, not an array");
}

TEST(ConfigFile, ValuesOutOfRangeAreErrors) {
  EXPECT_EQ(read_error("[batching]\nmax_delay_us = 5000000\n"),
            "t.toml:2: 'batching.max_delay_us' is 5000000, out of range 0..1000000");
  EXPECT_EQ(read_error("[service]\nworker_nice = 20\n"),
            "t.toml:2: 'service.worker_nice' is 20, out of range 0..19");
  EXPECT_EQ(read_error("[service]\nworker_nice = -1\n"),
            "t.toml:2: 'service.worker_nice' is -1, out of range 0..19");
  EXPECT_EQ(read_error("[snapshots]\nkeep = -1\n"),
            "t.toml:2: 'snapshots.keep' is -1, out of range 1..1000");
  EXPECT_EQ(read_error("[snapshots]\ninterval_seconds = 0\n"),
            "t.toml:2: 'snapshots.interval_seconds' is 0, out of range 1..604800");
  EXPECT_EQ(read_error("[journal]\nmax_record_bytes = 2147483648\n"),
            "t.toml:2: 'journal.max_record_bytes' is 2147483648, out of range 1024..1073741824");
  EXPECT_EQ(read_error("[pool_defaults]\nmax_vertices = 0\n"),
            "t.toml:2: 'pool_defaults.max_vertices' is 0, out of range 2..1073741823");
  EXPECT_EQ(read_error("[pool_defaults]\nmax_abs_weight = -3\n"),
            "t.toml:2: 'pool_defaults.max_abs_weight' is -3, out of range 0..4503599627370496");
  EXPECT_EQ(read_error("[pools.a]\nchurn_bonus = -1\n"),
            "t.toml:2: 'pools.a.churn_bonus' is -1, out of range 0..4503599627370496");
  EXPECT_EQ(read_error("[ledger]\nbatches_per_client = 0\n"),
            "t.toml:2: 'ledger.batches_per_client' is 0, out of range 1..4096");
  EXPECT_EQ(read_error("[ledger]\nmax_clients_per_pool = 0\n"),
            "t.toml:2: 'ledger.max_clients_per_pool' is 0, out of range 1..10000000");
  EXPECT_EQ(read_error("[ledger]\nidle_seconds = -5\n"),
            "t.toml:2: 'ledger.idle_seconds' is -5, out of range 0..316224000");
  EXPECT_EQ(read_error("[ledger]\nforget_after = 3\n"),
            "t.toml:2: unknown key 'ledger.forget_after'");
}

// The engine's own ranges (resolve_limits), refused by the reader so that the message names
// the file, line and key (they were "cannot stay exact" errors with no line).
TEST(ConfigFile, PoolLimitsTakeTheEnginesRanges) {
  EXPECT_EQ(read_error("[pool_defaults]\nmax_vertices = 1\n"),
            "t.toml:2: 'pool_defaults.max_vertices' is 1, out of range 2..1073741823");
  EXPECT_EQ(read_error("[pools.a]\nmax_vertices = 1073741824\n"),
            "t.toml:2: 'pools.a.max_vertices' is 1073741824, out of range 2..1073741823");
  EXPECT_EQ(read_error("[pool_defaults]\n\nmax_edges = 1073741824\n"),
            "t.toml:3: 'pool_defaults.max_edges' is 1073741824, out of range 1..1073741823");
  EXPECT_EQ(read_error("[pool_defaults]\nmax_vertices = 2\nmax_edges = 1073741823\n"), "");
  EXPECT_EQ(read_error("[pool_defaults]\nmax_vertices = 1073741823\nmax_edges = 1\n"), "");
}

// Keys each in range that cannot stay exact together name the last of them in the file.
TEST(ConfigFile, PoolKeysThatCannotStayExactTogetherNameTheirLine) {
  const std::string bonus =
      read_error("[pool_defaults]\nmax_abs_weight = 1099511627776\nchurn_bonus = 1\n");
  EXPECT_EQ(bonus.rfind("t.toml:3: 'pool_defaults.churn_bonus' cannot stay exact: "
                        "max_abs_weight = 1099511627776 exceeds",
                        0),
            0u)
      << bonus;
  const std::string weight = read_error("[pool_defaults]\nmax_abs_weight = 1099511627777\n");
  EXPECT_EQ(weight.rfind("t.toml:2: 'pool_defaults.max_abs_weight' cannot stay exact: ", 0), 0u)
      << weight;
  // A declared pool that changes only its mode: the offset of max-cardinality passes 2^52.
  const std::string mode = read_error(
      "[pool_defaults]\nmax_abs_weight = 1099511627776\n[pools.wide]\nmode = "
      "\"max-cardinality\"\n");
  EXPECT_EQ(mode.rfind("t.toml:4: 'pools.wide.mode' cannot stay exact: ", 0), 0u) << mode;
  EXPECT_EQ(read_error("[pool_defaults]\nmax_vertices = 2\nmax_abs_weight = 4503599627370496\n"),
            "");
}

TEST(ConfigFile, AMessageLimitPastAJournalRecordNamesItsLine) {
  EXPECT_EQ(read_error("[journal]\nmax_record_bytes = 1048576\n[limits]\n"
                       "max_message_bytes = 2097152\n"),
            "t.toml:4: 'limits.max_message_bytes' is 2097152, above journal.max_record_bytes "
            "(1048576): an accepted batch must fit one journal record");
  // Only the record's size given: the default message limit (4 MiB) no longer fits it.
  EXPECT_EQ(read_error("[journal]\nmax_record_bytes = 1048576\n"),
            "t.toml:2: 'journal.max_record_bytes' is 1048576, below limits.max_message_bytes "
            "(4194304): an accepted batch must fit one journal record");
  EXPECT_EQ(read_error("[journal]\nmax_record_bytes = 1024\n[limits]\nmax_message_bytes = 1024\n"),
            "");
}

TEST(ConfigFile, UnknownNamesOfModesPoliciesAndLevelsAreErrors) {
  EXPECT_EQ(read_error("[pool_defaults]\nmode = \"max_weight\"\n"),
            "t.toml:2: 'pool_defaults.mode' is 'max_weight', not one of max-weight, "
            "max-cardinality, perfect");
  EXPECT_EQ(read_error("[pools.x]\nmode = \"Perfect\"\n"),
            "t.toml:2: 'pools.x.mode' is 'Perfect', not one of max-weight, max-cardinality, "
            "perfect");
  EXPECT_EQ(read_error("[journal]\ndurability = \"fsync\"\n"),
            "t.toml:2: 'journal.durability' is 'fsync', not one of every-batch, group, none");
  EXPECT_EQ(read_error("[logging]\nlevel = \"verbose\"\n"),
            "t.toml:2: 'logging.level' is 'verbose', not one of trace, debug, info, warn, "
            "error, critical, off");
  EXPECT_EQ(read_error("[logging]\nformat = \"yaml\"\n"),
            "t.toml:2: 'logging.format' is 'yaml', not one of text, json");
}

TEST(ConfigFile, SyntaxErrorsGiveLineAndColumn) {
  const std::string message = read_error("[batching]\nmax_events = = 3\n");
  EXPECT_EQ(message.rfind("t.toml:2:", 0), 0u) << message;
  EXPECT_NE(read_error("[batching]\nmax_events = 3\nmax_events = 4\n").find("t.toml:3:"),
            std::string::npos);  // a key given twice
}

TEST(ConfigFile, MissingFileIsAnError) {
  DaemonConfig config;
  EXPECT_THROW(read_config_file("/nonexistent/yoked.toml", config), ConfigError);
}

}  // namespace
}  // namespace yoke::daemon
