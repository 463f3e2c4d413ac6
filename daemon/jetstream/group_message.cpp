#include "group_message.h"

#include <charconv>

#include <google/protobuf/io/coded_stream.h>
#include <google/protobuf/io/zero_copy_stream_impl_lite.h>

#include "daemon/storage/storage_error.h"

namespace yoke::jetstream {
namespace {

// A header's whole value as a decimal number.
bool read_number(std::string_view text, std::uint64_t& value) {
  return !text.empty() &&
         std::from_chars(text.data(), text.data() + text.size(), value).ptr ==
             text.data() + text.size();
}

}  // namespace

GroupMessage encode_group(const std::vector<v1::JournalRecord>& records,
                          std::uint64_t previous_of_pool, std::uint64_t epoch) {
  GroupMessage message;
  message.headers = {{kFormatHeader, kFormat},
                     {kPreviousHeader, std::to_string(previous_of_pool)}};
  if (epoch != 0) message.headers.emplace_back(kEpochHeader, std::to_string(epoch));
  {
    google::protobuf::io::StringOutputStream bytes(&message.data);
    google::protobuf::io::CodedOutputStream out(&bytes);
    for (const v1::JournalRecord& record : records) {
      out.WriteVarint64(record.ByteSizeLong());
      record.SerializeWithCachedSizes(&out);
    }
  }
  return message;
}

DecodedGroup decode_group(cluster::LogMessage message, const std::string& pool,
                          const std::string& where) {
  const auto damaged = [&](const std::string& why) {
    return storage::LogDamage(where + ": message " + std::to_string(message.sequence) + " on '" +
                              message.subject + "' " + why);
  };
  const auto format = cluster::header_value(message.headers, kFormatHeader);
  if (!format || *format != kFormat) {
    throw damaged("is not a commit group (header " + std::string(kFormatHeader) + ": " +
                  (format ? std::string(*format) : std::string("none")) + ")");
  }
  DecodedGroup decoded;
  const auto previous = cluster::header_value(message.headers, kPreviousHeader);
  if (!previous || !read_number(*previous, decoded.previous_of_pool)) {
    throw damaged("has no readable " + std::string(kPreviousHeader) + " header");
  }
  const auto epoch = cluster::header_value(message.headers, kEpochHeader);
  if (epoch && !read_number(*epoch, decoded.epoch)) {
    throw damaged("has an unreadable " + std::string(kEpochHeader) + " header");
  }
  decoded.group.pool = pool;
  decoded.group.position = message.sequence;
  google::protobuf::io::CodedInputStream in(reinterpret_cast<const std::uint8_t*>(message.data.data()),
                                            static_cast<int>(message.data.size()));
  while (in.CurrentPosition() < static_cast<int>(message.data.size())) {
    std::uint64_t size = 0;
    if (!in.ReadVarint64(&size) || size > message.data.size()) {
      throw damaged("has a bad record length");
    }
    const auto limit = in.PushLimit(static_cast<int>(size));
    v1::JournalRecord& record = decoded.group.records.emplace_back();
    if (!record.ParseFromCodedStream(&in) || !in.ConsumedEntireMessage() ||
        in.BytesUntilLimit() != 0) {
      throw damaged("has a record that does not parse");
    }
    in.PopLimit(limit);
    if (record.pool() != pool) {
      throw damaged("holds a record of pool '" + record.pool() + "'");
    }
  }
  if (decoded.group.records.empty()) throw damaged("holds no records");
  return decoded;
}

}  // namespace yoke::jetstream
