// The [cluster] section: reading it, every error of its keys (with file, line and key), the
// checks of the whole (owners, standbys, this instance), and the commented example of
// daemon/yoked.example.toml read as a real cluster config.
#include <gtest/gtest.h>

#include <fstream>
#include <sstream>

#include "config_test_util.h"
#include "daemon/config/config_validate.h"

namespace yoke::daemon {
namespace {

using testing::read_error;
using testing::read_text;

// Two instances, each owning one pool and standing by for the other's, plus `extra` lines
// at the end of [cluster] (before the instance tables).
std::string two_instances(const std::string& extra = "") {
  return "[cluster]\nbackend = \"jetstream\"\nservers = [\"nats://127.0.0.1:4222\"]\n"
         "instance = \"east\"\n" + extra +
         "[cluster.instances.east]\ningest = \"tcp://10.0.0.1:7410\"\n"
         "query = \"tcp://10.0.0.1:7412\"\npublish = \"tcp://10.0.0.1:7411\"\n"
         "owns = [\"quillory\"]\nstands_by = [\"quillory-plain\"]\n"
         "[cluster.instances.west]\ningest = \"tcp://10.0.0.2:7410\"\n"
         "query = \"tcp://10.0.0.2:7412\"\npublish = \"ipc:///run/yoke/west-diffs\"\n"
         "owns = [\"quillory-plain\", \"harbour\"]\nstands_by = [\"quillory\"]\n";
}

// The ConfigError validate_config throws for the config (with a data dir), "" when none.
std::string whole_config_error(DaemonConfig config) {
  config.data_dir = "/tmp/yoke-data";
  try {
    validate_config(config);
  } catch (const ConfigError& error) {
    return error.what();
  }
  return "";
}

std::string whole_config_error(const std::string& text) {
  return whole_config_error(read_text(text));
}

TEST(ConfigCluster, ReadsEveryKeyAndTheInstances) {
  const DaemonConfig config = read_text(two_instances(
      "stream = \"yoke-prod_2\"\nsubject_prefix = \"acme.yoke\"\nreplicas = 5\n"
      "max_bytes = 2097152\nheartbeat_ms = 200\ntakeover_ms = 401\npublish_timeout_ms = 100\n"));
  const ClusterSettings& cluster = config.cluster;
  EXPECT_EQ(cluster.backend, StorageBackend::jetstream);
  EXPECT_EQ(cluster.servers, std::vector<std::string>{"nats://127.0.0.1:4222"});
  EXPECT_EQ(cluster.stream, "yoke-prod_2");
  EXPECT_EQ(cluster.subject_prefix, "acme.yoke");
  EXPECT_EQ(cluster.replicas, 5);
  EXPECT_EQ(cluster.max_bytes, 2097152);
  EXPECT_EQ(cluster.instance, "east");
  EXPECT_EQ(cluster.heartbeat, std::chrono::milliseconds(200));
  EXPECT_EQ(cluster.takeover, std::chrono::milliseconds(401));
  EXPECT_EQ(cluster.publish_timeout, std::chrono::milliseconds(100));
  ASSERT_EQ(cluster.instances.size(), 2u);
  const InstanceSettings& west = cluster.instances.at("west");
  EXPECT_EQ(west.ingest, "tcp://10.0.0.2:7410");
  EXPECT_EQ(west.query, "tcp://10.0.0.2:7412");
  EXPECT_EQ(west.publish, "ipc:///run/yoke/west-diffs");
  EXPECT_EQ(west.owns, (std::vector<std::string>{"quillory-plain", "harbour"}));
  EXPECT_EQ(west.stands_by, std::vector<std::string>{"quillory"});
  EXPECT_EQ(whole_config_error(config), "");
  // Lists may be empty or left out.
  EXPECT_TRUE(read_text("[cluster]\nservers = []\n").cluster.servers.empty());
}

TEST(ConfigCluster, OwnersAndStandbysByPool) {
  DaemonConfig config = read_text(two_instances());
  config.cluster.instances["north"] = config.cluster.instances.at("east");
  config.cluster.instances["north"].owns.clear();
  config.cluster.instances["north"].stands_by = {"harbour", "quillory"};
  const ClusterSettings& cluster = config.cluster;
  EXPECT_EQ(cluster.owner_of("quillory"), "east");
  EXPECT_EQ(cluster.owner_of("harbour"), "west");
  EXPECT_EQ(cluster.owner_of("lagoon"), std::nullopt);
  // Instance name order is the takeover rank, whatever order the tables are in.
  EXPECT_EQ(cluster.standbys_of("quillory"), (std::vector<std::string>{"north", "west"}));
  EXPECT_EQ(cluster.standbys_of("harbour"), std::vector<std::string>{"north"});
  EXPECT_TRUE(cluster.standbys_of("lagoon").empty());
}

TEST(ConfigCluster, UnknownKeysAndWrongTypesNameKeyAndLine) {
  EXPECT_EQ(read_error("[cluster]\nbackend = \"local\"\nreplica = 3\n"),
            "t.toml:3: unknown key 'cluster.replica'");
  EXPECT_EQ(read_error("[cluster.instances.east]\ningest = \"tcp://a:1\"\nquery = \"tcp://a:2\"\n"
                       "publish = \"tcp://a:3\"\nown = [\"x\"]\n"),
            "t.toml:5: unknown key 'cluster.instances.east.own'");
  EXPECT_EQ(read_error("[cluster]\nservers = \"nats://127.0.0.1:4222\"\n"),
            "t.toml:2: 'cluster.servers' must be an array of strings, not a string");
  EXPECT_EQ(read_error("[cluster]\nservers = [\"nats://a:1\", 4222]\n"),
            "t.toml:2: 'cluster.servers' must be an array of strings, but item 2 is an integer");
  EXPECT_EQ(read_error("[cluster]\nheartbeat_ms = \"500\"\n"),
            "t.toml:2: 'cluster.heartbeat_ms' must be an integer, not a string");
  EXPECT_EQ(read_error("[cluster]\ninstances = [\"east\"]\n"),
            "t.toml:2: 'cluster.instances' must be a table, not an array");
  EXPECT_EQ(read_error("[cluster.instances]\neast = 1\n"),
            "t.toml:2: 'cluster.instances.east' must be a table, not an integer");
}

TEST(ConfigCluster, ValuesOutOfRangeAreErrors) {
  EXPECT_EQ(read_error("[cluster]\nreplicas = 0\n"),
            "t.toml:2: 'cluster.replicas' is 0, out of range 1..5");
  EXPECT_EQ(read_error("[cluster]\nreplicas = 6\n"),
            "t.toml:2: 'cluster.replicas' is 6, out of range 1..5");
  EXPECT_EQ(read_error("[cluster]\nmax_bytes = 1000\n"),
            "t.toml:2: 'cluster.max_bytes' is 1000, out of range 1048576..1125899906842624");
  EXPECT_EQ(read_error("[cluster]\nheartbeat_ms = 49\n"),
            "t.toml:2: 'cluster.heartbeat_ms' is 49, out of range 50..60000");
  EXPECT_EQ(read_error("[cluster]\nheartbeat_ms = 60001\n"),
            "t.toml:2: 'cluster.heartbeat_ms' is 60001, out of range 50..60000");
  EXPECT_EQ(read_error("[cluster]\ntakeover_ms = 600001\n"),
            "t.toml:2: 'cluster.takeover_ms' is 600001, out of range 1..600000");
  EXPECT_EQ(read_error("[cluster]\npublish_timeout_ms = 99\n"),
            "t.toml:2: 'cluster.publish_timeout_ms' is 99, out of range 100..600000");
}

TEST(ConfigCluster, NamesAndWordsMustBeWellFormed) {
  EXPECT_EQ(read_error("[cluster]\nbackend = \"nats\"\n"),
            "t.toml:2: 'cluster.backend' is 'nats', not one of local, jetstream");
  EXPECT_EQ(read_error("[cluster]\nstream = \"yoke.prod\"\n"),
            "t.toml:2: 'cluster.stream' may hold only ASCII letters, digits, '-' and '_'");
  EXPECT_EQ(read_error("[cluster]\nstream = \"\"\n"), "t.toml:2: 'cluster.stream' is empty");
  EXPECT_EQ(read_error("[cluster]\nsubject_prefix = \"acme..yoke\"\n"),
            "t.toml:2: 'cluster.subject_prefix' must be subject tokens of ASCII letters, "
            "digits, '-' and '_' joined by '.'");
  EXPECT_NE(read_error("[cluster]\nsubject_prefix = \"yoke.>\"\n"), "");
  EXPECT_NE(read_error("[cluster]\nsubject_prefix = \"yoke.\"\n"), "");
  EXPECT_EQ(read_error("[cluster]\ninstance = \"east coast\"\n"),
            "t.toml:2: 'cluster.instance' may hold only ASCII letters, digits, '-' and '_'");
  EXPECT_EQ(read_error("[cluster]\nservers = [\"nats://a:1,nats://b:1\"]\n"),
            "t.toml:2: 'cluster.servers' item 1 ('nats://a:1,nats://b:1') is not a server URL "
            "(nats://HOST:PORT)");
  EXPECT_EQ(read_error("\n[cluster.instances.\"east.1\"]\ningest = \"tcp://a:1\"\n"),
            "t.toml:2: 'cluster.instances.east.1' is not an instance name: it may hold only "
            "ASCII letters, digits, '-' and '_'");
}

TEST(ConfigCluster, InstanceTablesAdvertiseReachableEndpointsAndPlainPoolNames) {
  const std::string head = "[cluster.instances.east]\n";
  const std::string endpoints =
      "ingest = \"tcp://10.0.0.1:7410\"\nquery = \"tcp://10.0.0.1:7412\"\n"
      "publish = \"tcp://10.0.0.1:7411\"\n";
  EXPECT_EQ(read_error(head + "ingest = \"tcp://a:1\"\nquery = \"tcp://a:2\"\n"),
            "t.toml:1: 'cluster.instances.east' has no 'publish': every instance advertises its "
            "ingest, query and publish endpoints");
  EXPECT_EQ(read_error(head + "ingest = \"tcp://*:7410\"\n"),
            "t.toml:2: 'cluster.instances.east.ingest' is 'tcp://*:7410': an advertised "
            "endpoint names a host clients can reach, not every interface");
  EXPECT_EQ(read_error(head + "ingest = \"tcp://a:1\"\nquery = \"tcp://0.0.0.0:7412\"\n"),
            "t.toml:3: 'cluster.instances.east.query' is 'tcp://0.0.0.0:7412': an advertised "
            "endpoint names a host clients can reach, not every interface");
  EXPECT_EQ(read_error(head + "ingest = \"10.0.0.1:7410\"\n"),
            "t.toml:2: 'cluster.instances.east.ingest' is '10.0.0.1:7410', not tcp://HOST:PORT "
            "or ipc://PATH");
  EXPECT_EQ(read_error(head + endpoints + "owns = [\"quillory\", \"quay 4\"]\n"),
            "t.toml:5: 'cluster.instances.east.owns' item 2 ('quay 4') is not a pool name: a "
            "pool name may hold only ASCII letters, digits and . _ - : (byte 32 is not allowed)");
  EXPECT_EQ(read_error(head + endpoints + "stands_by = [\"\"]\n"),
            "t.toml:5: 'cluster.instances.east.stands_by' item 1 ('') is not a pool name: a "
            "pool name is not empty");
  EXPECT_EQ(read_error(head + endpoints + "owns = \"quillory\"\n"),
            "t.toml:5: 'cluster.instances.east.owns' must be an array of strings, not a string");
}

TEST(ConfigCluster, JetstreamNeedsServersAndThisInstancesTable) {
  const std::string jetstream = "[cluster]\nbackend = \"jetstream\"\n";
  const std::string servers = "servers = [\"nats://a:4222\"]\n";
  const std::string instances =
      "[cluster.instances.east]\ningest = \"tcp://10.0.0.1:7410\"\n"
      "query = \"tcp://10.0.0.1:7412\"\npublish = \"tcp://10.0.0.1:7411\"\n";
  EXPECT_EQ(whole_config_error(jetstream + "instance = \"east\"\n" + instances),
            "cluster.servers is empty: backend \"jetstream\" needs the NATS servers to connect "
            "to");
  EXPECT_EQ(whole_config_error(jetstream + servers + instances),
            "cluster.instance is not set: backend \"jetstream\" needs this daemon's name (one of "
            "the [cluster.instances.NAME] tables)");
  EXPECT_EQ(whole_config_error(jetstream + servers + "instance = \"west\"\n" + instances),
            "cluster.instance is 'west', but there is no [cluster.instances.west] table");
  EXPECT_EQ(whole_config_error(jetstream + servers + "instance = \"east\"\n" + instances),
            "");  // an instance that owns nothing is a standby-only one
}

TEST(ConfigCluster, EveryPoolHasOneOwnerAndStandbysForOwnedPoolsOnly) {
  DaemonConfig config = read_text(two_instances());
  config.cluster.instances.at("west").owns.push_back("quillory");
  EXPECT_EQ(whole_config_error(config), "pool quillory is owned by both east and west");

  config = read_text(two_instances());
  config.cluster.instances.at("west").owns.push_back("harbour");
  EXPECT_EQ(whole_config_error(config),
            "pool harbour is listed twice in cluster.instances.west.owns");

  config = read_text(two_instances());
  config.cluster.instances.at("west").stands_by.push_back("lagoon");
  EXPECT_EQ(whole_config_error(config),
            "unknown pool lagoon in cluster.instances.west.stands_by: no instance owns it");

  config = read_text(two_instances());
  config.cluster.instances.at("west").stands_by.push_back("harbour");
  EXPECT_EQ(whole_config_error(config),
            "cluster.instances.west stands by for pool harbour, which it owns itself");

  config = read_text(two_instances());
  config.cluster.instances.at("east").stands_by.push_back("quillory-plain");
  EXPECT_EQ(whole_config_error(config),
            "pool quillory-plain is listed twice in cluster.instances.east.stands_by");
}

TEST(ConfigCluster, DeclaredPoolsMustBeOwnedInJetstreamOnly) {
  EXPECT_EQ(whole_config_error(two_instances() + "[pools.lagoon]\nmode = \"perfect\"\n"),
            "pools.lagoon is declared, but no instance in cluster.instances owns it");
  EXPECT_EQ(whole_config_error(two_instances() + "[pools.harbour]\nmode = \"perfect\"\n"), "");
  EXPECT_EQ(whole_config_error("[pools.lagoon]\nmode = \"perfect\"\n"), "");  // local: any pool
}

TEST(ConfigCluster, InstancesNeedBackendJetstream) {
  std::string local = two_instances();
  local.replace(local.find("jetstream"), 9, "local");
  EXPECT_EQ(whole_config_error(local),
            "cluster.instances is given but cluster.backend is \"local\": instances share a log "
            "only with backend \"jetstream\"");
}

TEST(ConfigCluster, TakeoverMustExceedTwoHeartbeats) {
  EXPECT_EQ(whole_config_error("[cluster]\nheartbeat_ms = 500\ntakeover_ms = 1000\n"),
            "cluster.takeover_ms (1000) must exceed 2 x cluster.heartbeat_ms (500): a standby "
            "must not claim a pool whose owner missed one beat");
  EXPECT_EQ(whole_config_error("[cluster]\nheartbeat_ms = 2000\n"),  // the default takeover, 3000
            "cluster.takeover_ms (3000) must exceed 2 x cluster.heartbeat_ms (2000): a standby "
            "must not claim a pool whose owner missed one beat");
  EXPECT_EQ(whole_config_error("[cluster]\nheartbeat_ms = 500\ntakeover_ms = 1001\n"), "");
}

TEST(ConfigCluster, EndpointsAndPoolNamesSetInCodeAreCheckedToo) {
  DaemonConfig config = read_text(two_instances());
  config.cluster.instances.at("west").publish = "tcp://*:7411";
  EXPECT_EQ(whole_config_error(config),
            "cluster.instances.west.publish is 'tcp://*:7411': an advertised endpoint names a "
            "host clients can reach, not every interface");
  config = read_text(two_instances());
  config.cluster.instances.at("east").stands_by.push_back("quay/4");
  EXPECT_EQ(whole_config_error(config),
            "cluster.instances.east.stands_by holds 'quay/4', not a pool name: a pool name may "
            "hold only ASCII letters, digits and . _ - : (byte 47 is not allowed)");
}

// The sample file's instance tables are comments (a cluster is not the default); uncommented
// under a jetstream [cluster], they are a valid config with the owners the comments describe.
TEST(ConfigCluster, TheSampleFilesInstanceExampleIsAValidCluster) {
  std::ifstream sample(YOKE_EXAMPLE_CONFIG);
  ASSERT_TRUE(sample) << YOKE_EXAMPLE_CONFIG;
  std::string line;
  std::ostringstream example;
  example << "[cluster]\nbackend = \"jetstream\"\nservers = [\"nats://10.0.0.1:4222\"]\n"
             "instance = \"west\"\n";
  bool inside = false;
  while (std::getline(sample, line)) {
    if (line == "# [cluster.instances.east]") inside = true;
    if (inside && line.rfind("# Every pool", 0) == 0) break;
    if (inside && line.rfind("# ", 0) == 0) example << line.substr(2) << "\n";
  }
  ASSERT_TRUE(inside) << "no instance example in the sample file";
  const DaemonConfig config = read_text(example.str());
  EXPECT_EQ(whole_config_error(config), "");
  EXPECT_EQ(config.cluster.owner_of("quillory"), "east");
  EXPECT_EQ(config.cluster.standbys_of("quillory"), std::vector<std::string>{"west"});
  EXPECT_EQ(config.cluster.owner_of("quillory-plain"), "west");
  EXPECT_EQ(config.cluster.instances.at("east").ingest, "tcp://10.0.0.1:7410");
}

}  // namespace
}  // namespace yoke::daemon
