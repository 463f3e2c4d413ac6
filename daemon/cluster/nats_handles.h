// Owning handles for libnats objects: each one is released by the libnats call that frees it,
// once, on every path (the library's C API has no destructors of its own).
#pragma once

#include <memory>

#include <nats/nats.h>

namespace yoke::cluster {

struct NatsDeleter {
  void operator()(natsOptions* options) const { natsOptions_Destroy(options); }
  // Close first: Destroy alone would leave the connection's threads to notice later.
  void operator()(natsConnection* connection) const {
    natsConnection_Close(connection);
    natsConnection_Destroy(connection);
  }
  void operator()(jsCtx* context) const { jsCtx_Destroy(context); }
  void operator()(natsMsg* message) const { natsMsg_Destroy(message); }
  // Unsubscribe tells the server (an ordered consumer is deleted with its interest); it fails
  // harmlessly when the connection is already closed.
  void operator()(natsSubscription* subscription) const {
    natsSubscription_Unsubscribe(subscription);
    natsSubscription_Destroy(subscription);
  }
  void operator()(jsPubAck* ack) const { jsPubAck_Destroy(ack); }
  void operator()(jsStreamInfo* info) const { jsStreamInfo_Destroy(info); }
  void operator()(jsMsgMetaData* meta) const { jsMsgMetaData_Destroy(meta); }
};

using OptionsHandle = std::unique_ptr<natsOptions, NatsDeleter>;
using ConnectionHandle = std::unique_ptr<natsConnection, NatsDeleter>;
using JetStreamHandle = std::unique_ptr<jsCtx, NatsDeleter>;
using MessageHandle = std::unique_ptr<natsMsg, NatsDeleter>;
using SubscriptionHandle = std::unique_ptr<natsSubscription, NatsDeleter>;
using PubAckHandle = std::unique_ptr<jsPubAck, NatsDeleter>;
using StreamInfoHandle = std::unique_ptr<jsStreamInfo, NatsDeleter>;
using MetaDataHandle = std::unique_ptr<jsMsgMetaData, NatsDeleter>;

}  // namespace yoke::cluster
