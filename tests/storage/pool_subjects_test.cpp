// Pool names as subject tokens (daemon/jetstream/pool_subjects.h): every name the daemon
// accepts (daemon/pools/pool_names.h) maps to one valid NATS subject token and back; names
// that differ only by escaped characters get different tokens; tokens no name maps to are
// refused. Expected values come from the escape rule written in the header.
#include <random>
#include <set>
#include <stdexcept>
#include <string>

#include <gtest/gtest.h>

#include "daemon/jetstream/pool_subjects.h"
#include "daemon/pools/pool_names.h"

namespace yoke::jetstream {
namespace {

// A token NATS accepts inside a subject: not empty, no '.', no whitespace, not a wildcard.
bool valid_subject_token(const std::string& token) {
  if (token.empty() || token == "*" || token == ">") return false;
  for (const char c : token) {
    if (c == '.' || c == ' ' || c == '\t' || c == '\r' || c == '\n' || c == '*' || c == '>') {
      return false;
    }
  }
  return true;
}

TEST(PoolSubjects, PlainNamesStayAsTheyAre) {
  EXPECT_EQ(pool_token("quay"), "quay");
  EXPECT_EQ(pool_token("Dock-7:north"), "Dock-7:north");
  EXPECT_EQ(pool_token("default"), "default");
}

TEST(PoolSubjects, DotsAndUnderscoresAreEscaped) {
  EXPECT_EQ(pool_token("berth.7_a"), "berth_2e7_5fa");
  EXPECT_EQ(pool_token("."), "_2e");
  EXPECT_EQ(pool_token("_"), "_5f");
  EXPECT_EQ(pool_of_token("berth_2e7_5fa"), "berth.7_a");
}

TEST(PoolSubjects, NamesThatDifferOnlyByEscapedCharactersGetDifferentTokens) {
  const std::vector<std::string> names = {"a.b",   "a_b",    "a_2eb", "a_5fb", "a__b", "a..b",
                                          "a._b",  "a_.b",   "ab",    "a-b",   "a:b",  "a_2e",
                                          "a.",    "_2e",    ".",     "_",     "__",   "..",
                                          "_5f2e", "_5f_2e"};
  std::set<std::string> tokens;
  for (const std::string& name : names) {
    ASSERT_EQ(daemon::pool_name_problem(name), std::nullopt) << name;
    const std::string token = pool_token(name);
    EXPECT_TRUE(valid_subject_token(token)) << name << " -> " << token;
    EXPECT_TRUE(tokens.insert(token).second) << name << " -> " << token << " taken twice";
    EXPECT_EQ(pool_of_token(token), name);
  }
}

TEST(PoolSubjects, EveryAcceptedNameRoundTrips) {
  const std::string alphabet =
      "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789._-:";
  std::mt19937 random(12);
  std::uniform_int_distribution<std::size_t> length(1, daemon::kMaxPoolNameBytes);
  std::uniform_int_distribution<std::size_t> pick(0, alphabet.size() - 1);
  std::set<std::string> tokens;
  std::set<std::string> names;
  for (int i = 0; i < 3000; ++i) {
    std::string name(length(random), ' ');
    for (char& c : name) c = alphabet[pick(random)];
    ASSERT_EQ(daemon::pool_name_problem(name), std::nullopt) << name;
    const std::string token = pool_token(name);
    ASSERT_TRUE(valid_subject_token(token)) << name << " -> " << token;
    ASSERT_EQ(pool_of_token(token), name);
    names.insert(name);
    tokens.insert(token);
  }
  EXPECT_EQ(tokens.size(), names.size());
}

TEST(PoolSubjects, TokensNoNameMapsToAreRefused) {
  for (const std::string token : {"", "a_", "a_2", "a_2E", "a_zz", "a_2d", "a_61", "_", "a.b",
                                  "a b", "*", ">"}) {
    EXPECT_EQ(pool_of_token(token), std::nullopt) << "'" << token << "'";
  }
  EXPECT_THROW(pool_token(""), std::invalid_argument);
}

TEST(PoolSubjects, SubjectsUnderAPrefix) {
  const PoolSubjects subjects("site-4.yoke");
  EXPECT_EQ(subjects.of_pool("berth.7"), "site-4.yoke.ev.berth_2e7");
  EXPECT_EQ(subjects.all_pools(), "site-4.yoke.ev.>");
  EXPECT_EQ(subjects.stream_filter(), "site-4.yoke.>");
  EXPECT_EQ(subjects.pool_of_subject("site-4.yoke.ev.berth_2e7"), "berth.7");
  EXPECT_EQ(subjects.pool_of_subject("site-4.yoke.ev.a.b"), std::nullopt);
  EXPECT_EQ(subjects.pool_of_subject("site-4.yoke.snap.a"), std::nullopt);
  EXPECT_EQ(subjects.pool_of_subject("other.yoke.ev.a"), std::nullopt);
  EXPECT_EQ(subjects.pool_of_subject("site-4.yoke.ev."), std::nullopt);
}

TEST(PoolSubjects, ClaimSnapshotAndDiffSubjectsOfAPool) {
  const PoolSubjects subjects("site-4.yoke");
  EXPECT_EQ(subjects.of_claims("berth.7"), "site-4.yoke.claim.berth_2e7");
  EXPECT_EQ(subjects.all_claims(), "site-4.yoke.claim.*");
  EXPECT_EQ(subjects.pool_of_claim_subject("site-4.yoke.claim.berth_2e7"), "berth.7");
  EXPECT_EQ(subjects.pool_of_claim_subject("site-4.yoke.ev.berth_2e7"), std::nullopt);
  EXPECT_EQ(subjects.pool_of_claim_subject("site-4.yoke.claim.a.b"), std::nullopt);
  EXPECT_EQ(subjects.pool_of_subject("site-4.yoke.claim.berth_2e7"), std::nullopt);
  EXPECT_EQ(subjects.of_pool_snapshot("berth.7", 42), "site-4.yoke.snap.berth_2e7.42");
  EXPECT_EQ(subjects.pool_snapshots("berth.7"), "site-4.yoke.snap.berth_2e7.*");
  EXPECT_EQ(subjects.pool_snapshot_of_subject("berth.7", "site-4.yoke.snap.berth_2e7.42"), 42u);
  EXPECT_EQ(subjects.pool_snapshot_of_subject("berth.7", "site-4.yoke.snap.berth_2e7.042"),
            std::nullopt);
  EXPECT_EQ(subjects.pool_snapshot_of_subject("berth", "site-4.yoke.snap.berth_2e7.42"),
            std::nullopt);
  // A pool's snapshots are not the whole installation's, even for a pool named by digits.
  EXPECT_EQ(subjects.snapshot_of_subject("site-4.yoke.snap.7.42"), std::nullopt);
  EXPECT_EQ(subjects.pool_snapshot_of_subject("7", "site-4.yoke.snap.7"), std::nullopt);
  EXPECT_EQ(subjects.of_diffs("berth.7"), "site-4.yoke.diff.berth_2e7");
}

TEST(PoolSubjects, BadPrefixesAreRefused) {
  for (const std::string prefix : {"", ".yoke", "yoke.", "a..b", "yo ke", "yoke.*", "yoke.>",
                                   "a:b"}) {
    EXPECT_THROW(PoolSubjects{prefix}, std::invalid_argument) << "'" << prefix << "'";
  }
  EXPECT_NO_THROW(PoolSubjects{"a_b.c-d.E9"});
}

}  // namespace
}  // namespace yoke::jetstream
