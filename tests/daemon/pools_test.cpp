#include <gtest/gtest.h>

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
  EXPECT_EQ(ledger.classify("b", "van-7", 3), RetryVerdict::fresh);
  EXPECT_EQ(ledger.last("a", "van-7")->seq, 1u);
  EXPECT_EQ(ledger.last("b.x", "van-7")->seq, 2u);
  EXPECT_EQ(ledger.last("c", "van-7")->seq, 2u);
  EXPECT_EQ(ledger.size(), 3u);
  EXPECT_EQ(ledger.erase_pool("b"), 0u);
}

TEST(RetryLedger, AppliesEachClientBatchOncePerPool) {
  RetryLedger ledger;
  EXPECT_EQ(ledger.classify("default", "van-7", 1), RetryVerdict::fresh);
  ledger.record("default", "van-7", {1, 41});
  EXPECT_EQ(ledger.classify("default", "van-7", 1), RetryVerdict::duplicate);
  EXPECT_EQ(ledger.last("default", "van-7")->seq, 41u);
  EXPECT_EQ(ledger.classify("default", "van-7", 0), RetryVerdict::older);
  EXPECT_EQ(ledger.classify("default", "van-7", 2), RetryVerdict::fresh);
  // Clients, and one client's pools, are independent.
  EXPECT_EQ(ledger.classify("default", "bike-2", 1), RetryVerdict::fresh);
  EXPECT_EQ(ledger.classify("airport", "van-7", 1), RetryVerdict::fresh);
  EXPECT_FALSE(ledger.last("airport", "van-7").has_value());
  EXPECT_EQ(ledger.size(), 1u);
}

}  // namespace
}  // namespace yoke::daemon
