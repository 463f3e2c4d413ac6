#include "zmq_socket_watcher.h"

#include <boost/asio/post.hpp>

namespace yoke::daemon {

ZmqSocketWatcher::ZmqSocketWatcher(boost::asio::io_context& io, zmq::socket_t& socket,
                                   std::function<void()> on_message, int burst)
    : io_(io),
      socket_(socket),
      descriptor_(io, socket.get(zmq::sockopt::fd)),
      on_message_(std::move(on_message)),
      burst_(burst) {}

ZmqSocketWatcher::~ZmqSocketWatcher() {
  // The descriptor belongs to ZeroMQ: give it back instead of closing it.
  boost::system::error_code ignored;
  descriptor_.cancel(ignored);
  descriptor_.release();
}

void ZmqSocketWatcher::start() {
  stopped_ = false;
  poke();
}

void ZmqSocketWatcher::stop() {
  stopped_ = true;
  boost::system::error_code ignored;
  descriptor_.cancel(ignored);
}

void ZmqSocketWatcher::poke() {
  if (poke_posted_ || stopped_) return;
  poke_posted_ = true;
  boost::asio::post(io_, [this] {
    poke_posted_ = false;
    service();
  });
}

bool ZmqSocketWatcher::readable() {
  return (socket_.get(zmq::sockopt::events) & ZMQ_POLLIN) != 0;
}

void ZmqSocketWatcher::service() {
  if (stopped_) return;
  for (int handled = 0; handled < burst_; ++handled) {
    if (!readable()) {
      arm();
      return;
    }
    on_message_();
    if (stopped_) return;
  }
  poke();  // more may be waiting: let timers and other sockets run first
}

void ZmqSocketWatcher::arm() {
  if (waiting_ || stopped_) return;
  waiting_ = true;
  descriptor_.async_wait(boost::asio::posix::stream_descriptor::wait_read,
                         [this](const boost::system::error_code& error) {
                           waiting_ = false;
                           if (error || stopped_) return;
                           service();
                         });
}

}  // namespace yoke::daemon
