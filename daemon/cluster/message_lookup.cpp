#include "message_lookup.h"

#include <cstdlib>

#include "daemon/cluster/cluster_error.h"

namespace yoke::cluster {
namespace {

// The stream sequence of a looked-up message: libnats fills it for js_GetMsg/js_GetLastMsg;
// a direct read carries it in the Nats-Sequence header.
std::uint64_t sequence_of(natsMsg* message) {
  const std::uint64_t sequence = natsMsg_GetSequence(message);
  if (sequence != 0) return sequence;
  const char* text = nullptr;
  if (natsMsgHeader_Get(message, "Nats-Sequence", &text) != NATS_OK || text == nullptr) return 0;
  return std::strtoull(text, nullptr, 10);
}

}  // namespace

std::optional<LogMessage> last_message(NatsConnection& connection, const std::string& stream,
                                       const std::string& subject) {
  natsMsg* raw = nullptr;
  jsErrCode code = jsErrCode(0);
  const natsStatus status =
      js_GetLastMsg(&raw, connection.jetstream(), stream.c_str(), subject.c_str(), nullptr, &code);
  MessageHandle message(raw);
  if (code == JSNoMessageFoundErr || (status == NATS_NOT_FOUND && code == 0)) return std::nullopt;
  throw_on_failure(status, "last message of '" + subject + "' in stream '" + stream + "'", code);
  LogMessage result = copy_nats_message(message.get(), true);
  result.sequence = sequence_of(message.get());
  return result;
}

std::optional<LogMessage> message_at(NatsConnection& connection, const std::string& stream,
                                     std::uint64_t sequence) {
  natsMsg* raw = nullptr;
  jsErrCode code = jsErrCode(0);
  const natsStatus status =
      js_GetMsg(&raw, connection.jetstream(), stream.c_str(), sequence, nullptr, &code);
  MessageHandle message(raw);
  if (code == JSNoMessageFoundErr || (status == NATS_NOT_FOUND && code == 0)) return std::nullopt;
  throw_on_failure(status, "message " + std::to_string(sequence) + " of stream '" + stream + "'",
                   code);
  LogMessage result = copy_nats_message(message.get(), true);
  result.sequence = sequence_of(message.get());
  return result;
}

std::optional<LogMessage> read_replica_message(NatsConnection& connection,
                                               const std::string& stream,
                                               std::uint64_t sequence) {
  jsDirectGetMsgOptions which;
  jsDirectGetMsgOptions_Init(&which);
  which.Sequence = sequence;
  natsMsg* raw = nullptr;
  const natsStatus status =
      js_DirectGetMsg(&raw, connection.jetstream(), stream.c_str(), nullptr, &which);
  MessageHandle message(raw);
  if (status == NATS_NOT_FOUND) return std::nullopt;
  throw_on_failure(status, "direct read of sequence " + std::to_string(sequence) +
                               " in stream '" + stream + "' via " + connection.connected_url());
  LogMessage result = copy_nats_message(message.get(), true);
  result.sequence = sequence_of(message.get());
  // A direct read reports the stored subject in a header; the reply's own subject is an inbox.
  const char* subject = nullptr;
  if (natsMsgHeader_Get(message.get(), "Nats-Subject", &subject) == NATS_OK && subject != nullptr) {
    result.subject = subject;
  }
  return result;
}

}  // namespace yoke::cluster
