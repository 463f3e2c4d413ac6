// The phantom vertex in max-cardinality and perfect pools (docs/mathematics.md §9), switched
// on here for the pools each test builds (whatever YOKE_PHANTOM says outside). Every commit is
// checked against a pool built with YOKE_PHANTOM=0 fed the same batches (the same weight, pairs
// and status: the lexicographic optimum's value is unique) and its export by the certificate
// checker.
#include <gtest/gtest.h>

#include <cstdlib>
#include <cstring>
#include <optional>
#include <string>
#include <vector>

#include "tests/event_builders.h"
#include "yoke/certificate.h"
#include "yoke/pool.h"
#include "yoke/solve.h"
#include "tools/graphgen/event_stream.h"

namespace yoke {
namespace {

// Pools built while it lives use the phantom vertex or not, as asked; YOKE_PHANTOM is put back.
class PhantomSwitch {
 public:
  explicit PhantomSwitch(bool on) {
    if (const char* value = std::getenv("YOKE_PHANTOM")) outside_ = value;
    setenv("YOKE_PHANTOM", on ? "1" : "0", 1);
  }
  ~PhantomSwitch() {
    if (outside_) {
      setenv("YOKE_PHANTOM", outside_->c_str(), 1);
    } else {
      unsetenv("YOKE_PHANTOM");
    }
  }
  PhantomSwitch(const PhantomSwitch&) = delete;
  PhantomSwitch& operator=(const PhantomSwitch&) = delete;

 private:
  std::optional<std::string> outside_;
};

std::unique_ptr<Pool> pool_with_phantom(Mode mode, bool on = true) {
  const PhantomSwitch phantom(on);
  return std::make_unique<Pool>(mode);
}

// The pool with φ and one without, fed the same batches.
class Twins {
 public:
  explicit Twins(Mode mode)
      : with_(pool_with_phantom(mode)), without_(pool_with_phantom(mode, false)) {}

  CommitResult commit(const std::vector<Event>& batch, const std::string& where) {
    const CommitResult a = with_->commit(batch);
    const CommitResult b = without_->commit(batch);
    EXPECT_EQ(a.weight, b.weight) << where;
    EXPECT_EQ(a.pairs, b.pairs) << where;
    EXPECT_EQ(a.status, b.status) << where;
    EXPECT_EQ(with_->pairs(), a.pairs) << where;
    EXPECT_EQ(with_->matching().size(), a.pairs) << where;
    // pair_of (the daemon's mate query) agrees with the pairs from both ends.
    for (const MatchedPair& pair : with_->matching()) {
      EXPECT_EQ(with_->pair_of(pair.a), pair) << where;
      EXPECT_EQ(with_->pair_of(pair.b), (MatchedPair{pair.b, pair.a, pair.w})) << where;
    }
    const PoolExport out = with_->export_certified();
    const CheckResult check = check_certificate(out.graph, out.certificate);
    EXPECT_TRUE(check.ok) << where << ": " << check.failure;
    return a;
  }
  Pool& with() { return *with_; }

