// Unit tests for the monotone radix heap of bound events (engine/solver/radix_heap.h).
#include "solver/radix_heap.h"

#include <gtest/gtest.h>

#include <algorithm>
#include <cstdint>
#include <map>
#include <random>
#include <tuple>
#include <vector>

namespace yoke {
namespace {

using Triple = std::tuple<Weight, std::uint32_t, std::uint32_t>;  // key, kind, id

constexpr Weight kMaxKey = Weight{1} << 54;  // every dual, hence every key, stays below 2^54
constexpr std::uint32_t kMaxId = (std::uint32_t{1} << 30) - 1;
constexpr std::uint32_t kKinds = 8;
constexpr Weight kLargestKey = (Weight{1} << 57) - 1;  // the precondition's bound

Triple take(RadixHeap& heap) {
  const RadixHeap::Entry e = heap.top();
  heap.pop();
  return {e.key, e.kind, e.id};
}

std::vector<Triple> drain(RadixHeap& heap) {
  std::vector<Triple> out;
  while (!heap.empty()) out.push_back(take(heap));
  return out;
}

TEST(RadixHeap, StartsEmpty) {
  RadixHeap heap;
  EXPECT_TRUE(heap.empty());
  EXPECT_EQ(heap.size(), 0u);
  EXPECT_EQ(heap.pushes(), 0u);
}

TEST(RadixHeap, KeysComeOutInOrder) {
  RadixHeap heap;
  const std::vector<Weight> keys = {17, 3, 99, 0, 64, 65, 63, 1, 1000, 2, 128, 127, 5};
  for (std::size_t i = 0; i < keys.size(); ++i) heap.push(keys[i], static_cast<std::uint32_t>(i), 0);
  std::vector<Weight> expected = keys;
  std::sort(expected.begin(), expected.end());
  std::vector<Weight> got;
  for (const Triple& t : drain(heap)) got.push_back(std::get<0>(t));
  EXPECT_EQ(got, expected);
}

TEST(RadixHeap, LowerKindFirstAmongEqualKeys) {
  RadixHeap heap;
  heap.push(5, 10, 3);
  heap.push(5, 11, 1);
  heap.push(7, 12, 0);
  heap.push(5, 13, 0);
  heap.push(5, 14, 2);
  heap.push(3, 15, 3);
  heap.push(4, 16, 0);
  const std::vector<Triple> expected = {
      {3, 3, 15}, {4, 0, 16}, {5, 0, 13}, {5, 1, 11}, {5, 2, 14}, {5, 3, 10}, {7, 0, 12}};
  EXPECT_EQ(drain(heap), expected);
}

// A kind pushed at the current key after a higher kind was taken cannot go back in time: it is
// due at once, before anything still queued, and it keeps its own kind.
TEST(RadixHeap, LateLowerKindAtCurrentKeyIsNext) {
  RadixHeap heap;
  heap.push(10, 1, 2);
  heap.push(10, 2, 3);
  heap.push(10, 3, 2);
  heap.push(12, 4, 0);
  // Two entries share (10, kind 2); which id leaves first is not specified.
  const Triple first = take(heap);
  EXPECT_EQ(std::get<0>(first), 10);
  EXPECT_EQ(std::get<1>(first), 2u);
  ASSERT_TRUE(std::get<2>(first) == 1 || std::get<2>(first) == 3);
  const std::uint32_t other = std::get<2>(first) == 1 ? 3 : 1;
  heap.push(10, 5, 0);
  EXPECT_EQ(take(heap), Triple(10, 0, 5));
  heap.push(10, 6, 1);
  EXPECT_EQ(take(heap), Triple(10, 1, 6));
  // The queued (10, kind 2) is still due before (10, kind 3) and the higher key.
  EXPECT_EQ(take(heap), Triple(10, 2, other));
  // A higher kind at the current key waits behind nothing lower, but ahead of a larger key.
  heap.push(10, 7, 3);
  const std::vector<Triple> rest = drain(heap);
  ASSERT_EQ(rest.size(), 3u);
  EXPECT_EQ(std::get<0>(rest[0]), 10);
  EXPECT_EQ(std::get<1>(rest[0]), 3u);
  EXPECT_EQ(std::get<0>(rest[1]), 10);
  EXPECT_EQ(std::get<1>(rest[1]), 3u);
  EXPECT_EQ(rest[2], Triple(12, 0, 4));
}

TEST(RadixHeap, TopIsStableAndCountsAsTaken) {
  RadixHeap heap;
  heap.push(8, 1, 3);
  heap.push(9, 2, 0);
  EXPECT_EQ(heap.top().id, 1u);
  EXPECT_EQ(heap.top().id, 1u);
  EXPECT_EQ(heap.size(), 2u);
  EXPECT_EQ(take(heap), Triple(8, 3, 1));
  EXPECT_EQ(heap.top().id, 2u);
  EXPECT_EQ(take(heap), Triple(9, 0, 2));
  EXPECT_TRUE(heap.empty());
}

TEST(RadixHeap, KeysFarApart) {
  RadixHeap heap;
  const std::vector<Weight> keys = {kMaxKey,      0,           kMaxKey - 1, Weight{1} << 40, 1,
                                    Weight{1} << 32, (Weight{1} << 32) - 1, (Weight{1} << 53) + 7,
                                    kMaxKey - 2, 3};
  for (std::size_t i = 0; i < keys.size(); ++i) {
    heap.push(keys[i], static_cast<std::uint32_t>(i), static_cast<std::uint32_t>(i % 4));
  }
  std::vector<Weight> expected = keys;
  std::sort(expected.begin(), expected.end());
  std::vector<Weight> got;
  for (const Triple& t : drain(heap)) got.push_back(std::get<0>(t));
  EXPECT_EQ(got, expected);

  // Monotone walk with huge jumps: each taken key pushes one far beyond it, plus a near one.
  heap.reset(0);
  heap.push(0, 0, 0);
  Weight last = 0;
  for (std::uint32_t step = 1; step <= 50; ++step) {
    const Triple t = take(heap);
    EXPECT_GE(std::get<0>(t), last);
    last = std::get<0>(t);
    heap.push(std::min(kMaxKey, last + (Weight{1} << (step % 50))), step, 1);
    heap.push(last + 1, step, 2);
  }
  // Started with 1 entry; each step took one and added two.
  EXPECT_EQ(heap.size(), 51u);
  for (const Triple& t : drain(heap)) {
    EXPECT_GE(std::get<0>(t), last);
    last = std::get<0>(t);
  }
}

TEST(RadixHeap, IdsAndKindsRoundTrip) {
  RadixHeap heap;
  const std::vector<std::uint32_t> ids = {0, 1, 2, 3, kMaxId, kMaxId - 1, 0x2AAAAAAA, 0x15555555,
                                          1u << 29};
  std::vector<Triple> pushed;
  for (std::uint32_t kind = 0; kind < 4; ++kind) {
    for (std::size_t i = 0; i < ids.size(); ++i) {
      // Distinct keys so the expected order is exact; include the top of the key range.
      const Weight key = i % 2 == 0 ? static_cast<Weight>(10 * i + kind) : kMaxKey - static_cast<Weight>(10 * i + kind);
      heap.push(key, ids[i], kind);
      pushed.emplace_back(key, kind, ids[i]);
    }
  }
  std::sort(pushed.begin(), pushed.end());
  EXPECT_EQ(drain(heap), pushed);
}

TEST(RadixHeap, ResetEmptiesAndSetsFloor) {
  RadixHeap heap;
  for (std::uint32_t i = 0; i < 20; ++i) heap.push(1000 + 37 * i, i, i % 4);
  EXPECT_EQ(take(heap), Triple(1000, 0, 0));
  heap.reset(100);
  EXPECT_TRUE(heap.empty());
  EXPECT_EQ(heap.size(), 0u);
  // The floor is 100 now, below the keys taken before the reset.
  heap.push(150, 1, 0);
  heap.push(100, 2, 3);
  heap.push(100, 3, 1);
  heap.push(5000, 7, 2);  // beyond the forgotten keys, so a leftover would surface first
  EXPECT_EQ(take(heap), Triple(100, 1, 3));
  EXPECT_EQ(take(heap), Triple(100, 3, 2));
  EXPECT_EQ(take(heap), Triple(150, 0, 1));
  EXPECT_EQ(take(heap), Triple(5000, 2, 7));
  EXPECT_TRUE(heap.empty());
  // The engine resets to 0 at every run.
  heap.push(kMaxKey, 4, 0);
  heap.reset(0);
  heap.push(2, 5, 2);
  heap.push(0, 6, 3);
  EXPECT_EQ(drain(heap), (std::vector<Triple>{{0, 3, 6}, {2, 2, 5}}));
}

TEST(RadixHeap, SizeAndPushCount) {
  RadixHeap heap;
  for (std::uint32_t i = 0; i < 10; ++i) {
    heap.push(i * 3, i, 0);
    EXPECT_EQ(heap.size(), i + 1);
  }
  heap.top();
  EXPECT_EQ(heap.size(), 10u);
  heap.pop();
  EXPECT_EQ(heap.size(), 9u);
  take(heap);
  take(heap);
  EXPECT_EQ(heap.size(), 7u);
  EXPECT_FALSE(heap.empty());
  EXPECT_EQ(heap.pushes(), 10u);
  heap.compact([](const RadixHeap::Entry& e) { return e.id != 5; });
  EXPECT_EQ(heap.size(), 6u);
  EXPECT_EQ(heap.pushes(), 10u);  // compact is not a push
}

TEST(RadixHeap, CompactDropsExactlyTheRejected) {
  RadixHeap heap;
  std::vector<Triple> pushed;
  std::mt19937_64 rng(7);
  for (std::uint32_t id = 0; id < 300; ++id) {
    const Weight key = static_cast<Weight>(id) * 7919 % 5003;  // distinct: 5003 is prime
    const auto kind = static_cast<std::uint32_t>(rng() % 4);
    heap.push(key, id, kind);
    pushed.emplace_back(key, kind, id);
  }
  std::sort(pushed.begin(), pushed.end());
  // Take a few first so bucket 0 holds entries too when compacting.
  std::vector<Triple> taken;
  for (int i = 0; i < 5; ++i) taken.push_back(take(heap));
  EXPECT_EQ(taken, std::vector<Triple>(pushed.begin(), pushed.begin() + 5));
  std::vector<std::uint32_t> seen;
  heap.compact([&](const RadixHeap::Entry& e) {
    seen.push_back(e.id);
    return e.id % 3 != 0;
  });
  // The predicate sees every remaining entry exactly once.
  std::sort(seen.begin(), seen.end());
  std::vector<std::uint32_t> remaining;
  for (auto it = pushed.begin() + 5; it != pushed.end(); ++it) remaining.push_back(std::get<2>(*it));
  std::sort(remaining.begin(), remaining.end());
  EXPECT_EQ(seen, remaining);

  std::vector<Triple> expected;
  for (auto it = pushed.begin() + 5; it != pushed.end(); ++it) {
    if (std::get<2>(*it) % 3 != 0) expected.push_back(*it);
  }
  EXPECT_EQ(heap.size(), expected.size());
  EXPECT_EQ(drain(heap), expected);

  // Rejecting everything empties the heap; it keeps working afterwards.
  heap.push(6000, 1, 0);
  heap.push(6001, 2, 0);
  heap.compact([](const RadixHeap::Entry&) { return false; });
  EXPECT_TRUE(heap.empty());
  heap.push(6002, 3, 1);
  EXPECT_EQ(drain(heap), std::vector<Triple>{Triple(6002, 1, 3)});
}

// All eight kinds keep their rank at the largest keys allowed: the kind shares a word with the
// key's high bits, so neither may spill into the other.
TEST(RadixHeap, EightKindsAtTheLargestKeys) {
  RadixHeap heap;
  for (std::uint32_t kind = kKinds; kind-- > 0;) {
    heap.push(kLargestKey, kMaxId - kind, kind);
    heap.push(kLargestKey - 1, kind, kind);
  }
  std::vector<Triple> expected;
  for (std::uint32_t kind = 0; kind < kKinds; ++kind) expected.emplace_back(kLargestKey - 1, kind, kind);
  for (std::uint32_t kind = 0; kind < kKinds; ++kind) expected.emplace_back(kLargestKey, kind, kMaxId - kind);
  EXPECT_EQ(drain(heap), expected);

  // Pushed late at the current key, a low kind keeps its own kind (not the floor's).
  heap.reset(kLargestKey);
  heap.push(kLargestKey, 1, 6);
  EXPECT_EQ(take(heap), Triple(kLargestKey, 6, 1));
  heap.push(kLargestKey, 2, 0);
  heap.push(kLargestKey, 3, 7);
  EXPECT_EQ(take(heap), Triple(kLargestKey, 0, 2));
  EXPECT_EQ(take(heap), Triple(kLargestKey, 7, 3));
  EXPECT_TRUE(heap.empty());
}

// Keeps equal keys in a fixed order: two identical workloads give identical id sequences.
std::vector<Triple> equal_key_run() {
  RadixHeap heap;
  std::vector<Triple> out;
  for (std::uint32_t id = 0; id < 64; ++id) heap.push(id % 4 == 0 ? 3 : 9, id, id % 2);
  for (int i = 0; i < 20; ++i) out.push_back(take(heap));
  for (std::uint32_t id = 64; id < 96; ++id) heap.push(9, id, id % 4);
  for (const Triple& t : drain(heap)) out.push_back(t);
  return out;
}

TEST(RadixHeap, EqualKeysInFixedOrder) {
  const std::vector<Triple> first = equal_key_run();
  EXPECT_EQ(first, equal_key_run());
  EXPECT_EQ(first.size(), 96u);
}

// Reference: an entry is due at rank max(8 key + kind, rank of the last entry taken) (ranks
// order by key, then kind, with the clamp); the heap must return an entry of least rank. Ids
// are unique, so each taken entry is checked against exactly what was pushed with that id.
class ReferenceHeap {
 public:
  void reset(Weight floor) {
    by_rank_.clear();
    floor_rank_ = kKinds * floor;
  }
  Weight floor_key() const { return floor_rank_ / kKinds; }
  void push(Weight key, std::uint32_t id, std::uint32_t kind) {
    const Weight rank = std::max(kKinds * key + static_cast<Weight>(kind), floor_rank_);
    by_rank_[rank].emplace(id, Triple(key, kind, id));
  }
  // Checks that `got` is a pushed entry of least rank, and removes it.
  void take(const Triple& got) {
    ASSERT_FALSE(by_rank_.empty());
    auto least = by_rank_.begin();
    const auto found = least->second.find(std::get<2>(got));
    ASSERT_NE(found, least->second.end())
        << "id " << std::get<2>(got) << " (key " << std::get<0>(got) << ", kind " << std::get<1>(got)
        << ") is not among the least-rank entries (rank " << least->first << ")";
    ASSERT_EQ(found->second, got);
    floor_rank_ = least->first;
    least->second.erase(found);
    if (least->second.empty()) by_rank_.erase(least);
  }
  template <class Keep>
  void compact(Keep keep) {
    for (auto it = by_rank_.begin(); it != by_rank_.end();) {
      for (auto e = it->second.begin(); e != it->second.end();) {
        const auto& [key, kind, id] = e->second;
        e = keep(RadixHeap::Entry{key, id, kind}) ? std::next(e) : it->second.erase(e);
      }
      it = it->second.empty() ? by_rank_.erase(it) : std::next(it);
    }
  }
  std::size_t size() const {
    std::size_t n = 0;
    for (const auto& [rank, group] : by_rank_) n += group.size();
    return n;
  }

