#include "snapshot_file.h"

#include <fcntl.h>

#include <cstring>
#include <string_view>

#include "daemon/journal/crc32c.h"
#include "daemon/journal/journal_error.h"
#include "daemon/journal/posix_file.h"
#include "yoke/util/byte_io.h"

namespace yoke::daemon {
namespace {

constexpr std::string_view kMagic = "YOKESNAP";
constexpr std::string_view kEndMarker = "SNAPEND1";
constexpr std::uint32_t kVersion = 1;
constexpr std::size_t kHeaderBytes = 8 + 4 + 8 + 4;  // before the header checksum
constexpr std::size_t kWriteBackPiece = 256 * 1024;

std::string header(std::uint64_t journal_position, std::uint32_t pools) {
  ByteWriter writer;
  for (const char c : kMagic) writer.put(c);
  writer.put(kVersion);
  writer.put(journal_position);
  writer.put(pools);
  std::string bytes = writer.take();
  ByteWriter crc;
  crc.put(journal::crc32c(bytes));
  return bytes + crc.take();
}

std::string entry_frame(const std::string& payload) {
  ByteWriter writer;
  writer.put(static_cast<std::uint64_t>(payload.size()));
  writer.put(journal::crc32c(payload));
  return writer.take();
}

std::string read_whole(const std::filesystem::path& path) {
  journal::FileDescriptor file = journal::open_file(path, O_RDONLY);
  const std::uint64_t size = journal::file_size(file, path);
  std::string bytes(size, '\0');
  journal::BufferedReader reader(std::move(file), path);
  if (size > 0) reader.read(bytes.data(), size);
  return bytes;
}

}  // namespace

void write_snapshot_file(const std::filesystem::path& path, std::uint64_t journal_position,
                         const std::vector<v1::SnapshotRecord>& pools) {
  std::filesystem::path temporary = path;
  temporary += ".tmp";
  {
    journal::FileDescriptor file =
        journal::open_file(temporary, O_WRONLY | O_CREAT | O_TRUNC, 0644);
    // Written back a piece at a time as it goes (write_paced): the journal's syncs, on the same
    // disk meanwhile, wait behind one piece at most instead of the whole file.
    std::uint64_t end = 0;
    const auto put = [&](std::string_view bytes) {
      end = journal::write_paced(file, bytes, end, kWriteBackPiece, temporary);
    };
    put(header(journal_position, static_cast<std::uint32_t>(pools.size())));
    std::string payload;
    for (const v1::SnapshotRecord& pool : pools) {
      payload.clear();
      pool.SerializeToString(&payload);
      put(entry_frame(payload));
      put(payload);
    }
    put(kEndMarker);
    journal::sync_data(file, temporary);
  }
  journal::rename_file(temporary, path);
  const std::filesystem::path directory = path.parent_path();
  journal::sync_directory(journal::open_directory(directory), directory);
}

SnapshotContents read_snapshot_file(const std::filesystem::path& path) {
  const std::string bytes = read_whole(path);
  const auto damaged = [&path](const std::string& why) {
    return SnapshotDamage("snapshot " + path.string() + " is damaged: " + why);
  };
  // The file as a sequence of fields; a field past the end means the file was cut.
  std::string_view rest = bytes;
  const auto take = [&](std::size_t n) {
    if (rest.size() < n) throw damaged("it ends early");
    const std::string_view field = rest.substr(0, n);
    rest.remove_prefix(n);
    return field;
  };
  const auto number = [&]<typename T>(T) {
    T value;
    std::memcpy(&value, take(sizeof(T)).data(), sizeof(T));
    return value;
  };

  if (take(kMagic.size()) != kMagic) throw damaged("it does not start with a snapshot header");
  const auto version = number(std::uint32_t{});
  SnapshotContents contents;
  contents.position = number(std::uint64_t{});
  const auto pools = number(std::uint32_t{});
  if (number(std::uint32_t{}) != journal::crc32c(std::string_view(bytes).substr(0, kHeaderBytes))) {
    throw damaged("the header checksum does not match");
  }
  if (version != kVersion) throw damaged("unknown format version " + std::to_string(version));
  for (std::uint32_t i = 0; i < pools; ++i) {
    const auto length = number(std::uint64_t{});
    const auto crc = number(std::uint32_t{});
    if (length > rest.size()) throw damaged("pool entry " + std::to_string(i) + " is cut");
    const std::string_view payload = take(length);
    if (journal::crc32c(payload) != crc) {
      throw damaged("pool entry " + std::to_string(i) + " fails its checksum");
    }
    v1::SnapshotRecord& record = contents.pools.emplace_back();
    if (!record.ParseFromArray(payload.data(), static_cast<int>(payload.size()))) {
      throw damaged("pool entry " + std::to_string(i) + " is not a SnapshotRecord");
    }
  }
  if (rest != kEndMarker) throw damaged("the end marker is missing or followed by other bytes");
  return contents;
}

}  // namespace yoke::daemon
