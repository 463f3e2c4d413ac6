// One libnats connection to a NATS cluster, with its JetStream context: the handle every other
// operation of daemon/cluster takes.
//
// Threads. libnats runs its own: per connection a reader and a flusher, and process-wide a
// timer thread and one thread that runs asynchronous callbacks. Every call of daemon/cluster
// blocks the calling thread until its answer or timeout (documented per call) and never calls
// back into the caller. `ConnectionSettings::on_event` is the one callback: it runs on libnats'
// asynchronous-callback thread, so it must be short and must not call back into this
// connection; a caller with an Asio loop posts the event to it from there.
// A NatsConnection may be used from several threads at once (libnats locks internally); one
// LogReader must stay with one thread at a time.
#pragma once

#include <chrono>
#include <functional>
#include <memory>
#include <string>
#include <vector>

#include "daemon/cluster/nats_handles.h"

namespace yoke::cluster {

enum class ConnectionEventKind {
  disconnected,  // lost the server; libnats reconnects in the background
  reconnected,   // connected again (maybe to another server of the list)
  closed,        // closed for good: after close(), or when reconnecting gave up
  error,         // an asynchronous error (e.g. a slow consumer dropped messages)
};

struct ConnectionEvent {
  ConnectionEventKind kind;
  std::string detail;  // the server's URL (disconnected, reconnected) or libnats' words
};

struct ConnectionSettings {
  // nats://host:port URLs; at least one. The connection tries them in the given order, and
  // after a loss reconnects to whichever answers.
  std::vector<std::string> servers;
  std::string name = "yoke";  // shown by the server's monitoring (/connz)
  std::chrono::milliseconds connect_timeout{2000};  // per server, for the first connect
  std::chrono::milliseconds reconnect_wait{250};    // between rounds over the list
  int max_reconnect_rounds = -1;                    // -1: never give up
  // Default wait for JetStream API answers (stream setup, lookups, purges).
  std::chrono::milliseconds api_timeout{5000};
  // Every publish is written to the socket by the calling thread before the call returns,
  // instead of by libnats' flusher thread a moment later: a message handed over is then out of
  // the process even if the process is stopped right after (SIGSTOP). Costs a write per
  // message.
  bool send_at_once = false;
  std::function<void(const ConnectionEvent&)> on_event;  // optional; see the header comment
};

struct ConnectionEventRelay;  // nats_connection.cpp

class NatsConnection {
 public:
  // Connects to the first server of the list that answers and opens a JetStream context.
  // Blocks up to connect_timeout per unreachable-but-silent server (a refused port fails at
  // once). Throws ClusterError(unreachable) naming every server when none answers, and
  // ClusterError(invalid) for an empty list.
  explicit NatsConnection(ConnectionSettings settings);
  // Closes the connection (pending publishes are abandoned) and releases it.
  ~NatsConnection();
  NatsConnection(const NatsConnection&) = delete;
  NatsConnection& operator=(const NatsConnection&) = delete;

  // The raw libnats objects, for operations this library does not wrap. Owned here.
  natsConnection* native() const { return connection_.get(); }
  jsCtx* jetstream() const { return jetstream_.get(); }

  const ConnectionSettings& settings() const { return settings_; }
  // "nats://a:1, nats://b:2": for error messages.
  std::string servers_text() const;
  // The URL of the server this connection talks to now ("" while reconnecting).
  std::string connected_url() const;
  bool is_connected() const;

 private:
  ConnectionSettings settings_;
  std::shared_ptr<ConnectionEventRelay> relay_;
  ConnectionHandle connection_;
  JetStreamHandle jetstream_;
};

// "a, b, c" of a server list.
std::string join_servers(const std::vector<std::string>& servers);

}  // namespace yoke::cluster
