#include "subject_scan.h"

#include "daemon/cluster/cluster_error.h"
#include "daemon/cluster/jetstream_api.h"

namespace yoke::cluster {
namespace {

constexpr int kNoMessageFound = 10037;  // JetStream's err_code for "no message found"

}  // namespace

std::optional<std::uint64_t> first_sequence_from(NatsConnection& connection,
                                                 const std::string& stream,
                                                 const std::string& filter, std::uint64_t from) {
  const std::string what = "first message of '" + filter + "' from sequence " +
                           std::to_string(from) + " in stream '" + stream + "'";
  if (filter.empty() || filter.find_first_of(" \"\\") != std::string::npos) {
    throw ClusterError(ClusterErrorKind::invalid, what + ": not a subject filter");
  }
  const std::string request = "{\"seq\":" + std::to_string(from < 1 ? 1 : from) +
                              ",\"next_by_subj\":\"" + filter + "\"}";
  const ApiAnswer answer =
      request_api(connection, "$JS.API.STREAM.MSG.GET." + stream, request, what);
  if (const std::optional<int> code = answer.error_code) {
    if (*code == kNoMessageFound) return std::nullopt;
    throw ClusterError(api_error_kind(*code), what + ": " + answer.json, *code);
  }
  const std::optional<std::uint64_t> sequence = number_after(answer.json, "seq");
  if (!sequence) {
    throw ClusterError(ClusterErrorKind::other, what + ": unreadable answer " + answer.json);
  }
  return sequence;
}

}  // namespace yoke::cluster
