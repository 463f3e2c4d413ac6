#include "takeover_probe.h"

#include <stdexcept>

#include "daemon/cluster/plain_subject.h"
#include "yoke/v1/ingest.pb.h"

namespace yoke::bench {

BeatWatch::BeatWatch(const std::vector<std::string>& servers, const std::string& subject) {
  cluster::ConnectionSettings settings;
  settings.servers = servers;
  settings.name = "yoke-cluster-bench-beats";
  connection_ = std::make_unique<cluster::NatsConnection>(settings);
  // Subscribed before the constructor returns: no beat after it is missed.
  auto subscription = std::make_shared<cluster::PlainSubscription>(*connection_, subject);
  thread_ = std::thread([this, subscription] {
    while (!stopping_) {
      std::uint64_t heard = 0;
      while (subscription->poll()) ++heard;
      if (heard != 0) {
        const std::lock_guard lock(mutex_);
        last_ = WallClock::now();
        beats_ += heard;
      }
      std::this_thread::sleep_for(std::chrono::milliseconds(1));
    }
  });
}

BeatWatch::~BeatWatch() {
  stopping_ = true;
  thread_.join();
}

std::optional<WallClock::time_point> BeatWatch::last_beat() const {
  const std::lock_guard lock(mutex_);
  return last_;
}

ResendResult resend_until_acknowledged(zmq::context_t& context, const std::string& endpoint,
                                       const EncodedBatch& batch, std::chrono::milliseconds retry,
                                       std::chrono::seconds limit) {
  zmq::socket_t socket(context, zmq::socket_type::dealer);
  socket.set(zmq::sockopt::linger, 0);
  socket.connect(endpoint);
  ResendResult result;
  const auto deadline = std::chrono::steady_clock::now() + limit;
  while (std::chrono::steady_clock::now() < deadline) {
    socket.send(zmq::buffer(batch.bytes), zmq::send_flags::none);
    const auto try_end = std::chrono::steady_clock::now() + retry;
    bool answered = false;
    while (!answered && std::chrono::steady_clock::now() < try_end) {
      zmq::pollitem_t item{socket.handle(), 0, ZMQ_POLLIN, 0};
      const auto left = std::chrono::duration_cast<std::chrono::milliseconds>(
          try_end - std::chrono::steady_clock::now());
      if (zmq::poll(&item, 1, std::max(left, std::chrono::milliseconds(1))) <= 0) continue;
      zmq::message_t message;
      (void)socket.recv(message);
      v1::IngestReply reply;
      if (!reply.ParseFromArray(message.data(), static_cast<int>(message.size()))) {
        throw std::runtime_error("an unreadable reply from " + endpoint);
      }
      if (reply.ack().client_batch() != batch.number) continue;  // an earlier try's answer
      if (reply.ack().has_accepted()) {
        result.acknowledged = std::chrono::steady_clock::now();
        result.seq = reply.ack().accepted().seq();
        result.duplicate = reply.ack().accepted().duplicate();
        return result;
      }
      const auto& errors = reply.ack().rejected().errors();
      if (errors.empty() || errors[0].code() != v1::Error::NOT_OWNER) {
        throw std::runtime_error("batch " + std::to_string(batch.number) +
                                 " refused: " + reply.ShortDebugString());
      }
      ++result.not_owner;
      answered = true;
    }
    if (!answered) {
      ++result.silent;
    } else {
      // A refusal comes back at once: wait out the rest of the try before asking again.
      std::this_thread::sleep_until(try_end);
    }
  }
  throw std::runtime_error("batch " + std::to_string(batch.number) + " not acknowledged by " +
                           endpoint + " within " + std::to_string(limit.count()) + " s");
}

}  // namespace yoke::bench