 private:
  std::map<Weight, std::map<std::uint32_t, Triple>> by_rank_;
  Weight floor_rank_ = 0;
};

void differential(std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  RadixHeap heap;
  ReferenceHeap ref;
  std::uint32_t next_id = static_cast<std::uint32_t>(seed % 1000) * 1000000;
  auto random_key = [&]() {
    const Weight floor = ref.floor_key();
    Weight gap = 0;
    switch (rng() % 6) {
      case 0: gap = 0; break;                                              // the current key
      case 1: gap = static_cast<Weight>(rng() % 4); break;
      case 2: gap = static_cast<Weight>(rng() % 1000); break;
      case 3: gap = static_cast<Weight>(rng() % (std::uint64_t{1} << 24)); break;
      case 4: gap = static_cast<Weight>(rng() % (std::uint64_t{1} << 44)); break;
      default: gap = static_cast<Weight>(rng() % static_cast<std::uint64_t>(kMaxKey)); break;
    }
    return std::min(kMaxKey, floor + gap);
  };
  for (int op = 0; op < 6000; ++op) {
    const std::uint64_t roll = rng() % 100;
    if (roll < 52) {
      const Weight key = random_key();
      const auto kind = static_cast<std::uint32_t>(rng() % kKinds);
      const std::uint32_t id = next_id++ & kMaxId;
      heap.push(key, id, kind);
      ref.push(key, id, kind);
    } else if (roll < 97) {
      if (heap.empty()) continue;
      const Triple got = take(heap);
      ref.take(got);
      if (::testing::Test::HasFatalFailure()) return;
    } else if (roll < 99) {
      const std::uint64_t modulus = 2 + rng() % 5;
      auto keep = [modulus](const RadixHeap::Entry& e) { return e.id % modulus != 0; };
      heap.compact(keep);
      ref.compact(keep);
    } else {
      const Weight floor = static_cast<Weight>(rng() % 1000);
      heap.reset(floor);
      ref.reset(floor);
    }
    ASSERT_EQ(heap.size(), ref.size()) << "seed " << seed << ", op " << op;
    ASSERT_EQ(heap.empty(), ref.size() == 0);
  }
  while (!heap.empty()) {
    ref.take(take(heap));
    if (::testing::Test::HasFatalFailure()) return;
  }
  EXPECT_EQ(ref.size(), 0u);
}

TEST(RadixHeap, MatchesReferenceOnRandomMonotoneWorkloads) {
  for (std::uint64_t seed = 1; seed <= 12; ++seed) {
    SCOPED_TRACE(seed);
    differential(seed);
    if (HasFatalFailure()) return;
  }
}

// Many entries at a handful of keys and kinds: ties dominate, the clamp is hit often.
TEST(RadixHeap, MatchesReferenceWithHeavyTies) {
  std::mt19937_64 rng(99);
  RadixHeap heap;
  ReferenceHeap ref;
  std::uint32_t next_id = 0;
  for (int op = 0; op < 8000; ++op) {
    if (rng() % 2 == 0) {
      const Weight key = ref.floor_key() + static_cast<Weight>(rng() % 3 == 0 ? 1 : 0);
      const auto kind = static_cast<std::uint32_t>(rng() % kKinds);
      heap.push(key, next_id, kind);
      ref.push(key, next_id, kind);
      ++next_id;
    } else if (!heap.empty()) {
      ref.take(take(heap));
      ASSERT_FALSE(HasFatalFailure()) << "op " << op;
    }
  }
  while (!heap.empty()) {
    ref.take(take(heap));
    ASSERT_FALSE(HasFatalFailure());
  }
}

}  // namespace
}  // namespace yoke
