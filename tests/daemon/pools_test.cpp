#include <gtest/gtest.h>

#include <cstdint>
#include <limits>
#include <utility>
#include <vector>

#include "daemon/pools/pool_registry.h"
#include "daemon/pools/retry_ledger.h"

namespace yoke::daemon {
namespace {

TEST(PoolRegistry, CreatesPoolsOnFirstUseWithTheirSettings) {
  PoolSettings cardinality{Mode::max_cardinality, {}};
  cardinality.limits.max_vertices = 1000;
  PoolRegistry registry({}, {{"riders", cardinality}});
  EXPECT_EQ(registry.find("riders"), nullptr);
  EXPECT_EQ(registry.pool("riders").mode(), Mode::max_cardinality);
  EXPECT_EQ(registry.pool("riders").limits().max_vertices, 1000u);
  EXPECT_EQ(registry.pool("couriers").mode(), Mode::max_weight);
  EXPECT_NE(registry.find("riders"), nullptr);
  EXPECT_EQ(registry.names(), (std::vector<std::string>{"couriers", "riders"}));
}

TEST(PoolRegistry, RefusesSettingsThatCannotStayExact) {
  PoolSettings too_wide{Mode::max_cardinality, {}};
  too_wide.limits.max_abs_weight = Weight{1} << 50;  // the offset would pass 2^52
  EXPECT_THROW(PoolRegistry({}, {{"wide", too_wide}}), InputError);
}

TEST(PoolRegistry, EraseHandsThePoolOverAndForgetsIt) {
  PoolRegistry registry({}, {});
  Pool& riders = registry.pool("riders");
  registry.pool("couriers");
  const std::unique_ptr<Pool> taken = registry.erase("riders");
  EXPECT_EQ(taken.get(), &riders);
  EXPECT_EQ(registry.find("riders"), nullptr);
  EXPECT_EQ(registry.names(), std::vector<std::string>{"couriers"});
  EXPECT_EQ(registry.erase("riders"), nullptr);  // nothing left to take
  EXPECT_EQ(registry.size(), 1u);
}

TEST(RetryLedger, ErasePoolForgetsThatPoolsMarksOnly) {
  RetryLedger ledger;
  ledger.record("a", "van-7", {1, 1});
  ledger.record("b", "van-7", {3, 4});
  ledger.record("b", "bike-2", {1, 5});
  ledger.record("b.x", "van-7", {9, 2});  // a name sharing a prefix is another pool
  ledger.record("c", "van-7", {2, 2});
  EXPECT_EQ(ledger.erase_pool("b"), 2u);
  EXPECT_TRUE(ledger.clients_of("b").empty());
  EXPECT_EQ(ledger.classify("b", "van-7", 3).verdict, RetryVerdict::fresh);
  EXPECT_EQ(ledger.last("a", "van-7")->seq, 1u);
  EXPECT_EQ(ledger.last("b.x", "van-7")->seq, 2u);
  EXPECT_EQ(ledger.last("c", "van-7")->seq, 2u);
  EXPECT_EQ(ledger.size(), 3u);
  EXPECT_EQ(ledger.erase_pool("b"), 0u);
}

TEST(RetryLedger, AppliesEachClientBatchOncePerPool) {
  RetryLedger ledger;
  EXPECT_EQ(ledger.classify("default", "van-7", 1).verdict, RetryVerdict::fresh);
  EXPECT_FALSE(ledger.classify("default", "van-7", 1).highest.has_value());
  ledger.record("default", "van-7", {1, 41});
  const RetryAnswer again = ledger.classify("default", "van-7", 1);
  EXPECT_EQ(again.verdict, RetryVerdict::duplicate);
  EXPECT_EQ(again.seq, 41u);
  EXPECT_EQ(ledger.last("default", "van-7")->seq, 41u);
  // Below the mark's first batch: nothing is known of it.
  EXPECT_EQ(ledger.classify("default", "van-7", 0).verdict, RetryVerdict::forgotten);
  EXPECT_EQ(ledger.classify("default", "van-7", 2).verdict, RetryVerdict::fresh);
  EXPECT_EQ(ledger.classify("default", "van-7", 2).highest->batch_number, 1u);
  // Clients, and one client's pools, are independent.
  EXPECT_EQ(ledger.classify("default", "bike-2", 1).verdict, RetryVerdict::fresh);
  EXPECT_EQ(ledger.classify("airport", "van-7", 1).verdict, RetryVerdict::fresh);
  EXPECT_FALSE(ledger.last("airport", "van-7").has_value());
  EXPECT_EQ(ledger.size(), 1u);
}

TEST(RetryLedger, EveryRememberedBatchKeepsItsOwnSeq) {
  RetryLedger ledger(LedgerSettings{4, 0, 100});
  // Batches 10, 11, 13, 14 at seqs interleaved with another client's.
  ledger.record("default", "van-7", {10, 2});
  ledger.record("default", "bike-2", {1, 3});
  ledger.record("default", "van-7", {11, 4});
  ledger.record("default", "van-7", {13, 7});
  ledger.record("default", "van-7", {14, 9});
  for (const auto& [number, seq] : std::vector<std::pair<std::uint64_t, std::uint64_t>>{
           {10, 2}, {11, 4}, {13, 7}, {14, 9}}) {
    const RetryAnswer answer = ledger.classify("default", "van-7", number);
    EXPECT_EQ(answer.verdict, RetryVerdict::duplicate) << number;
    EXPECT_EQ(answer.seq, seq) << number;
  }
  // 12 was never applied: the client went past it.
  const RetryAnswer skipped = ledger.classify("default", "van-7", 12);
  EXPECT_EQ(skipped.verdict, RetryVerdict::skipped);
  EXPECT_EQ(skipped.highest->batch_number, 14u);
  EXPECT_EQ(skipped.highest->seq, 9u);
  // A fifth batch pushes out the oldest (10): it is forgotten, 11 and 12 stay known.
  ledger.record("default", "van-7", {20, 11});
  EXPECT_EQ(ledger.classify("default", "van-7", 10).verdict, RetryVerdict::forgotten);
  EXPECT_EQ(ledger.classify("default", "van-7", 11).verdict, RetryVerdict::duplicate);
  EXPECT_EQ(ledger.classify("default", "van-7", 12).verdict, RetryVerdict::skipped);
  EXPECT_EQ(ledger.classify("default", "van-7", 19).verdict, RetryVerdict::skipped);
  EXPECT_EQ(ledger.classify("default", "van-7", 1).verdict, RetryVerdict::forgotten);
  EXPECT_EQ(ledger.find("default", "van-7")->known_from, 11u);
  EXPECT_EQ(ledger.find("default", "van-7")->recent.size(), 4u);
}

TEST(RetryLedger, TheTopOfTheRangeTakesNoNewBatch) {
  RetryLedger ledger;
  const std::uint64_t top = std::numeric_limits<std::uint64_t>::max();
  ledger.record("default", "van-7", {top, 5});
  EXPECT_EQ(ledger.classify("default", "van-7", top).verdict, RetryVerdict::duplicate);
  EXPECT_EQ(ledger.classify("default", "van-7", top - 1).verdict, RetryVerdict::forgotten);
  EXPECT_EQ(ledger.classify("default", "van-7", 1).verdict, RetryVerdict::forgotten);
  EXPECT_EQ(ledger.classify("default", "van-7", 1).highest->batch_number, top);
}

TEST(RetryLedger, ANumberBelowTheMarkStartsANewMarkWhenRecorded) {
  // Replay under a longer horizon than the daemon ran with: the daemon had forgotten the
  // client and applied its batch 3 as new.
  RetryLedger ledger;
  ledger.record("default", "van-7", {8, 1});
  ledger.record("default", "van-7", {3, 2});
  const RetryMark& mark = *ledger.find("default", "van-7");
  ASSERT_EQ(mark.recent.size(), 1u);
  EXPECT_EQ(mark.highest().batch_number, 3u);
  EXPECT_EQ(mark.known_from, 3u);
  EXPECT_EQ(ledger.size(), 1u);
}

TEST(RetryLedger, IdleClientsAreDroppedWhenThePoolClosesAWindow) {
  constexpr std::uint64_t kSecond = 1'000'000;
  RetryLedger ledger(LedgerSettings{64, 10, 100});
  ledger.record("default", "van-7", {1, 1});
  ledger.record("default", "bike-2", {1, 2});
  EXPECT_EQ(ledger.close_group("default", 1, 100 * kSecond), 0u);
  EXPECT_EQ(ledger.find("default", "van-7")->wall_time_us, 100 * kSecond);
  ledger.record("default", "bike-2", {2, 3});
  EXPECT_EQ(ledger.close_group("default", 3, 105 * kSecond), 0u);
  // Another pool's windows do not count: van-7's mark lives on until its own pool moves.
  ledger.record("harbour", "tug-1", {1, 1});
  EXPECT_EQ(ledger.close_group("harbour", 1, 500 * kSecond), 0u);
  EXPECT_NE(ledger.find("default", "van-7"), nullptr);
  // Exactly idle_seconds is still within the horizon.
  ledger.record("default", "tram-3", {1, 4});
  EXPECT_EQ(ledger.close_group("default", 4, 110 * kSecond), 0u);
  ledger.record("default", "tram-3", {2, 5});
  EXPECT_EQ(ledger.close_group("default", 5, 110 * kSecond + 1), 1u);
  EXPECT_EQ(ledger.find("default", "van-7"), nullptr);
  EXPECT_NE(ledger.find("default", "bike-2"), nullptr);
  EXPECT_EQ(ledger.classify("default", "van-7", 1).verdict, RetryVerdict::fresh);
  // A wall clock that steps back drops nothing.
  ledger.record("default", "tram-3", {3, 6});
  EXPECT_EQ(ledger.close_group("default", 6, 50 * kSecond), 0u);
  EXPECT_EQ(ledger.size(), 3u);
}

TEST(RetryLedger, PastTheCountTheLeastRecentlyActiveGoFirst) {
  RetryLedger ledger(LedgerSettings{64, 0, 2});
  ledger.record("default", "a", {1, 1});
  ledger.record("default", "b", {1, 2});
  ledger.record("default", "a", {2, 3});  // a is now more recent than b
  ledger.record("default", "c", {1, 4});
  // Until the window closes the marks are all there: retries in the window stay exact.
  EXPECT_EQ(ledger.size(), 3u);
  EXPECT_EQ(ledger.close_group("default", 1, 7), 1u);
  EXPECT_EQ(ledger.find("default", "b"), nullptr);
  EXPECT_NE(ledger.find("default", "a"), nullptr);
  EXPECT_NE(ledger.find("default", "c"), nullptr);
  EXPECT_EQ(ledger.size(), 2u);
}

TEST(RetryLedger, RestoreTakesAWholeMarkAndKeepsTheNewestBatches) {
  RetryLedger ledger(LedgerSettings{2, 0, 100});
  RetryMark mark;
  mark.recent = {{3, 1}, {5, 2}, {6, 4}};
  mark.known_from = 3;
  mark.wall_time_us = 99;
  ledger.record("default", "van-7", {1, 9});  // replaced whole
  ledger.restore("default", "van-7", mark);
  const RetryMark& kept = *ledger.find("default", "van-7");
  EXPECT_EQ(kept.recent.size(), 2u);
  EXPECT_EQ(kept.known_from, 4u);
  EXPECT_EQ(kept.wall_time_us, 99u);
  EXPECT_EQ(ledger.classify("default", "van-7", 5).seq, 2u);
  EXPECT_EQ(ledger.classify("default", "van-7", 4).verdict, RetryVerdict::skipped);
  EXPECT_EQ(ledger.classify("default", "van-7", 3).verdict, RetryVerdict::forgotten);
  EXPECT_EQ(ledger.size(), 1u);
  // The restored mark takes its place in the activity order by its highest seq (4).
  RetryLedger counted(LedgerSettings{64, 0, 1});
  counted.restore("default", "van-7", mark);
  counted.record("default", "bike-2", {1, 3});
  counted.close_group("default", 3, 100);
  EXPECT_EQ(counted.find("default", "bike-2"), nullptr);
  EXPECT_NE(counted.find("default", "van-7"), nullptr);
}

}  // namespace
}  // namespace yoke::daemon
