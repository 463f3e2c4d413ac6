#include "log_reader.h"

#include "daemon/cluster/cluster_error.h"
#include "daemon/cluster/message_lookup.h"
#include "daemon/cluster/subject_scan.h"

namespace yoke::cluster {

LogReader::LogReader(NatsConnection& connection, const ReaderSettings& settings)
    : last_sequence_(settings.start_sequence == 0 ? 0 : settings.start_sequence - 1) {
  if (settings.subject_filter.empty()) {
    throw ClusterError(ClusterErrorKind::invalid, "a log reader needs a subject filter");
  }
  if (settings.by_lookup) {
    connection_ = &connection;
    stream_ = settings.stream;
    filter_ = settings.subject_filter;
    return;
  }
  jsSubOptions options;
  jsSubOptions_Init(&options);
  options.Stream = settings.stream.c_str();
  options.Ordered = true;
  options.Config.DeliverPolicy = js_DeliverByStartSequence;
  options.Config.OptStartSeq = settings.start_sequence == 0 ? 1 : settings.start_sequence;
  options.Config.Heartbeat =
      std::chrono::duration_cast<std::chrono::nanoseconds>(settings.heartbeat).count();
  jsOptions js_options;
  jsOptions_Init(&js_options);
  js_options.Wait = connection.settings().api_timeout.count();

  natsSubscription* raw = nullptr;
  jsErrCode code = jsErrCode(0);
  const natsStatus status =
      js_SubscribeSync(&raw, connection.jetstream(), settings.subject_filter.c_str(),
                       &js_options, &options, &code);
  subscription_.reset(raw);
  throw_on_failure(status,
                   "cannot read '" + settings.subject_filter + "' from stream '" +
                       settings.stream + "' at sequence " +
                       std::to_string(options.Config.OptStartSeq),
                   code);
}

LogReader::~LogReader() = default;

std::optional<LogMessage> LogReader::next_by_lookup() {
  for (;;) {
    if (!next_sequence_) {
      next_sequence_ = first_sequence_from(*connection_, stream_, filter_, last_sequence_ + 1);
    }
    if (!*next_sequence_) return std::nullopt;
    const std::uint64_t sequence = **next_sequence_;
    std::optional<LogMessage> message = message_at(*connection_, stream_, sequence);
    last_sequence_ = sequence;
    next_sequence_ = first_sequence_from(*connection_, stream_, filter_, sequence + 1);
    if (!message) continue;  // purged between the two lookups
    message->pending = *next_sequence_ ? 1 : 0;
    return message;
  }
}

std::optional<LogMessage> LogReader::next(std::chrono::milliseconds timeout) {
  if (connection_ != nullptr) return next_by_lookup();
  natsMsg* raw = nullptr;
  const natsStatus status = natsSubscription_NextMsg(&raw, subscription_.get(), timeout.count());
  MessageHandle message(raw);
  if (status == NATS_TIMEOUT) return std::nullopt;
  throw_on_failure(status, "reading the log");
  jsMsgMetaData* raw_meta = nullptr;
  throw_on_failure(natsMsg_GetMetaData(&raw_meta, message.get()),
                   "a log delivery without JetStream metadata");
  MetaDataHandle meta(raw_meta);
  LogMessage result = copy_nats_message(message.get(), true);
  result.sequence = meta->Sequence.Stream;
  result.pending = meta->NumPending;
  last_sequence_ = result.sequence;
  return result;
}

}  // namespace yoke::cluster
