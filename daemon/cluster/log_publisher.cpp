#include "log_publisher.h"

#include "daemon/cluster/cluster_error.h"

namespace yoke::cluster {

std::uint64_t publish_and_wait(NatsConnection& connection, const std::string& subject,
                               const Headers& headers, std::string_view data,
                               std::chrono::milliseconds timeout) {
  MessageHandle message = make_nats_message(subject, headers, data);
  jsPubOptions options;
  jsPubOptions_Init(&options);
  options.MaxWait = timeout.count();
  jsPubAck* raw_ack = nullptr;
  jsErrCode code = jsErrCode(0);
  const natsStatus status =
      js_PublishMsg(&raw_ack, connection.jetstream(), message.get(), &options, &code);
  PubAckHandle ack(raw_ack);
  throw_on_failure(status, "publish to " + subject, code);
  return ack->Sequence;
}

}  // namespace yoke::cluster
