#include "cluster_error.h"

namespace yoke::cluster {

const char* to_string(ClusterErrorKind kind) {
  switch (kind) {
    case ClusterErrorKind::unreachable: return "unreachable";
    case ClusterErrorKind::timeout: return "timeout";
    case ClusterErrorKind::no_responders: return "no responders";
    case ClusterErrorKind::stream_full: return "stream full";
    case ClusterErrorKind::rejected: return "rejected";
    case ClusterErrorKind::not_found: return "not found";
    case ClusterErrorKind::mismatch: return "mismatch";
    case ClusterErrorKind::closed: return "closed";
    case ClusterErrorKind::invalid: return "invalid";
    case ClusterErrorKind::other: return "other";
  }
  return "other";
}

ClusterErrorKind classify(natsStatus status, jsErrCode code) {
  // libnats reports a publish nobody answered with code 10076 ("JetStream not enabled"); the
  // status says what happened.
  if (status == NATS_NO_RESPONDERS) return ClusterErrorKind::no_responders;
  if (status == NATS_TIMEOUT) return ClusterErrorKind::timeout;
  switch (code) {
    case JSStreamNotFoundErr:
    case JSNoMessageFoundErr: return ClusterErrorKind::not_found;
    // What 2.9 answers to a DiscardNew stream at its cap ("maximum bytes/messages exceeded").
    case JSStreamStoreFailedErr: return ClusterErrorKind::stream_full;
    default: break;
  }
  if (code != 0) return ClusterErrorKind::rejected;
  switch (status) {
    case NATS_NO_SERVER: return ClusterErrorKind::unreachable;
    case NATS_TIMEOUT: return ClusterErrorKind::timeout;
    case NATS_NO_RESPONDERS: return ClusterErrorKind::no_responders;
    case NATS_NOT_FOUND: return ClusterErrorKind::not_found;
    case NATS_CONNECTION_CLOSED: return ClusterErrorKind::closed;
    case NATS_INVALID_ARG: return ClusterErrorKind::invalid;
    default: return ClusterErrorKind::other;
  }
}

void throw_on_failure(natsStatus status, const std::string& what, jsErrCode code) {
  if (status == NATS_OK) return;
  std::string message = what + ": " + natsStatus_GetText(status);
  if (code != 0) message += " [JetStream error " + std::to_string(static_cast<int>(code)) + "]";
  // The last error of this thread carries the server's description ("maximum bytes exceeded");
  // it may also be left over from an earlier call, so only a detail of this status is used.
  natsStatus last_status = NATS_OK;
  const char* detail = nats_GetLastError(&last_status);
  if (last_status == status && detail != nullptr && *detail != '\0' &&
      std::string(detail) != natsStatus_GetText(status)) {
    message += " (" + std::string(detail) + ")";
  }
  throw ClusterError(classify(status, code), message, static_cast<int>(code));
}

}  // namespace yoke::cluster
