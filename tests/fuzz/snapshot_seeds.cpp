// Writes the seed corpus of snapshot_fuzz (tests/fuzz/corpus/snapshot/): one engine state per
// mode (blossoms included) and one snapshot file holding the perfect-mode pool (a pool's state
// is some 7 KB: its slots start at 64), each behind the target's selector byte.
//   build-fuzz/tests/fuzz/snapshot_seeds tests/fuzz/corpus/snapshot

#include <cstdio>
#include <filesystem>
#include <fstream>
#include <iterator>
#include <string>
#include <vector>

#include "daemon/service/snapshot_capture.h"
#include "daemon/service/wire_types.h"
#include "daemon/snapshots/snapshot_file.h"
#include "yoke/pool.h"

namespace {

using namespace yoke;

void write(const std::filesystem::path& path, const std::string& bytes) {
  std::ofstream(path, std::ios::binary) << bytes;
}

}  // namespace

int main(int argc, char** argv) {
  if (argc != 2) {
    std::fprintf(stderr, "usage: snapshot_seeds DIR\n");
    return 2;
  }
  const std::filesystem::path dir = argv[1];
  std::filesystem::create_directories(dir);
  // Two odd cycles joined by an edge (blossoms), then a change that breaks one.
  const auto edge = [](VertexKey u, VertexKey v, Weight w) {
    return Event{EventKind::set_edge, u, v, w};
  };
  const std::vector<Event> first = {edge(1, 2, 6), edge(2, 3, 6), edge(3, 1, 6), edge(3, 4, 5),
                                    edge(4, 5, 6), edge(5, 6, 6), edge(6, 4, 6),
                                    {EventKind::add_vertex, 7, 0, 0}};
  const std::vector<Event> second = {edge(7, 1, 4), {EventKind::unset_edge, 4, 5, 0}};

  std::vector<yoke::v1::SnapshotRecord> records;
  const struct {
    const char* name;
    Mode mode;
  } pools[] = {{"c", Mode::max_cardinality}, {"default", Mode::max_weight}, {"p", Mode::perfect}};
  for (const auto& [name, mode] : pools) {
    Pool pool(mode, PoolLimits{12, 30, 1000});
    pool.commit(first);
    pool.commit(second);
    const std::string state = pool.save();
    write(dir / (std::string("state_") + name), std::string(1, '\0') + state);

    if (mode != Mode::perfect) continue;
    yoke::v1::SnapshotRecord& record = records.emplace_back();
    record.set_pool(name);
    record.set_seq(2);
    *record.mutable_config() = daemon::pool_config(pool);
    record.set_weight(pool.weight());
    record.set_pairs(pool.pairs());
    record.set_vertices(pool.vertex_count());
    record.set_edges(pool.edge_count());
    record.set_engine_state_format(daemon::kEngineStateFormat);
    record.set_engine_state(state);
    record.set_journal_position(7);
  }
  const std::filesystem::path file = dir / "snapshot.tmp";
  daemon::write_snapshot_file(file, 7, records);
  std::ifstream in(file, std::ios::binary);
  const std::string bytes{std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>()};
  std::filesystem::remove(file);
  write(dir / "file", std::string(1, '\1') + bytes);
  write(dir / "file_fixed", std::string(1, '\3') + bytes);
  return 0;
}
