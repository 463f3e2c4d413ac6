#include "jetstream_api.h"

#include <charconv>

#include "daemon/cluster/nats_handles.h"

namespace yoke::cluster {

constexpr int kStreamNotFound = 10059;

ApiAnswer request_api(NatsConnection& connection, const std::string& api_subject,
                      std::string_view body, const std::string& what) {
  natsMsg* raw = nullptr;
  throw_on_failure(natsConnection_Request(&raw, connection.native(), api_subject.c_str(),
                                          body.data(), static_cast<int>(body.size()),
                                          connection.settings().api_timeout.count()),
                   what);
  const MessageHandle reply(raw);
  ApiAnswer answer;
  answer.json.assign(natsMsg_GetData(raw), static_cast<std::size_t>(natsMsg_GetDataLength(raw)));
  if (answer.json.find("\"error\"") != std::string::npos) {
    answer.error_code = static_cast<int>(number_after(answer.json, "err_code").value_or(0));
  }
  return answer;
}

ClusterErrorKind api_error_kind(int error_code) {
  return error_code == kStreamNotFound ? ClusterErrorKind::not_found : ClusterErrorKind::rejected;
}

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

}  // namespace yoke::cluster
