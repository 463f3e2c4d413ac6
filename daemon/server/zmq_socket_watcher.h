// Serves a ZeroMQ socket from the Asio loop without busy waiting. ZeroMQ exposes a file
// descriptor (ZMQ_FD) that becomes readable when the socket's state may have changed: it is
// edge-triggered, and a send on the socket can consume the edge. So the watcher waits on the
// descriptor, then asks ZMQ_EVENTS and calls the handler while a message is waiting; the owner
// calls poke() after sending on the socket so that no waiting message is left unnoticed.
#pragma once

#include <functional>

#include <boost/asio/io_context.hpp>
#include <boost/asio/posix/stream_descriptor.hpp>
#include <zmq.hpp>

namespace yoke::daemon {

class ZmqSocketWatcher {
 public:
  // `on_message` reads and handles at most one message (the watcher calls it again while
  // more are waiting, yielding to the loop every `burst` messages so timers still run).
  ZmqSocketWatcher(boost::asio::io_context& io, zmq::socket_t& socket,
                   std::function<void()> on_message, int burst = 256);
  ~ZmqSocketWatcher();
  ZmqSocketWatcher(const ZmqSocketWatcher&) = delete;
  ZmqSocketWatcher& operator=(const ZmqSocketWatcher&) = delete;

  void start();
  // Re-checks the socket soon (after this handler returns); call after sending on it.
  void poke();
  void stop();

 private:
  void arm();
  void service();
  bool readable();

  boost::asio::io_context& io_;
  zmq::socket_t& socket_;
  boost::asio::posix::stream_descriptor descriptor_;
  std::function<void()> on_message_;
  int burst_;
  bool waiting_ = false;      // an async_wait is pending
  bool poke_posted_ = false;  // a service() is queued
  bool stopped_ = false;
};

}  // namespace yoke::daemon
