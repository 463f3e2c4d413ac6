// Pool::save / Pool::restore: a restored pool must behave exactly as the original (same
// results, diffs and state bytes for the same later batches), and bytes that do not describe a
// pool must be refused with InputError, never read out of bounds.
#include <gtest/gtest.h>

#include <cstring>
#include <string>
#include <tuple>
#include <vector>

#include "yoke/certificate.h"
#include "yoke/pool.h"
#include "tests/oracles/all_modes.h"
#include "tools/graphgen/event_stream.h"
#include "tools/graphgen/rng.h"

namespace yoke {
namespace {

void expect_same(const CommitResult& a, const CommitResult& b, const std::string& where) {
  EXPECT_EQ(a.commit, b.commit) << where;
  EXPECT_EQ(a.weight, b.weight) << where;
  EXPECT_EQ(a.pairs, b.pairs) << where;
  EXPECT_EQ(a.status, b.status) << where;
  EXPECT_EQ(a.diff.removed, b.diff.removed) << where;
  EXPECT_EQ(a.diff.added, b.diff.added) << where;
  EXPECT_EQ(a.stats.searches, b.stats.searches) << where;
  EXPECT_EQ(a.stats.vertices_touched, b.stats.vertices_touched) << where;
}

TEST(PoolSnapshot, RestoredPoolBehavesExactlyLikeTheOriginal) {
  const gen::StreamFamily families[] = {gen::StreamFamily::city, gen::StreamFamily::stress,
                                        gen::StreamFamily::dispatch, gen::StreamFamily::random};
  for (std::uint64_t seed = 1; seed <= 12; ++seed) {
    for (Mode mode : oracle::kAllModes) {
      const gen::StreamSpec spec = gen::test_stream_spec(families[seed % 4], seed, 120, 40);
      const std::vector<std::vector<Event>> batches = gen::generate_stream(spec);
      Pool original(mode);
      std::unique_ptr<Pool> copy;
      for (std::size_t i = 0; i < batches.size(); ++i) {
        const std::string where = "seed " + std::to_string(seed) + " " + mode_name(mode) +
                                  " batch " + std::to_string(i);
        // Restore from a snapshot every few batches, and from then on compare.
        if (i % 7 == 3) {
          copy = Pool::restore(original.save());
          ASSERT_EQ(copy->save(), original.save()) << where;
          const PoolExport out = copy->export_certified();
          ASSERT_TRUE(check_certificate(out.graph, out.certificate).ok) << where;
        }
        const CommitResult a = original.commit(batches[i]);
        if (copy) {
          expect_same(a, copy->commit(batches[i]), where);
          ASSERT_EQ(copy->matching(), original.matching()) << where;
        }
      }
      ASSERT_TRUE(copy);
      EXPECT_EQ(copy->save(), original.save());
    }
  }
}

TEST(PoolSnapshot, EmptyPoolRoundTrips) {
  Pool pool(Mode::max_weight);
  const std::unique_ptr<Pool> copy = Pool::restore(pool.save());
  EXPECT_EQ(copy->vertex_count(), 0u);
  EXPECT_EQ(copy->save(), pool.save());
}

TEST(PoolSnapshot, TruncatedOrDamagedBytesAreRefusedOrStillSafe) {
  const gen::StreamSpec spec = gen::test_stream_spec(gen::StreamFamily::stress, 5, 60, 20);
  Pool pool(Mode::max_weight);
  for (const auto& batch : gen::generate_stream(spec)) pool.commit(batch);
  const std::string bytes = pool.save();
  for (std::size_t cut = 0; cut < bytes.size(); cut += 1 + cut / 16) {
    EXPECT_THROW(Pool::restore(std::string_view(bytes).substr(0, cut)), InputError) << cut;
  }
  EXPECT_THROW(Pool::restore(bytes + "x"), InputError);
  // A flipped byte is refused, or gives a pool the checker can judge: never a crash. (Run under
  // AddressSanitizer in CI.)
  gen::Rng rng(11);
  int refused = 0;
  for (int trial = 0; trial < 400; ++trial) {
    std::string damaged = bytes;
    damaged[rng.below(damaged.size())] ^= static_cast<char>(1 + rng.below(255));
    try {
      const std::unique_ptr<Pool> restored = Pool::restore(damaged);
      const PoolExport out = restored->export_certified();
      (void)check_certificate(out.graph, out.certificate);
    } catch (const InputError&) {
      ++refused;
    }
  }
  EXPECT_GT(refused, 0);
}

// Bytes the certificate check after a restore cannot judge (found by tests/fuzz/snapshot_fuzz;
// tests/fuzz/regressions/README.md, "snapshot/").
TEST(PoolSnapshot, RestoreRefusesWhatTheCertificateCannotSee) {
  Pool pool(Mode::max_weight, PoolLimits{12, 30, 1000});
  pool.commit(std::vector<Event>{{EventKind::set_edge, 1, 2, 6}, {EventKind::set_edge, 2, 3, 5}});
  const std::string bytes = pool.save();
  ASSERT_NO_THROW(Pool::restore(bytes));
  constexpr std::size_t kWeight = 8 + 4 + 1 + 24 + 8 + 8;  // magic, version, mode, limits, bonus, commits
  constexpr std::size_t kGraph = kWeight + 16;          // weight, pairs
  constexpr std::size_t kEdges = kGraph + 8 + 1 + 8;    // vertex count, tracking, edge count
  const auto with = [&bytes](std::size_t at, auto value) {
    std::string changed = bytes;
    std::memcpy(changed.data() + at, &value, sizeof value);
    return changed;
  };
  // A weight counter that is not the matching's.
  EXPECT_THROW(Pool::restore(with(kWeight, Weight{5})), InputError);
  // An edge far beyond the pool's bound of 1000: the unmatched one only gains slack, and its
  // weight overflowed the next repair.
  for (std::size_t edge = 0; edge < 2; ++edge) {
    EXPECT_THROW(Pool::restore(with(kEdges + 16 * edge + 8, -(Weight{1} << 62))), InputError);
  }
  // A vertex count the bytes cannot hold (no edges, no free slots, then the end): refused before
  // its lists are allocated (25 GB).
  const std::string short_graph =
      with(kGraph, std::uint64_t{(1 << 30) - 1}).substr(0, kGraph + 9) + std::string(16, '\0');
  EXPECT_THROW(Pool::restore(short_graph), InputError);
}

// Snapshot bytes from before a format change must keep loading. The layout: magic (8), version
// (4), mode (1), limits (24), then from version 2 on the churn bonus (8), ..., the forest, then
// from version 3 on the held pairs.
constexpr std::size_t kVersionAt = 8;
constexpr std::size_t kBonusAt = 8 + 4 + 1 + 24;

void put_u64(std::string& out, std::uint64_t value) {
  out.append(reinterpret_cast<const char*>(&value), sizeof value);
}

std::string with_version(std::string bytes, std::uint32_t version) {
  std::memcpy(bytes.data() + kVersionAt, &version, sizeof version);
  return bytes;
}

// Versions 1 (no churn bonus, no held pairs) and 2 (no held pairs), laid out as those versions
// wrote them, from a version 3 save of a pool with neither: they load into the same pool.
TEST(PoolSnapshot, OlderVersionsStillLoad) {
  for (Mode mode : {Mode::max_weight, Mode::max_cardinality, Mode::perfect}) {
    const gen::StreamSpec spec = gen::test_stream_spec(gen::StreamFamily::city, 3, 60, 20);
    const std::vector<std::vector<Event>> batches = gen::generate_stream(spec);
    ASSERT_GE(batches.size(), 2u);
    Pool pool(mode);
    for (std::size_t i = 0; i + 1 < batches.size(); ++i) pool.commit(batches[i]);
    const std::string v3 = pool.save();
    std::uint32_t version = 0;
    std::memcpy(&version, v3.data() + kVersionAt, sizeof version);
    ASSERT_EQ(version, 3u);
    // No held pairs: no edge aside, no pair (two zero counts at the end); no bonus.
    ASSERT_EQ(v3.substr(v3.size() - 16), std::string(16, '\0'));
    ASSERT_EQ(v3.substr(kBonusAt, 8), std::string(8, '\0'));
    const std::string v2 = with_version(v3.substr(0, v3.size() - 16), 2);
    std::string v1 = with_version(v2, 1);
    v1.erase(kBonusAt, 8);
    for (const std::string& old : {v1, v2}) {
      std::unique_ptr<Pool> restored;
      ASSERT_NO_THROW(restored = Pool::restore(old)) << mode_name(mode);
      EXPECT_EQ(restored->save(), v3) << mode_name(mode);
      const std::unique_ptr<Pool> original = Pool::restore(v3);
      const CommitResult a = original->commit(batches.back());
      expect_same(a, restored->commit(batches.back()), mode_name(mode));
    }
  }
}

// The held pairs' section of version 3, byte for byte: the edges aside (count, then a, b, w in
// key order), then the held pairs (count, then a, b).
TEST(PoolSnapshot, HeldPairsKeepTheirVersion3Bytes) {
  Pool pool(Mode::max_weight);
  pool.commit(std::vector<Event>{{EventKind::set_edge, 1, 2, 5}, {EventKind::set_edge, 2, 3, 9},
                                 {EventKind::set_edge, 3, 4, 2}, {EventKind::set_edge, 1, 4, 1}});
  pool.commit(std::vector<Event>{{EventKind::hold_pair, 2, 1, 0}});
  const std::string bytes = pool.save();
  std::uint32_t version = 0;
  std::memcpy(&version, bytes.data() + kVersionAt, sizeof version);
  EXPECT_EQ(version, 3u);
  std::string held;
  put_u64(held, 3);  // {1,2} 5, {1,4} 1, {2,3} 9 wait aside; {3,4} stays in the graph
  for (const auto& [a, b, w] : {std::tuple{1, 2, 5}, std::tuple{1, 4, 1}, std::tuple{2, 3, 9}}) {
    put_u64(held, static_cast<std::uint64_t>(a));
    put_u64(held, static_cast<std::uint64_t>(b));
    put_u64(held, static_cast<std::uint64_t>(w));
  }
  put_u64(held, 1);
  put_u64(held, 1);
  put_u64(held, 2);
  ASSERT_GT(bytes.size(), held.size());
  EXPECT_EQ(bytes.substr(bytes.size() - held.size()), held);
  const std::unique_ptr<Pool> restored = Pool::restore(bytes);
  EXPECT_EQ(restored->mate_of(1), 2u);
  EXPECT_EQ(restored->mate_of(3), 4u);
  EXPECT_EQ(restored->weight(), 5 + 2);
  EXPECT_EQ(restored->save(), bytes);
}

// The fixed fields at the start, as engine/pool/STATE_FORMAT.md lays them out.
TEST(PoolSnapshot, HeaderFieldsSitWhereTheFormatSays) {
  Pool pool(Mode::max_cardinality, PoolLimits{12, 30, 1000}, 7);
  pool.commit(std::vector<Event>{{EventKind::set_edge, 1, 2, 5}});
  const std::string bytes = pool.save();
  ASSERT_GE(bytes.size(), 69u);
  auto u64_at = [&](std::size_t at) {
    std::uint64_t value = 0;
    std::memcpy(&value, bytes.data() + at, sizeof value);
    return value;
  };
  EXPECT_EQ(bytes.substr(0, 8), "YOKEPOOL");
  std::uint32_t version = 0;
  std::memcpy(&version, bytes.data() + 8, sizeof version);
  EXPECT_EQ(version, 3u);
  EXPECT_EQ(bytes[12], 1);       // mode: max-cardinality
  EXPECT_EQ(u64_at(13), 12u);    // max_vertices
  EXPECT_EQ(u64_at(21), 30u);    // max_edges
  EXPECT_EQ(u64_at(29), 1000u);  // max_abs_weight
  EXPECT_EQ(u64_at(37), 7u);     // churn_bonus
  EXPECT_EQ(u64_at(45), 1u);     // commits
  EXPECT_EQ(u64_at(53), 5u);     // weight
  EXPECT_EQ(u64_at(61), 1u);     // pairs
  EXPECT_GE(u64_at(69), 2u);     // the graph: slot capacity n
  EXPECT_EQ(bytes[77], 1);       // positions tracked
}

}  // namespace
}  // namespace yoke
