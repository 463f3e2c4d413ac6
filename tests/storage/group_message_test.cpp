// A commit group as one message (daemon/jetstream/group_message.h): records in, the same
// records out, the previous-group link kept; messages of another format, with bad lengths,
// records that do not parse or name another pool are LogDamage.
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "daemon/jetstream/group_message.h"
#include "daemon/storage/storage_error.h"
#include "yoke/v1/events.pb.h"

namespace yoke::jetstream {
namespace {

v1::JournalRecord record(const std::string& pool, std::uint64_t seq, int events) {
  v1::JournalRecord r;
  r.set_pool(pool);
  r.set_seq(seq);
  r.set_client_id("tug-" + std::to_string(seq));
  for (int i = 0; i < events; ++i) {
    v1::Event& event = *r.add_events();
    event.set_kind(v1::Event::ADD_VERTEX);
    event.set_u(seq * 10 + static_cast<std::uint64_t>(i));
  }
  return r;
}

cluster::LogMessage as_stored(const GroupMessage& message, std::uint64_t sequence) {
  return {sequence, "t.ev.quay", message.headers, message.data, 0};
}

TEST(GroupMessage, RecordsComeBackInOrderWithTheLink) {
  const std::vector<v1::JournalRecord> records = {record("quay", 4, 2), record("quay", 5, 0),
                                                  record("quay", 6, 300)};
  const DecodedGroup decoded = decode_group(as_stored(encode_group(records, 17), 23), "quay", "t");
  EXPECT_EQ(decoded.previous_of_pool, 17u);
  EXPECT_EQ(decoded.group.pool, "quay");
  EXPECT_EQ(decoded.group.position, 23u);
  ASSERT_EQ(decoded.group.records.size(), records.size());
  for (std::size_t i = 0; i < records.size(); ++i) {
    EXPECT_EQ(decoded.group.records[i].SerializeAsString(), records[i].SerializeAsString());
  }
}

TEST(GroupMessage, TheEpochComesBackAndIsAbsentAtZero) {
  const GroupMessage under_zero = encode_group({record("quay", 1, 1)}, 0);
  EXPECT_FALSE(cluster::header_value(under_zero.headers, kEpochHeader).has_value());
  EXPECT_EQ(decode_group(as_stored(under_zero, 3), "quay", "t").epoch, 0u);
  const GroupMessage under_claim = encode_group({record("quay", 2, 1)}, 3, 41);
  EXPECT_EQ(cluster::header_value(under_claim.headers, kEpochHeader), "41");
  EXPECT_EQ(decode_group(as_stored(under_claim, 44), "quay", "t").epoch, 41u);
  for (const std::string bad : {"", "x", "4 1", "-1", "41x"}) {
    GroupMessage unreadable = under_zero;
    unreadable.headers.emplace_back(kEpochHeader, bad);
    EXPECT_THROW(decode_group(as_stored(unreadable, 9), "quay", "t"), storage::LogDamage)
        << "'" << bad << "'";
  }
}

TEST(GroupMessage, ForeignMessagesAreDamage) {
  const GroupMessage good = encode_group({record("quay", 1, 1)}, 0);
  GroupMessage no_format = good;
  no_format.headers = {{kPreviousHeader, "0"}};
  GroupMessage other_format = good;
  other_format.headers[0].second = "journal-records/2";
  GroupMessage no_link = good;
  no_link.headers = {{kFormatHeader, kFormat}};
  GroupMessage bad_link = good;
  bad_link.headers[1].second = "12x";
  GroupMessage garbage = good;
  garbage.data = "\xff\xff not a record";
  GroupMessage cut = good;
  cut.data.pop_back();
  GroupMessage empty = good;
  empty.data.clear();
  const GroupMessage other_pool = encode_group({record("dock", 1, 1)}, 0);
  const std::vector<const GroupMessage*> damaged = {
      &no_format, &other_format, &no_link, &bad_link, &garbage, &cut, &empty, &other_pool};
  for (const GroupMessage* message : damaged) {
    try {
      decode_group(as_stored(*message, 9), "quay", "stream t");
      ADD_FAILURE() << "decoded a damaged message";
    } catch (const storage::LogDamage& error) {
      EXPECT_NE(std::string(error.what()).find("message 9 on 't.ev.quay'"), std::string::npos)
          << error.what();
    }
  }
}

}  // namespace
}  // namespace yoke::jetstream