 private:
  std::unique_ptr<Pool> with_;
  std::unique_ptr<Pool> without_;
};

// The keys of the exposed vertices (φ's mate among them).
std::vector<VertexKey> exposed(const Pool& pool, VertexKey keys) {
  std::vector<VertexKey> out;
  for (VertexKey k = 0; k < keys; ++k) {
    if (pool.has_vertex(k) && !pool.mate_of(k)) out.push_back(k);
  }
  return out;
}

// A ring of 2k + 1 vertices with chords: one arrival or departure at a time flips the parity.
std::vector<Event> odd_ring(VertexKey n) {
  std::vector<Event> batch;
  for (VertexKey v = 0; v < n; ++v) {
    batch.push_back(set(v, (v + 1) % n, static_cast<Weight>(3 + (v * 7) % 5)));
    if (v % 3 == 0) batch.push_back(set(v, (v + n / 2) % n, static_cast<Weight>(2 + v % 4)));
  }
  return batch;
}

TEST(PoolPhantom, ParityFlipsByArrivalsAndDepartures) {
  for (const Mode mode : {Mode::max_cardinality, Mode::perfect}) {
    Twins twins(mode);
    twins.commit(odd_ring(21), "load");
    VertexKey next = 21;
    for (int step = 0; step < 30; ++step) {
      const std::string where = std::string(mode_name(mode)) + " step " + std::to_string(step);
      std::vector<Event> batch;
      if (step % 3 == 2) {
        batch.push_back(remove(static_cast<VertexKey>(step)));  // an old vertex leaves
      } else {
        batch.push_back(set(next, static_cast<VertexKey>(step % 21), 4 + step % 3));
        batch.push_back(set(next, static_cast<VertexKey>((step * 5) % 21), 1 + step % 6));
        ++next;
      }
      const auto a = static_cast<VertexKey>(20 - step % 7);
      batch.push_back(set(a, a - 1, step % 9));  // a weight moves inside the component
      twins.commit(batch, where);
    }
  }
}

TEST(PoolPhantom, ItsMateDeparting) {
  for (const Mode mode : {Mode::max_cardinality, Mode::perfect}) {
    Twins twins(mode);
    twins.commit(odd_ring(15), "load");
    VertexKey next = 15;
    for (int step = 0; step < 12; ++step) {
      const std::string where = std::string(mode_name(mode)) + " step " + std::to_string(step);
      const std::vector<VertexKey> open = exposed(twins.with(), next);
      if (open.empty()) continue;  // an even count: no φ (re-added keys can flip it)
      // The mate leaves and two vertices arrive: the count stays odd, φ stays without its mate.
      twins.commit({remove(open.front()), set(next, next + 1, 5), set(next, (next + 3) % 13, 2),
                    set(next + 1, (next + 7) % 13, 3)},
                   where);
      next += 2;
      // Then the mate of φ alone leaves: the count turns even and φ goes.
      const std::vector<VertexKey> again = exposed(twins.with(), next);
      if (!again.empty()) twins.commit({remove(again.back())}, where + " alone");
      twins.commit({add(next++)}, where + " back to odd");  // an isolated newcomer: odd again
    }
  }
}

TEST(PoolPhantom, GeneratedStreamsAgreeWithThePoolWithoutIt) {
  const gen::StreamFamily families[] = {gen::StreamFamily::city, gen::StreamFamily::stress,
                                        gen::StreamFamily::dispatch, gen::StreamFamily::random};
  for (std::uint64_t seed = 1; seed <= 8; ++seed) {
    for (const Mode mode : {Mode::max_cardinality, Mode::perfect}) {
      const gen::StreamSpec spec = gen::test_stream_spec(families[seed % 4], seed, 90, 40);
      Twins twins(mode);
      std::size_t i = 0;
      for (const std::vector<Event>& batch : gen::generate_stream(spec)) {
        twins.commit(batch, "seed " + std::to_string(seed) + " batch " + std::to_string(i++));
      }
    }
  }
}

TEST(PoolPhantom, SaveAndRestoreKeepIt) {
  const gen::StreamSpec spec = gen::test_stream_spec(gen::StreamFamily::city, 5, 90, 40);
  const std::vector<std::vector<Event>> batches = gen::generate_stream(spec);
  std::unique_ptr<Pool> original = pool_with_phantom(Mode::max_cardinality);
  std::unique_ptr<Pool> copy;
  std::size_t restored_odd = 0;
  for (std::size_t i = 0; i < batches.size(); ++i) {
    if (i % 5 == 2) {
      // Restored in a process whose switch is off: a pool saved with φ keeps it.
      const std::string bytes = original->save();
      copy = Pool::restore(bytes);
      ASSERT_EQ(copy->save(), bytes) << "batch " << i;
      if (original->vertex_count() % 2 == 1) {
        // A pool holding φ writes state version 4 (engine/pool/STATE_FORMAT.md).
        std::uint32_t version = 0;
        std::memcpy(&version, bytes.data() + 8, sizeof version);
        EXPECT_EQ(version, 4u) << "batch " << i;
        ++restored_odd;
      }
    }
    const CommitResult a = original->commit(batches[i]);
    if (copy) {
      const CommitResult b = copy->commit(batches[i]);
      EXPECT_EQ(a.weight, b.weight) << "batch " << i;
      EXPECT_EQ(a.diff.added, b.diff.added) << "batch " << i;
      EXPECT_EQ(a.diff.removed, b.diff.removed) << "batch " << i;
      ASSERT_EQ(copy->matching(), original->matching()) << "batch " << i;
    }
  }
  EXPECT_GT(restored_odd, 0u);  // some snapshot held φ
}

}  // namespace
}  // namespace yoke
