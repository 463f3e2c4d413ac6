#include "jetstream_snapshot_store.h"

#include <algorithm>
#include <charconv>
#include <map>
#include <sstream>
#include <stdexcept>

#include <google/protobuf/io/coded_stream.h>
#include <google/protobuf/io/zero_copy_stream_impl_lite.h>

#include "daemon/cluster/log_publisher.h"
#include "daemon/cluster/log_reader.h"
#include "daemon/cluster/message_lookup.h"
#include "daemon/cluster/subject_list.h"
#include "daemon/cluster/subject_purge.h"
#include "daemon/jetstream/log_stream.h"
#include "daemon/journal/crc32c.h"
#include "daemon/storage/storage_error.h"

namespace yoke::jetstream {
namespace {

constexpr const char* kSnapshotHeader = "Yoke-Snapshot";
constexpr const char* kManifestFormat = "manifest/1";
constexpr const char* kChunkHeader = "Yoke-Snapshot-Chunk";  // the chunk's index, from 0

// What a manifest says about its snapshot.
struct Manifest {
  std::uint64_t position = 0;
  std::uint64_t bytes = 0;
  std::uint32_t crc = 0;
  std::uint64_t chunks = 0;
  std::uint64_t first_chunk = 0;  // stream sequence of chunk 0 (0 with no chunk)
  std::vector<std::string> pools;
};

std::string manifest_text(const Manifest& manifest) {
  std::string text = "position " + std::to_string(manifest.position) + "\nbytes " +
                     std::to_string(manifest.bytes) + "\ncrc32c " + std::to_string(manifest.crc) +
                     "\nchunks " + std::to_string(manifest.chunks) + "\nfirst " +
                     std::to_string(manifest.first_chunk) + "\npools";
  for (const std::string& pool : manifest.pools) text.append(" ").append(pool);
  return text + "\n";
}

std::optional<Manifest> parse_manifest(const std::string& text) {
  std::istringstream in(text);
  std::map<std::string, std::string> fields;
  std::string line;
  while (std::getline(in, line)) {
    const std::size_t space = line.find(' ');
    fields[line.substr(0, space)] = space == std::string::npos ? "" : line.substr(space + 1);
  }
  Manifest manifest;
  const auto number = [&fields](const char* key, auto& value) {
    const auto it = fields.find(key);
    if (it == fields.end()) return false;
    const std::string& digits = it->second;
    const auto [end, error] = std::from_chars(digits.data(), digits.data() + digits.size(), value);
    return error == std::errc() && end == digits.data() + digits.size() && !digits.empty();
  };
  if (!number("position", manifest.position) || !number("bytes", manifest.bytes) ||
      !number("crc32c", manifest.crc) || !number("chunks", manifest.chunks) ||
      !number("first", manifest.first_chunk) || fields.count("pools") == 0) {
    return std::nullopt;
  }
  std::istringstream pools(fields["pools"]);
  for (std::string pool; pools >> pool;) manifest.pools.push_back(pool);
  return manifest;
}

std::string snapshot_bytes(const std::vector<v1::SnapshotRecord>& pools) {
  std::string bytes;
  google::protobuf::io::StringOutputStream sink(&bytes);
  google::protobuf::io::CodedOutputStream out(&sink);
  for (const v1::SnapshotRecord& pool : pools) {
    out.WriteVarint64(pool.ByteSizeLong());
    pool.SerializeWithCachedSizes(&out);
  }
  out.Trim();
  return bytes;
}

}  // namespace

std::unique_ptr<JetStreamSnapshotStore> JetStreamSnapshotStore::open(
    cluster::NatsConnection& connection, JetStreamLogSettings settings, std::size_t keep,
    std::string_view pool) {
  if (keep == 0) throw std::invalid_argument("a snapshot store keeps at least one snapshot");
  ensure_log_stream(connection, settings);
  return std::unique_ptr<JetStreamSnapshotStore>(
      new JetStreamSnapshotStore(connection, std::move(settings), keep, std::string(pool)));
}

JetStreamSnapshotStore::JetStreamSnapshotStore(cluster::NatsConnection& connection,
                                               JetStreamLogSettings settings, std::size_t keep,
                                               std::string pool)
    : connection_(connection),
      settings_(std::move(settings)),
      subjects_(settings_.subject_prefix),
      keep_(keep),
      pool_(std::move(pool)) {}

std::string JetStreamSnapshotStore::describe() const {
  return "JetStream snapshots " + (pool_.empty() ? std::string() : "of pool '" + pool_ + "' ") +
         "in stream '" + settings_.stream + "' (" + every_subject() + " on " +
         connection_.servers_text() + ")";
}

std::string JetStreamSnapshotStore::subject_of(storage::Position position) const {
  return pool_.empty() ? subjects_.of_snapshot(position)
                       : subjects_.of_pool_snapshot(pool_, position);
}

std::string JetStreamSnapshotStore::every_subject() const {
  return pool_.empty() ? subjects_.all_snapshots() : subjects_.pool_snapshots(pool_);
}

std::optional<storage::Position> JetStreamSnapshotStore::position_of(
    const std::string& subject) const {
  return pool_.empty() ? subjects_.snapshot_of_subject(subject)
                       : subjects_.pool_snapshot_of_subject(pool_, subject);
}

std::string JetStreamSnapshotStore::write(storage::Position position,
                                          const std::vector<v1::SnapshotRecord>& pools) {
  if (!pool_.empty()) {
    for (const v1::SnapshotRecord& record : pools) {
      if (record.pool() != pool_) {
        throw std::invalid_argument(describe() + " cannot hold pool '" + record.pool() + "'");
      }
    }
  }
  const std::string subject = subject_of(position);
  const std::string bytes = snapshot_bytes(pools);
  Manifest manifest;
  manifest.position = position;
  manifest.bytes = bytes.size();
  manifest.crc = journal::crc32c(bytes);
  for (const v1::SnapshotRecord& pool : pools) manifest.pools.push_back(pool.pool());
  return as_log_error(describe() + ": writing the snapshot at " + std::to_string(position),
                           [&] {
    for (std::size_t offset = 0; offset < bytes.size(); offset += kSnapshotChunkBytes) {
      const std::string_view chunk =
          std::string_view(bytes).substr(offset, kSnapshotChunkBytes);
      const std::uint64_t sequence = cluster::publish_and_wait(
          connection_, subject, {{kChunkHeader, std::to_string(manifest.chunks)}}, chunk,
          settings_.publish_timeout);
      if (manifest.chunks++ == 0) manifest.first_chunk = sequence;
    }
    const std::uint64_t manifest_sequence = cluster::publish_and_wait(
        connection_, subject, {{kSnapshotHeader, kManifestFormat}}, manifest_text(manifest),
        settings_.publish_timeout);
    const std::vector<storage::Position> stored = positions();
    for (std::size_t i = keep_; i < stored.size(); ++i) {
      cluster::purge_subject_below(connection_, settings_.stream,
                                   subject_of(stored[i]), manifest_sequence + 1);
    }
    return settings_.stream + ":" + subject;
  });
}

std::vector<storage::Position> JetStreamSnapshotStore::positions() const {
  std::vector<storage::Position> stored;
  as_log_error(describe() + ": listing snapshots", [&] {
    for (const auto& [subject, messages] : cluster::subjects_with_messages(
             connection_, settings_.stream, every_subject())) {
      const std::optional<std::uint64_t> position = position_of(subject);
      if (position && messages > 0) stored.push_back(*position);
    }
  });
  std::sort(stored.rbegin(), stored.rend());
  return stored;
}

std::optional<storage::Position> JetStreamSnapshotStore::oldest_needed() const {
  const std::vector<storage::Position> stored = positions();
  if (stored.empty()) return std::nullopt;
  return stored.back();
}

storage::SnapshotContents JetStreamSnapshotStore::read(storage::Position position) const {
  const std::string subject = subject_of(position);
  const std::string where = describe() + ": snapshot at " + std::to_string(position);
  const auto damaged = [&where](const std::string& why) {
    return storage::SnapshotDamage(where + " " + why);
  };
  const std::optional<cluster::LogMessage> last = as_log_error(
      where, [&] { return cluster::last_message(connection_, settings_.stream, subject); });
  if (!last) throw storage::LogError(where + " is not stored");
  const auto format = cluster::header_value(last->headers, kSnapshotHeader);
  if (!format || *format != kManifestFormat) {
    throw damaged("ends without a manifest (a write that did not finish, or a foreign message)");
  }
  const std::optional<Manifest> manifest = parse_manifest(last->data);
  if (!manifest) throw damaged("has a manifest that cannot be read");
  if (manifest->position != position) {
    throw damaged("says it holds position " + std::to_string(manifest->position));
  }
  std::string bytes;
  if (manifest->chunks > 0) {
    as_log_error(where, [&] {
      // Chunks are few and large: looked up one by one (as claims are), no consumer needed.
      cluster::ReaderSettings reading{settings_.stream, subject, manifest->first_chunk};
      reading.by_lookup = true;
      cluster::LogReader reader(connection_, reading);
      for (std::uint64_t index = 0; index < manifest->chunks; ++index) {
        const std::optional<cluster::LogMessage> chunk = reader.next(settings_.read_timeout);
        if (!chunk) throw storage::LogError(where + ": chunk " + std::to_string(index) +
                                            " did not arrive in time");
        const auto mark = cluster::header_value(chunk->headers, kChunkHeader);
        if (chunk->sequence >= last->sequence || !mark || *mark != std::to_string(index)) {
          throw damaged("is missing chunk " + std::to_string(index) + " (found message " +
                        std::to_string(chunk->sequence) + ")");
        }
        bytes += chunk->data;
      }
    });
  }
  if (bytes.size() != manifest->bytes || journal::crc32c(bytes) != manifest->crc) {
    throw damaged("fails its checksum (" + std::to_string(bytes.size()) + " bytes, manifest says " +
                  std::to_string(manifest->bytes) + ")");
  }
  storage::SnapshotContents contents;
  contents.position = position;
  google::protobuf::io::CodedInputStream in(reinterpret_cast<const std::uint8_t*>(bytes.data()),
                                            static_cast<int>(bytes.size()));
  in.SetTotalBytesLimit(static_cast<int>(bytes.size()) + 1);
  while (in.CurrentPosition() < static_cast<int>(bytes.size())) {
    std::uint64_t size = 0;
    if (!in.ReadVarint64(&size) || size > bytes.size()) throw damaged("has a bad record length");
    const auto limit = in.PushLimit(static_cast<int>(size));
    v1::SnapshotRecord& pool = contents.pools.emplace_back();
    if (!pool.ParseFromCodedStream(&in) || in.BytesUntilLimit() != 0) {
      throw damaged("has a pool record that does not parse");
    }
    in.PopLimit(limit);
  }
  std::vector<std::string> names;
  for (const v1::SnapshotRecord& pool : contents.pools) names.push_back(pool.pool());
  if (names != manifest->pools) throw damaged("holds other pools than its manifest lists");
  return contents;
}

}  // namespace yoke::jetstream
