#include "window_acceptance.h"

#include <optional>

#include "daemon/cluster/message_lookup.h"
#include "daemon/cluster/subject_scan.h"
#include "daemon/jetstream/claim_message.h"
#include "daemon/jetstream/log_stream.h"
#include "daemon/storage/storage_error.h"

namespace yoke::jetstream {

bool window_counted(cluster::NatsConnection& connection, const std::string& stream,
                    const std::string& claim_subject, const std::string& pool,
                    std::uint64_t epoch, std::uint64_t sequence, const std::string& where) {
  const std::string context = where + ": checking the claims of pool '" + pool +
                              "' before the window at " + std::to_string(sequence);
  for (std::uint64_t from = epoch + 1;;) {
    const std::optional<std::uint64_t> next = as_log_error(
        context, [&] { return cluster::first_sequence_from(connection, stream, claim_subject, from); });
    if (!next || *next >= sequence) return true;
    const std::optional<cluster::LogMessage> message =
        as_log_error(context, [&] { return cluster::message_at(connection, stream, *next); });
    if (!message) {
      throw storage::LogError(context + ": claim " + std::to_string(*next) +
                              " vanished while it was read (claims are never purged)");
    }
    if (decode_claim(*message, pool, where).claim.expected_epoch() == epoch) return false;
    from = *next + 1;
  }
}

}  // namespace yoke::jetstream
