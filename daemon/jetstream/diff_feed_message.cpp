#include "diff_feed_message.h"

#include <charconv>
#include <stdexcept>

#include "daemon/cluster/message_lookup.h"

namespace yoke::jetstream {

cluster::Headers diff_feed_headers(std::uint64_t seq) {
  return {{kDiffSeqHeader, std::to_string(seq)}};
}

std::optional<std::uint64_t> diff_feed_seq(const cluster::LogMessage& message) {
  const std::optional<std::string_view> text = cluster::header_value(message.headers, kDiffSeqHeader);
  if (!text || text->empty()) return std::nullopt;
  std::uint64_t seq = 0;
  const auto [end, error] = std::from_chars(text->data(), text->data() + text->size(), seq);
  if (error != std::errc() || end != text->data() + text->size()) return std::nullopt;
  return seq;
}

std::optional<StoredDiff> last_stored_diff(cluster::NatsConnection& connection,
                                           const std::string& stream,
                                           const std::string& diff_subject) {
  const std::optional<cluster::LogMessage> last =
      cluster::last_message(connection, stream, diff_subject);
  if (!last) return std::nullopt;
  const std::optional<std::uint64_t> seq = diff_feed_seq(*last);
  if (!seq) {
    throw std::runtime_error("the diff at stream sequence " + std::to_string(last->sequence) +
                             " on " + diff_subject + " has no readable " + kDiffSeqHeader +
                             " header");
  }
  return StoredDiff{*seq, last->sequence};
}

}  // namespace yoke::jetstream
