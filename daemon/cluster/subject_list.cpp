#include "subject_list.h"

#include "daemon/cluster/cluster_error.h"
#include "daemon/cluster/nats_handles.h"

namespace yoke::cluster {

std::vector<std::pair<std::string, std::uint64_t>> subjects_with_messages(
    NatsConnection& connection, const std::string& stream, const std::string& filter) {
  jsOptions options;
  jsOptions_Init(&options);
  options.Wait = connection.settings().api_timeout.count();
  options.Stream.Info.SubjectsFilter = filter.c_str();
  jsStreamInfo* raw = nullptr;
  jsErrCode code = jsErrCode(0);
  throw_on_failure(js_GetStreamInfo(&raw, connection.jetstream(), stream.c_str(), &options, &code),
                   "subjects '" + filter + "' of stream '" + stream + "'", code);
  const StreamInfoHandle info(raw);
  std::vector<std::pair<std::string, std::uint64_t>> subjects;
  if (const jsStreamStateSubjects* listed = raw->State.Subjects) {
    for (int i = 0; i < listed->Count; ++i) {
      subjects.emplace_back(listed->List[i].Subject, listed->List[i].Msgs);
    }
  }
  return subjects;
}

}  // namespace yoke::cluster
