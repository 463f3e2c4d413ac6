#include "log_message.h"

#include <algorithm>
#include <cstdlib>

#include "daemon/cluster/cluster_error.h"

namespace yoke::cluster {

std::optional<std::string_view> header_value(const Headers& headers, std::string_view key) {
  for (const auto& [name, value] : headers) {
    if (name == key) return value;
  }
  return std::nullopt;
}

MessageHandle make_nats_message(const std::string& subject, const Headers& headers,
                                std::string_view data) {
  natsMsg* raw = nullptr;
  throw_on_failure(natsMsg_Create(&raw, subject.c_str(), nullptr, data.data(),
                                  static_cast<int>(data.size())),
                   "cannot build a message for " + subject);
  MessageHandle message(raw);
  for (const auto& [key, value] : headers) {
    throw_on_failure(natsMsgHeader_Add(message.get(), key.c_str(), value.c_str()),
                     "bad header '" + key + "' for " + subject);
  }
  return message;
}

LogMessage copy_nats_message(natsMsg* message, bool drop_server_headers) {
  LogMessage result;
  result.subject = natsMsg_GetSubject(message);
  const char* data = natsMsg_GetData(message);
  result.data.assign(data == nullptr ? "" : data,
                     static_cast<std::size_t>(natsMsg_GetDataLength(message)));
  const char** keys = nullptr;
  int key_count = 0;
  // NATS_NOT_FOUND: no headers at all.
  if (natsMsgHeader_Keys(message, &keys, &key_count) != NATS_OK) return result;
  for (int k = 0; k < key_count; ++k) {
    const std::string key = keys[k];
    if (drop_server_headers && key.rfind("Nats-", 0) == 0) continue;
    const char** values = nullptr;
    int value_count = 0;
    if (natsMsgHeader_Values(message, keys[k], &values, &value_count) != NATS_OK) continue;
    for (int v = 0; v < value_count; ++v) result.headers.emplace_back(key, values[v]);
    std::free(static_cast<void*>(values));  // the array is the caller's; the strings are not
  }
  std::free(static_cast<void*>(keys));
  // libnats keeps headers in a hash map: its key order means nothing.
  std::stable_sort(result.headers.begin(), result.headers.end(),
                   [](const auto& a, const auto& b) { return a.first < b.first; });
  return result;
}

}  // namespace yoke::cluster
