#include "snapshot_file.h"

#include <fcntl.h>

#include <cstring>
#include <stdexcept>
#include <string>
#include <string_view>

#include <google/protobuf/io/coded_stream.h>
#include <google/protobuf/io/zero_copy_stream.h>

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

std::string entry_frame(std::uint64_t payload_bytes, std::uint32_t payload_crc) {
  ByteWriter writer;
  writer.put(payload_bytes);
  writer.put(payload_crc);
  return writer.take();
}

// A record's serialization in pieces: Protobuf's own bytes, but a large string or bytes field
// (a pool's engine state: megabytes) is left where it lies in the record instead of copied:
// Protobuf hands it to an aliasing stream as a pointer. The pieces joined are the record's
// SerializeAsString(); they live as long as this and the record.
class RecordPieces final : public google::protobuf::io::ZeroCopyOutputStream {
 public:
  explicit RecordPieces(const v1::SnapshotRecord& record) : bytes_(record.ByteSizeLong()) {
    {
      google::protobuf::io::CodedOutputStream out(this);
      out.EnableAliasing(true);
      record.SerializeWithCachedSizes(&out);  // the sizes ByteSizeLong() cached
      if (out.HadError()) throw std::runtime_error("a snapshot record did not serialize");
    }  // gone: it gave back (BackUp) what it did not fill
    if (written_ != static_cast<std::int64_t>(bytes_)) {
      throw std::runtime_error("a snapshot record serialized to another size than it said");
    }
    end_owned();
    // Views only now: the owned buffer grew (and moved) while Protobuf wrote.
    for (const Piece& piece : order_) {
      views_.push_back(piece.owned
                           ? std::string_view(owned_).substr(piece.begin, piece.end - piece.begin)
                           : piece.aliased);
    }
  }
  std::uint64_t bytes() const { return bytes_; }
  const std::vector<std::string_view>& views() const { return views_; }

  bool Next(void** data, int* size) override {
    constexpr std::size_t kChunk = 16 * 1024;
    const std::size_t at = owned_.size();
    owned_.resize(at + kChunk);
    *data = owned_.data() + at;
    *size = static_cast<int>(kChunk);
    written_ += kChunk;
    return true;
  }
  void BackUp(int count) override {
    owned_.resize(owned_.size() - static_cast<std::size_t>(count));
    written_ -= count;
  }
  std::int64_t ByteCount() const override { return written_; }
  bool AllowsAliasing() const override { return true; }
  bool WriteAliasedRaw(const void* data, int size) override {
    end_owned();
    order_.push_back({false, 0, 0,
                      std::string_view(static_cast<const char*>(data),
                                       static_cast<std::size_t>(size))});
    written_ += size;
    return true;
  }

 private:
  struct Piece {
    bool owned;
    std::size_t begin, end;     // owned: bytes [begin, end) of owned_
    std::string_view aliased;  // not owned: the record's own bytes
  };
  // The owned bytes written since the last piece become one.
  void end_owned() {
    if (owned_.size() > owned_start_) order_.push_back({true, owned_start_, owned_.size(), {}});
    owned_start_ = owned_.size();
  }

  std::uint64_t bytes_;
  std::string owned_;
  std::size_t owned_start_ = 0;
  std::int64_t written_ = 0;
  std::vector<Piece> order_;
  std::vector<std::string_view> views_;
};

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
    for (const v1::SnapshotRecord& pool : pools) {
      // Not serialized into one string first: that copied each pool's engine state once more.
      const RecordPieces payload(pool);
      std::uint32_t crc = journal::crc32c(std::string_view());
      for (const std::string_view piece : payload.views()) crc = journal::crc32c_extend(crc, piece);
      put(entry_frame(payload.bytes(), crc));
      for (const std::string_view piece : payload.views()) put(piece);
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
