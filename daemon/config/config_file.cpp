#include "config_file.h"

#include <fstream>
#include <optional>
#include <sstream>

#include "cluster_section.h"
#include "config_error.h"
#include "config_names.h"
#include "yoke/types.h"
#include "toml_table_reader.h"

namespace yoke::daemon {
namespace {

void read_endpoints(TomlTableReader& table, Endpoints& out) {
  if (auto value = table.read_string("ingest")) out.ingest = *value;
  if (auto value = table.read_string("publish")) out.publish = *value;
  if (auto value = table.read_string("query")) out.query = *value;
  if (auto value = table.read_string("metrics")) out.metrics = *value;
  table.finish();
}

void read_batching(TomlTableReader& table, BatchingSettings& out) {
  table.read("max_delay_us", std::uint64_t{0}, std::uint64_t{1'000'000}, out.max_delay_us);
  table.read("max_events", std::uint64_t{1}, std::uint64_t{10'000'000}, out.max_events);
  table.finish();
}

void read_service(TomlTableReader& table, ServiceSettings& out) {
  table.read("repair_threads", std::uint64_t{0}, std::uint64_t{256}, out.repair_threads);
  table.read("worker_nice", std::uint64_t{0}, std::uint64_t{19}, out.worker_nice);
  table.finish();
}

void read_journal(TomlTableReader& table, journal::Options& out) {
  if (auto value = table.read_string("durability")) {
    const auto durability = parse_durability(*value);
    if (!durability) table.fail("durability", "is '" + *value + "', not one of " + kDurabilityNames);
    out.durability = *durability;
  }
  table.read("segment_bytes", std::uint64_t{1} << 20, std::uint64_t{1} << 40, out.segment_bytes);
  table.read("max_record_bytes", std::uint32_t{1} << 10, journal::format::kMaxPayloadBytes,
             out.max_record_bytes);
  table.read("lock_wait_ms", std::uint64_t{0}, std::uint64_t{3'600'000}, out.lock_wait_ms);
  table.finish();
}

void read_snapshots(TomlTableReader& table, SnapshotSettings& out) {
  table.read("interval_seconds", std::uint64_t{1}, std::uint64_t{7 * 24 * 3600},
             out.interval_seconds);
  table.read("keep", std::uint64_t{1}, std::uint64_t{1000}, out.keep);
  table.read("after_events", std::uint64_t{0}, std::uint64_t{1} << 40, out.after_events);
  table.finish();
}

void read_limits(TomlTableReader& table, InputLimits& out) {
  table.read("max_message_bytes", std::uint64_t{1} << 10, std::uint64_t{1} << 30,
             out.max_message_bytes);
  table.read("max_events_per_batch", std::uint64_t{1}, std::uint64_t{10'000'000},
             out.max_events_per_batch);
  table.read("max_pools", std::uint64_t{1}, std::uint64_t{1'000'000}, out.max_pools);
  table.finish();
}

void read_ledger(TomlTableReader& table, LedgerSettings& out) {
  table.read("batches_per_client", std::uint64_t{1}, std::uint64_t{4096}, out.batches_per_client);
  table.read("idle_seconds", std::uint64_t{0}, std::uint64_t{10} * 366 * 24 * 3600,
             out.idle_seconds);
  table.read("max_clients_per_pool", std::uint64_t{1}, std::uint64_t{10'000'000},
             out.max_clients_per_pool);
  table.finish();
}

void read_pool(TomlTableReader& table, PoolSettings& out) {
  if (auto value = table.read_string("mode")) {
    const auto mode = parse_mode_name(*value);
    if (!mode) table.fail("mode", "is '" + *value + "', not one of " + kModeNames);
    out.mode = *mode;
  }
  // The engine's ranges (resolve_limits): a pair needs two vertices; indices stay below 2^30.
  table.read("max_vertices", std::uint64_t{2}, std::uint64_t{kMaxVertices - 1},
             out.limits.max_vertices);
  table.read("max_edges", std::uint64_t{1}, std::uint64_t{kMaxEdges - 1}, out.limits.max_edges);
  table.read("max_abs_weight", std::int64_t{0}, kMaxAbsWeight, out.limits.max_abs_weight);
  table.read("churn_bonus", std::int64_t{0}, kMaxAbsWeight, out.churn_bonus);
  table.finish();
  // Each key in range, but the weights must also stay exact with the mode and the vertices
  // (validate_config checks it again for settings made in code, without a line to name).
  try {
    check_pool_settings(out);
  } catch (const InputError& error) {
    table.fail(table.last_given({"mode", "max_vertices", "max_abs_weight", "churn_bonus"}),
               std::string("cannot stay exact: ") + error.what());
  }
}

// An accepted batch is one journal record: a message limit past the record's is refused
// where the file set one of the two (validate_config checks it again without a line).
void check_message_fits_record(const std::optional<TomlTableReader>& limits,
                               const std::optional<TomlTableReader>& journal,
                               const DaemonConfig& config) {
  if (config.limits.max_message_bytes <= config.journal.max_record_bytes) return;
  const auto message = std::to_string(config.limits.max_message_bytes);
  const auto record = std::to_string(config.journal.max_record_bytes);
  const std::string why = ": an accepted batch must fit one journal record";
  if (limits && limits->given("max_message_bytes")) {
    limits->fail("max_message_bytes",
                 "is " + message + ", above journal.max_record_bytes (" + record + ")" + why);
  }
  if (journal && journal->given("max_record_bytes")) {
    journal->fail("max_record_bytes",
                  "is " + record + ", below limits.max_message_bytes (" + message + ")" + why);
  }
}

void read_logging(TomlTableReader& table, LogSettings& out) {
  if (auto value = table.read_string("level")) {
    const auto level = parse_log_level(*value);
    if (!level) table.fail("level", "is '" + *value + "', not one of " + kLogLevelNames);
    out.level = *level;
  }
  if (auto value = table.read_string("format")) {
    const auto format = parse_log_format(*value);
    if (!format) table.fail("format", "is '" + *value + "', not one of " + kLogFormatNames);
    out.format = *format;
  }
  if (auto value = table.read_string("file")) {
    if (value->empty()) {
      out.file.reset();  // "" spells stderr, as leaving the key out does
    } else {
      out.file = *value;
    }
  }
  table.finish();
}

void read_root(TomlTableReader& root, DaemonConfig& config) {
  if (auto table = root.read_table("endpoints")) read_endpoints(*table, config.endpoints);
  if (auto table = root.read_table("batching")) read_batching(*table, config.batching);
  if (auto table = root.read_table("service")) read_service(*table, config.service);
  auto journal = root.read_table("journal");
  if (journal) read_journal(*journal, config.journal);
  if (auto table = root.read_table("snapshots")) read_snapshots(*table, config.snapshots);
  auto limits = root.read_table("limits");
  if (limits) read_limits(*limits, config.limits);
  check_message_fits_record(limits, journal, config);
  if (auto table = root.read_table("ledger")) read_ledger(*table, config.ledger);
  // Before the declared pools: they start from the defaults and change what they name.
  if (auto table = root.read_table("pool_defaults")) read_pool(*table, config.pool_defaults);
  if (auto table = root.read_table("pools")) {
    for (auto& [name, pool_table] : table->read_named_tables()) {
      if (name.empty()) pool_table.fail("", "is not a pool name: names are not empty");
      PoolSettings settings = config.pool_defaults;
      read_pool(pool_table, settings);
      config.pools[name] = settings;
    }
    table->finish();
  }
  if (auto table = root.read_table("logging")) read_logging(*table, config.logging);
  if (auto table = root.read_table("cluster")) read_cluster(*table, config.cluster);
  root.finish();
}

}  // namespace

void read_config_text(std::string_view text, const std::string& source, DaemonConfig& config) {
  toml::table document;
  try {
    document = toml::parse(text, source);
  } catch (const toml::parse_error& error) {
    const auto& begin = error.source().begin;
    throw ConfigError(source + ":" + std::to_string(begin.line) + ":" +
                      std::to_string(begin.column) + ": " + std::string(error.description()));
  }
  TomlTableReader root(document, "", source);
  read_root(root, config);
}

void read_config_file(const std::filesystem::path& file, DaemonConfig& config) {
  std::ifstream in(file, std::ios::binary);
  if (!in) throw ConfigError("cannot read config file " + file.string());
  std::ostringstream text;
  text << in.rdbuf();
  if (in.bad()) throw ConfigError("cannot read config file " + file.string());
  read_config_text(text.str(), file.string(), config);
}

}  // namespace yoke::daemon
