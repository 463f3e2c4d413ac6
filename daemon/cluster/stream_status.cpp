#include "stream_status.h"

#include "daemon/cluster/cluster_error.h"
#include "daemon/cluster/stream_status_copy.h"

namespace yoke::cluster {

StreamStatus stream_status(NatsConnection& connection, const std::string& stream) {
  jsStreamInfo* raw = nullptr;
  jsErrCode code = jsErrCode(0);
  const natsStatus status =
      js_GetStreamInfo(&raw, connection.jetstream(), stream.c_str(), nullptr, &code);
  StreamInfoHandle info(raw);
  throw_on_failure(status, "stream info of '" + stream + "' on " + connection.servers_text(),
                   code);
  return copy_stream_info(*info);
}

StreamStatus copy_stream_info(const jsStreamInfo& info) {
  StreamStatus result;
  if (info.Config != nullptr) {
    const jsStreamConfig& config = *info.Config;
    result.name = config.Name == nullptr ? "" : config.Name;
    for (int s = 0; s < config.SubjectsLen; ++s) result.subjects.emplace_back(config.Subjects[s]);
    result.replicas = config.Replicas;
    result.max_bytes = config.MaxBytes;
  }
  result.messages = info.State.Msgs;
  result.bytes = info.State.Bytes;
  result.first_sequence = info.State.Msgs == 0 ? 0 : info.State.FirstSeq;
  result.last_sequence = info.State.LastSeq;
  if (info.Cluster != nullptr) {
    if (info.Cluster->Leader != nullptr) result.leader = info.Cluster->Leader;
    for (int r = 0; r < info.Cluster->ReplicasLen; ++r) {
      const jsPeerInfo* peer = info.Cluster->Replicas[r];
      if (peer == nullptr) continue;
      result.followers.push_back({peer->Name == nullptr ? "" : peer->Name, peer->Current});
    }
  }
  return result;
}

}  // namespace yoke::cluster
