#include "fake_daemon.h"

#include <zmq_addon.hpp>

#include "yoke/v1/ingest.pb.h"
#include "yoke/v1/query.pb.h"

namespace yoke::cli::testing {
namespace {

// How often the serving threads look at their stop flag.
constexpr std::chrono::milliseconds kPollSlice{20};

// The next message on `socket`, frame by frame; nothing if none came within a poll slice.
std::optional<std::vector<std::string>> poll_message(zmq::socket_t& socket) {
  zmq::pollitem_t item{socket.handle(), 0, ZMQ_POLLIN, 0};
  if (zmq::poll(&item, 1, kPollSlice) == 0) return std::nullopt;
  std::vector<zmq::message_t> parts;
  if (!zmq::recv_multipart(socket, std::back_inserter(parts))) return std::nullopt;
  std::vector<std::string> frames;
  for (const zmq::message_t& part : parts) frames.push_back(part.to_string());
  return frames;
}

yoke::v1::Error not_owner_error(const std::optional<yoke::v1::Owner>& owner,
                                const std::string& pool) {
  yoke::v1::Error error;
  error.set_code(yoke::v1::Error::NOT_OWNER);
  if (owner) {
    error.set_message("pool " + pool + " is served by instance " + owner->instance());
    *error.mutable_owner() = *owner;
  } else {
    error.set_message("no instance serves pool " + pool + " now");
  }
  return error;
}

void send_frames(zmq::socket_t& socket, const std::vector<std::string>& frames) {
  for (std::size_t i = 0; i < frames.size(); ++i) {
    const auto more = i + 1 < frames.size() ? zmq::send_flags::sndmore : zmq::send_flags::none;
    socket.send(zmq::buffer(frames[i]), more);
  }
}

}  // namespace

FakeRouter::FakeRouter(const std::string& endpoint, Answer answer)
    : socket_(context_, zmq::socket_type::router), answer_(std::move(answer)) {
  socket_.set(zmq::sockopt::linger, 0);
  socket_.bind(endpoint);
  thread_ = std::thread([this] { serve(); });
}

FakeRouter::~FakeRouter() {
  stop_ = true;
  thread_.join();
}

std::vector<std::string> FakeRouter::requests() const {
  std::lock_guard lock(mutex_);
  return requests_;
}

void FakeRouter::serve() {
  while (!stop_) {
    const auto frames = poll_message(socket_);
    // A ROUTER prefixes the sender's identity; the client's request is one frame after it.
    if (!frames || frames->size() != 2) continue;
    {
      std::lock_guard lock(mutex_);
      requests_.push_back((*frames)[1]);
    }
    if (const auto reply = answer_((*frames)[1])) send_frames(socket_, {(*frames)[0], *reply});
  }
}

FakePublisher::FakePublisher(const std::string& endpoint, std::vector<Message> messages)
    : socket_(context_, zmq::socket_type::xpub), messages_(std::move(messages)) {
  socket_.set(zmq::sockopt::linger, 0);
  socket_.bind(endpoint);
  thread_ = std::thread([this] { serve(); });
}

FakePublisher::~FakePublisher() {
  stop_ = true;
  thread_.join();
}

bool FakePublisher::wait_for_subscriber(std::chrono::milliseconds timeout) const {
  const auto end = std::chrono::steady_clock::now() + timeout;
  while (!subscribed_) {
    if (std::chrono::steady_clock::now() >= end) return false;
    std::this_thread::sleep_for(kPollSlice);
  }
  return true;
}

std::string FakePublisher::subscription() const {
  std::lock_guard lock(mutex_);
  return subscription_;
}

void FakePublisher::serve() {
  while (!stop_) {
    const auto frames = poll_message(socket_);
    // An XPUB hands up each subscription as one frame: byte 1, then the topic.
    if (!frames || frames->size() != 1 || frames->front().empty() || frames->front()[0] != 1 ||
        subscribed_) {
      continue;
    }
    {
      std::lock_guard lock(mutex_);
      subscription_ = frames->front().substr(1);
    }
    for (const Message& message : messages_) send_frames(socket_, {message.first, message.second});
    subscribed_ = true;
  }
}

FakeRouter::Answer ingest_not_owner(std::optional<yoke::v1::Owner> owner) {
  return [owner](const std::string& bytes) -> std::optional<std::string> {
    yoke::v1::IngestRequest request;
    if (!request.ParseFromString(bytes)) return std::nullopt;
    yoke::v1::IngestReply reply;
    reply.set_version(yoke::v1::PROTOCOL_VERSION_1);
    yoke::v1::Ack& ack = *reply.mutable_ack();
    ack.set_client_id(request.batch().client_id());
    ack.set_client_batch(request.batch().client_batch());
    ack.set_pool(request.batch().pool());
    *ack.mutable_rejected()->add_errors() = not_owner_error(owner, request.batch().pool());
    return reply.SerializeAsString();
  };
}

FakeRouter::Answer query_not_owner(std::optional<yoke::v1::Owner> owner) {
  return [owner](const std::string& bytes) -> std::optional<std::string> {
    yoke::v1::QueryRequest request;
    if (!request.ParseFromString(bytes)) return std::nullopt;
    yoke::v1::QueryReply reply;
    reply.set_version(yoke::v1::PROTOCOL_VERSION_1);
    reply.set_request_id(request.request_id());
    reply.set_pool(request.pool());
    *reply.mutable_error() = not_owner_error(owner, request.pool());
    return reply.SerializeAsString();
  };
}

yoke::v1::Owner owner_at(const std::string& instance, const std::string& ingest,
                         const std::string& query, const std::string& publish) {
  yoke::v1::Owner owner;
  owner.set_instance(instance);
  owner.set_ingest(ingest);
  owner.set_query(query);
  owner.set_publish(publish);
  return owner;
}

}  // namespace yoke::cli::testing
