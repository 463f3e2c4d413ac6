#include "plain_subject.h"

#include "daemon/cluster/cluster_error.h"
#include "daemon/cluster/log_message.h"

namespace yoke::cluster {

void publish_plain(NatsConnection& connection, const std::string& subject, std::string_view data) {
  throw_on_failure(natsConnection_Publish(connection.native(), subject.c_str(), data.data(),
                                          static_cast<int>(data.size())),
                   "cannot publish on '" + subject + "'");
}

bool flush_plain(NatsConnection& connection, std::chrono::milliseconds timeout) {
  return natsConnection_FlushTimeout(connection.native(), timeout.count()) == NATS_OK;
}

PlainSubscription::PlainSubscription(NatsConnection& connection, const std::string& subject) {
  natsSubscription* raw = nullptr;
  throw_on_failure(natsConnection_SubscribeSync(&raw, connection.native(), subject.c_str()),
                   "cannot subscribe to '" + subject + "'");
  subscription_.reset(raw);
}

std::optional<LogMessage> PlainSubscription::poll() {
  natsMsg* raw = nullptr;
  // A zero timeout only looks at the queue.
  const natsStatus status = natsSubscription_NextMsg(&raw, subscription_.get(), 0);
  if (status == NATS_TIMEOUT) return std::nullopt;
  throw_on_failure(status, "cannot read a subscription");
  const MessageHandle message(raw);
  return copy_nats_message(message.get(), true);
}

}  // namespace yoke::cluster
