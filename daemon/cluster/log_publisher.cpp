#include "log_publisher.h"

#include <algorithm>
#include <thread>

#include "daemon/cluster/cluster_error.h"

namespace yoke::cluster {
namespace {

// Between attempts while nobody answers for the subject: short against an election (1-5 s).
constexpr std::chrono::milliseconds kNoResponderPause{25};

}  // namespace

std::uint64_t publish_and_wait(NatsConnection& connection, const std::string& subject,
                               const Headers& headers, std::string_view data,
                               std::chrono::milliseconds timeout) {
  using Clock = std::chrono::steady_clock;
  const auto deadline = Clock::now() + timeout;
  for (;;) {
    const auto left =
        std::chrono::duration_cast<std::chrono::milliseconds>(deadline - Clock::now());
    MessageHandle message = make_nats_message(subject, headers, data);
    jsPubOptions options;
    jsPubOptions_Init(&options);
    options.MaxWait = std::max<std::int64_t>(1, left.count());
    jsPubAck* raw_ack = nullptr;
    jsErrCode code = jsErrCode(0);
    const natsStatus status =
        js_PublishMsg(&raw_ack, connection.jetstream(), message.get(), &options, &code);
    PubAckHandle ack(raw_ack);
    // Nobody took the message (the stream's leader is being elected): it was not stored, so
    // sending it again cannot make a second copy. Anything else is the caller's to judge.
    if (status == NATS_NO_RESPONDERS && Clock::now() + kNoResponderPause < deadline) {
      std::this_thread::sleep_for(kNoResponderPause);
      continue;
    }
    throw_on_failure(status, "publish to " + subject, code);
    return ack->Sequence;
  }
}

}  // namespace yoke::cluster
