#include "subject_scan.h"

#include <charconv>
#include <string_view>

#include "daemon/cluster/cluster_error.h"
#include "daemon/cluster/nats_handles.h"

namespace yoke::cluster {
namespace {

constexpr int kNoMessageFound = 10037;  // JetStream's err_code for "no message found"

// The unsigned number after `"key":` in a JSON text, if any. The answers read here are small
// and flat where it matters (message.seq, error.err_code); subjects of ours hold no quotes.
std::optional<std::uint64_t> number_after(std::string_view json, std::string_view key) {
  // Built by appends: GCC 12 warns (-Wrestrict, a false alarm) on "\"" + std::string(key).
  std::string quoted(1, '"');
  quoted.append(key).append("\":");
  const std::size_t at = json.find(quoted);
  if (at == std::string_view::npos) return std::nullopt;
  std::size_t begin = at + quoted.size();
  while (begin < json.size() && json[begin] == ' ') ++begin;
  std::uint64_t value = 0;
  const auto [end, error] = std::from_chars(json.data() + begin, json.data() + json.size(), value);
  if (error != std::errc() || end == json.data() + begin) return std::nullopt;
  return value;
}

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
  const std::string subject = "$JS.API.STREAM.MSG.GET." + stream;
  natsMsg* raw = nullptr;
  throw_on_failure(natsConnection_Request(&raw, connection.native(), subject.c_str(),
                                          request.data(), static_cast<int>(request.size()),
                                          connection.settings().api_timeout.count()),
                   what);
  const MessageHandle reply(raw);
  const std::string_view json(natsMsg_GetData(raw),
                              static_cast<std::size_t>(natsMsg_GetDataLength(raw)));
  if (json.find("\"error\"") != std::string_view::npos) {
    const int code = static_cast<int>(number_after(json, "err_code").value_or(0));
    if (code == kNoMessageFound) return std::nullopt;
    throw ClusterError(code == 10059 ? ClusterErrorKind::not_found : ClusterErrorKind::rejected,
                       what + ": " + std::string(json), code);
  }
  const std::optional<std::uint64_t> sequence = number_after(json, "seq");
  if (!sequence) throw ClusterError(ClusterErrorKind::other, what + ": unreadable answer " +
                                                                 std::string(json));
  return sequence;
}

}  // namespace yoke::cluster
