#include "leader_stepdown.h"

#include "daemon/cluster/cluster_error.h"
#include "daemon/cluster/jetstream_api.h"

namespace yoke::cluster {

void step_down_leader(NatsConnection& connection, const std::string& stream) {
  const std::string what = "leader step-down of stream '" + stream + "'";
  const ApiAnswer answer =
      request_api(connection, "$JS.API.STREAM.LEADER.STEPDOWN." + stream, {}, what);
  if (answer.json.find("\"success\":true") != std::string::npos) return;
  // {"error":{"code":404,"err_code":10059,"description":"stream not found"}}
  const int code = answer.error_code.value_or(0);
  throw ClusterError(api_error_kind(code), what + " refused: " + answer.json, code);
}

}  // namespace yoke::cluster
