#include "nats_connection.h"

#include <mutex>
#include <utility>

#include "daemon/cluster/cluster_error.h"

namespace yoke::cluster {

// The closure libnats' callbacks receive. libnats may still run a callback after the
// connection is destroyed (they are queued to its callback thread), so a relay outlives its
// connection: it is parked in `retired_relays` when made, never freed while the process runs
// (a few bytes per connection ever made), and the destructor disarms it.
struct ConnectionEventRelay {
  std::mutex mutex;
  std::function<void(const ConnectionEvent&)> handler;

  void deliver(ConnectionEventKind kind, std::string detail) {
    std::lock_guard lock(mutex);
    if (handler) handler(ConnectionEvent{kind, std::move(detail)});
  }
};

namespace {

std::mutex retired_mutex;
std::vector<std::shared_ptr<void>>& retired_relays() {
  static auto* relays = new std::vector<std::shared_ptr<void>>();  // reachable until exit
  return *relays;
}

std::string url_of(natsConnection* connection) {
  char buffer[256] = {};
  if (natsConnection_GetConnectedUrl(connection, buffer, sizeof buffer) != NATS_OK) return "";
  return buffer;
}

template <ConnectionEventKind kind>
void relay_connection_event(natsConnection* connection, void* closure) {
  static_cast<ConnectionEventRelay*>(closure)->deliver(kind, url_of(connection));
}

void relay_async_error(natsConnection*, natsSubscription*, natsStatus status, void* closure) {
  static_cast<ConnectionEventRelay*>(closure)->deliver(ConnectionEventKind::error,
                                                       natsStatus_GetText(status));
}

}  // namespace

std::string join_servers(const std::vector<std::string>& servers) {
  std::string text;
  for (const std::string& server : servers) {
    if (!text.empty()) text += ", ";
    text += server;
  }
  return text;
}

NatsConnection::NatsConnection(ConnectionSettings settings)
    : settings_(std::move(settings)), relay_(std::make_shared<ConnectionEventRelay>()) {
  if (settings_.servers.empty()) {
    throw ClusterError(ClusterErrorKind::invalid, "no NATS servers given");
  }
  relay_->handler = settings_.on_event;
  {
    std::lock_guard lock(retired_mutex);
    retired_relays().push_back(relay_);
  }

  natsOptions* raw_options = nullptr;
  throw_on_failure(natsOptions_Create(&raw_options), "cannot create NATS options");
  OptionsHandle options(raw_options);
  std::vector<const char*> urls;
  for (const std::string& server : settings_.servers) urls.push_back(server.c_str());
  const auto set = [&](natsStatus status) { throw_on_failure(status, "bad NATS option"); };
  set(natsOptions_SetServers(options.get(), urls.data(), static_cast<int>(urls.size())));
  // Keep the configured order: the first server is the preferred one.
  set(natsOptions_SetNoRandomize(options.get(), true));
  set(natsOptions_SetName(options.get(), settings_.name.c_str()));
  set(natsOptions_SetTimeout(options.get(), settings_.connect_timeout.count()));
  set(natsOptions_SetAllowReconnect(options.get(), true));
  set(natsOptions_SetMaxReconnect(options.get(), settings_.max_reconnect_rounds));
  set(natsOptions_SetReconnectWait(options.get(), settings_.reconnect_wait.count()));
  set(natsOptions_SetSendAsap(options.get(), settings_.send_at_once));
  ConnectionEventRelay* relay = relay_.get();
  set(natsOptions_SetDisconnectedCB(
      options.get(), relay_connection_event<ConnectionEventKind::disconnected>, relay));
  set(natsOptions_SetReconnectedCB(
      options.get(), relay_connection_event<ConnectionEventKind::reconnected>, relay));
  set(natsOptions_SetClosedCB(options.get(), relay_connection_event<ConnectionEventKind::closed>,
                              relay));
  set(natsOptions_SetErrorHandler(options.get(), relay_async_error, relay));

  natsConnection* raw_connection = nullptr;
  const natsStatus status = natsConnection_Connect(&raw_connection, options.get());
  if (status != NATS_OK) {
    throw ClusterError(status == NATS_NO_SERVER || status == NATS_TIMEOUT
                           ? ClusterErrorKind::unreachable
                           : classify(status, jsErrCode(0)),
                       "no NATS server reachable among " + servers_text() + " (" +
                           natsStatus_GetText(status) + ")");
  }
  connection_.reset(raw_connection);

  jsOptions js_options;
  jsOptions_Init(&js_options);
  js_options.Wait = settings_.api_timeout.count();
  jsCtx* raw_context = nullptr;
  throw_on_failure(natsConnection_JetStream(&raw_context, connection_.get(), &js_options),
                   "cannot open a JetStream context on " + servers_text());
  jetstream_.reset(raw_context);
}

NatsConnection::~NatsConnection() {
  jetstream_.reset();
  {
    std::lock_guard lock(relay_->mutex);
    relay_->handler = nullptr;
  }
  connection_.reset();
}

std::string NatsConnection::servers_text() const { return join_servers(settings_.servers); }

std::string NatsConnection::connected_url() const { return url_of(connection_.get()); }

bool NatsConnection::is_connected() const {
  return natsConnection_Status(connection_.get()) == NATS_CONN_STATUS_CONNECTED;
}

}  // namespace yoke::cluster
