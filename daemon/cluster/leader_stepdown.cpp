#include "leader_stepdown.h"

#include "daemon/cluster/cluster_error.h"

namespace yoke::cluster {

void step_down_leader(NatsConnection& connection, const std::string& stream) {
  const std::string subject = "$JS.API.STREAM.LEADER.STEPDOWN." + stream;
  natsMsg* raw = nullptr;
  const natsStatus status = natsConnection_Request(&raw, connection.native(), subject.c_str(),
                                                   nullptr, 0,
                                                   connection.settings().api_timeout.count());
  MessageHandle reply(raw);
  const std::string what = "leader step-down of stream '" + stream + "'";
  throw_on_failure(status, what);
  const std::string body(natsMsg_GetData(reply.get()),
                         static_cast<std::size_t>(natsMsg_GetDataLength(reply.get())));
  if (body.find("\"success\":true") != std::string::npos) return;
  // {"error":{"code":404,"err_code":10059,"description":"stream not found"}}
  const bool missing = body.find("10059") != std::string::npos;
  throw ClusterError(missing ? ClusterErrorKind::not_found : ClusterErrorKind::rejected,
                     what + " refused: " + body, missing ? 10059 : 0);
}

}  // namespace yoke::cluster
