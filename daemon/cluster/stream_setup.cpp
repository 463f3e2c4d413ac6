#include "stream_setup.h"

#include <algorithm>
#include <chrono>
#include <thread>

#include "daemon/cluster/cluster_error.h"
#include "daemon/cluster/stream_status_copy.h"

namespace yoke::cluster {
namespace {

void check_settings(const StreamSettings& settings) {
  const auto bad = [&](const std::string& what) {
    throw ClusterError(ClusterErrorKind::invalid,
                       "stream '" + settings.name + "': " + what);
  };
  if (settings.name.empty()) bad("the name is empty");
  for (const char c : settings.name) {
    const bool ok = (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (c >= '0' && c <= '9') ||
                    c == '-' || c == '_';
    if (!ok) bad("the name may hold letters, digits, '-' and '_' only");
  }
  if (settings.subjects.empty()) bad("no subjects");
  if (settings.replicas < 1 || settings.replicas > 5) bad("replicas must be 1 to 5");
  if (settings.max_bytes <= 0) bad("max_bytes must be positive (a full stream refuses writes)");
}

// What differs between the settings asked for and the stream that exists, "" if nothing yoke
// sets.
std::string differences(const StreamSettings& wanted, const jsStreamConfig& existing) {
  std::string text;
  const auto note = [&](const std::string& field, const std::string& want,
                        const std::string& have) {
    text += (text.empty() ? "" : "; ") + field + " " + have + " (asked: " + want + ")";
  };
  std::vector<std::string> have_subjects;
  for (int s = 0; s < existing.SubjectsLen; ++s) have_subjects.emplace_back(existing.Subjects[s]);
  std::vector<std::string> want_subjects = wanted.subjects;
  std::sort(have_subjects.begin(), have_subjects.end());
  std::sort(want_subjects.begin(), want_subjects.end());
  if (have_subjects != want_subjects) {
    note("subjects", join_servers(want_subjects), join_servers(have_subjects));
  }
  if (existing.Replicas != wanted.replicas) {
    note("replicas", std::to_string(wanted.replicas), std::to_string(existing.Replicas));
  }
  if (existing.MaxBytes != wanted.max_bytes) {
    note("max_bytes", std::to_string(wanted.max_bytes), std::to_string(existing.MaxBytes));
  }
  if (existing.Storage != js_FileStorage) note("storage", "file", "memory");
  if (existing.Discard != js_DiscardNew) note("discard", "new", "old");
  if (!existing.DenyDelete) note("deny_delete", "true", "false");
  if (existing.Retention != js_LimitsPolicy) note("retention", "limits", "other");
  return text;
}

// A stream that was just created may not have elected its leader yet, and publishes find no
// responders until it has: wait for one (a single server has no leader to wait for).
StreamStatus wait_for_leader(NatsConnection& connection, StreamStatus status) {
  const auto deadline = std::chrono::steady_clock::now() + connection.settings().api_timeout;
  while (status.replicas > 1 && status.leader.empty()) {
    if (std::chrono::steady_clock::now() >= deadline) {
      throw ClusterError(ClusterErrorKind::timeout,
                         "stream '" + status.name + "' on " + connection.servers_text() +
                             " has no leader after " +
                             std::to_string(connection.settings().api_timeout.count()) + " ms");
    }
    std::this_thread::sleep_for(std::chrono::milliseconds(20));
    try {
      status = stream_status(connection, status.name);
    } catch (const ClusterError& error) {
      if (error.kind() != ClusterErrorKind::timeout &&
          error.kind() != ClusterErrorKind::no_responders) {
        throw;
      }
    }
  }
  return status;
}

}  // namespace

StreamStatus ensure_stream(NatsConnection& connection, const StreamSettings& settings) {
  check_settings(settings);
  jsStreamConfig config;
  jsStreamConfig_Init(&config);
  std::vector<const char*> subjects;
  for (const std::string& subject : settings.subjects) subjects.push_back(subject.c_str());
  config.Name = settings.name.c_str();
  config.Subjects = subjects.data();
  config.SubjectsLen = static_cast<int>(subjects.size());
  config.Retention = js_LimitsPolicy;
  config.Storage = js_FileStorage;
  config.Replicas = settings.replicas;
  config.Discard = js_DiscardNew;
  config.MaxBytes = settings.max_bytes;
  config.MaxMsgSize = settings.max_message_bytes;
  config.DenyDelete = true;
  config.DenyPurge = false;
  config.AllowDirect = settings.allow_direct;

  jsStreamInfo* raw = nullptr;
  jsErrCode code = jsErrCode(0);
  const natsStatus status = js_AddStream(&raw, connection.jetstream(), &config, nullptr, &code);
  StreamInfoHandle info(raw);
  const std::string where = "stream '" + settings.name + "' on " + connection.servers_text();
  if (status == NATS_OK) return wait_for_leader(connection, copy_stream_info(*info));
  if (code != JSStreamNameExistErr) throw_on_failure(status, "cannot create " + where, code);

  // It exists with another configuration: say how it differs, change nothing.
  jsStreamInfo* raw_existing = nullptr;
  code = jsErrCode(0);
  const natsStatus lookup = js_GetStreamInfo(&raw_existing, connection.jetstream(),
                                             settings.name.c_str(), nullptr, &code);
  StreamInfoHandle existing(raw_existing);
  throw_on_failure(lookup, "cannot read the existing " + where, code);
  std::string diff = differences(settings, *existing->Config);
  if (diff.empty()) diff = "settings yoke does not set differ";
  throw ClusterError(ClusterErrorKind::mismatch,
                     where + " exists with other settings: " + diff,
                     static_cast<int>(JSStreamNameExistErr));
}

}  // namespace yoke::cluster
