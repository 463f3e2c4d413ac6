// libFuzzer target: what recovery trusts from disk. The first byte picks the path, the rest is
// the payload:
//   bit 0 clear: the payload is an engine state for Pool::restore, which may only throw
//                InputError;
//   bit 0 set:   the payload is a snapshot file (daemon/snapshots/FORMAT.md) for
//                read_snapshot_file, then restore_checked on each pool it holds; with bit 1 set
//                the checksums are recomputed first, so that mutations reach the records and
//                the engine state behind them.
// A pool that restores and whose certificate holds must be what its certificate says (weight,
// pairs and sizes) and must take a commit: after one small batch its certificate holds again.

#include <unistd.h>

#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

#include <google/protobuf/stubs/logging.h>

#include "daemon/journal/crc32c.h"
#include "daemon/journal/journal_error.h"
#include "daemon/service/snapshot_capture.h"
#include "daemon/snapshots/snapshot_file.h"
#include "yoke/certificate.h"
#include "yoke/pool.h"

namespace {

using namespace yoke;
using namespace yoke::daemon;

[[noreturn]] void violated(const char* what, int line, const std::string& detail = {}) {
  std::fprintf(stderr, "snapshot_fuzz: invariant violated at line %d: %s %s\n", line, what,
               detail.c_str());
  __builtin_trap();
}
#define REQUIRE(...)                                      \
  do {                                                    \
    if (!(__VA_ARGS__)) violated(#__VA_ARGS__, __LINE__); \
  } while (0)

std::filesystem::path g_temp_dir;  // removed at exit

const std::filesystem::path& snapshot_path() {
  static const std::filesystem::path path = [] {
    std::string dir = (std::filesystem::temp_directory_path() / "yoke-fuzz-XXXXXX").string();
    if (mkdtemp(dir.data()) == nullptr) {
      std::perror("snapshot_fuzz: mkdtemp");
      std::abort();
    }
    g_temp_dir = dir;
    google::protobuf::SetLogHandler(nullptr);  // invalid UTF-8 in a pool name: noise here
    std::atexit([] {
      std::error_code ignored;
      std::filesystem::remove_all(g_temp_dir, ignored);
    });
    return g_temp_dir / "snapshot-00000000000000000001.yks";
  }();
  return path;
}

template <typename T>
void put_at(std::string& bytes, std::size_t at, T value) {
  std::memcpy(bytes.data() + at, &value, sizeof(T));
}
template <typename T>
T get_at(const std::string& bytes, std::size_t at) {
  T value;
  std::memcpy(&value, bytes.data() + at, sizeof(T));
  return value;
}

// Rewrites the header's and each whole pool entry's CRC-32C (FORMAT.md's layout).
void fix_checksums(std::string& file) {
  constexpr std::size_t kHeader = 24;  // magic, version, journal position, pool count
  if (file.size() < kHeader + 4) return;
  put_at(file, kHeader, journal::crc32c(std::string_view(file).substr(0, kHeader)));
  const auto pools = get_at<std::uint32_t>(file, 20);
  std::size_t at = kHeader + 4;
  for (std::uint32_t i = 0; i < pools && at + 12 <= file.size(); ++i) {
    const auto length = get_at<std::uint64_t>(file, at);
    if (length > file.size() - at - 12) return;
    put_at(file, at + 8, journal::crc32c(std::string_view(file).substr(at + 12, length)));
    at += 12 + length;
  }
}

// The certificate holds; the pool's own counters agree with it and with its matching.
void check_restored(const Pool& pool) {
  const PoolExport exported = pool.export_certified();
  const std::size_t n = exported.keys.size();
  REQUIRE(pool.vertex_count() == n && pool.edge_count() == exported.graph.edge_count());
  Weight total = 0;
  std::size_t pairs = 0;
  for (const MatchedPair& pair : pool.matching()) {
    REQUIRE(pair.a < pair.b && pool.mate_of(pair.a) == pair.b && pool.mate_of(pair.b) == pair.a);
    total += pair.w;
    ++pairs;
  }
  if (pool.weight() != total || pool.pairs() != pairs) {
    violated("a restored pool's counters disagree with its matching", __LINE__,
             "weight " + std::to_string(pool.weight()) + " vs " + std::to_string(total) +
                 ", pairs " + std::to_string(pool.pairs()) + " vs " + std::to_string(pairs));
  }
}

// One batch through a restored pool: a departure, an arrival, an edge change.
void commit_once(Pool& pool) {
  const PoolExport before = pool.export_certified();
  std::vector<Event> batch;
  if (before.keys.size() >= 3) {
    batch.push_back({EventKind::remove_vertex, before.keys[0], 0, 0});
    batch.push_back({EventKind::set_edge, before.keys[1], before.keys[2], 1});
  }
  VertexKey fresh = 0;
  while (pool.has_vertex(fresh)) ++fresh;
  batch.push_back({EventKind::add_vertex, fresh, 0, 0});
  if (pool.check(batch)) return;  // a full pool, say: nothing to learn here
  pool.commit(batch);
  const PoolExport after = pool.export_certified();
  const CheckResult check = check_certificate(after.graph, after.certificate);
  if (!check.ok) violated("the certificate fails after a commit", __LINE__, check.failure);
  check_restored(pool);
}

void engine_state(std::string_view bytes) {
  std::unique_ptr<Pool> pool;
  try {
    pool = Pool::restore(bytes);
  } catch (const InputError&) {
    return;
  }
  const PoolExport exported = pool->export_certified();
  if (!check_certificate(exported.graph, exported.certificate).ok) return;  // the caller's check
  check_restored(*pool);
  commit_once(*pool);
}

void snapshot_file(std::string file, bool fix) {
  if (fix) fix_checksums(file);
  {
    std::ofstream out(snapshot_path(), std::ios::binary | std::ios::trunc);
    out.write(file.data(), static_cast<std::streamsize>(file.size()));
    REQUIRE(out.good());
  }
  SnapshotContents contents;
  try {
    contents = read_snapshot_file(snapshot_path());
  } catch (const SnapshotDamage&) {
    return;
  }
  for (const v1::SnapshotRecord& record : contents.pools) {
    std::unique_ptr<Pool> pool;
    try {
      pool = restore_checked(record);
    } catch (const SnapshotDamage&) {
      continue;
    }
    check_restored(*pool);
    commit_once(*pool);
  }
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  if (size == 0) return 0;
  const std::string_view payload(reinterpret_cast<const char*>(data) + 1, size - 1);
  if (data[0] & 1) {
    snapshot_file(std::string(payload), (data[0] & 2) != 0);
  } else {
    engine_state(payload);
  }
  return 0;
}
