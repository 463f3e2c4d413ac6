#include "cluster_diff_reader.h"

#include <algorithm>
#include <chrono>
#include <stdexcept>

#include "cli_error.h"
#include "daemon/cluster/cluster_error.h"
#include "daemon/jetstream/diff_feed_message.h"
#include "daemon/jetstream/pool_subjects.h"

namespace yoke::cli {
namespace {

// How long one wait on the consumer lasts, so that a signal is noticed soon.
constexpr std::chrono::milliseconds kWaitSlice{200};

}  // namespace

ClusterDiffReader::ClusterDiffReader(const ClusterLogOptions& cluster, const std::string& pool,
                                     std::optional<std::uint64_t> from_seq)
    : connection_(open_cluster_stream(cluster, "yoke-watch")), from_seq_(from_seq) {
  std::string subject;
  try {
    subject = jetstream::PoolSubjects(cluster.subject_prefix).of_diffs(pool);
  } catch (const std::invalid_argument& error) {
    throw CliError("--pool '" + pool + "': " + error.what());
  }
  description_ = "subject " + subject + " of JetStream stream '" + cluster.stream + "' on " +
                 connection_->servers_text();
  cluster::ReaderSettings settings;
  settings.stream = cluster.stream;
  settings.subject_filter = subject;
  try {
    if (!from_seq_) {
      // Diffs from now on: after the one stored last (a diff stored meanwhile is delivered).
      if (const auto last = jetstream::last_stored_diff(*connection_, cluster.stream, subject)) {
        settings.start_sequence = last->stream_sequence + 1;
      }
    }
    reader_ = std::make_unique<cluster::LogReader>(*connection_, settings);
  } catch (const std::exception& error) {
    throw CliError(description_ + ": " + error.what());
  }
}

ClusterDiffReader::~ClusterDiffReader() = default;

std::optional<std::string> ClusterDiffReader::next(Deadline deadline,
                                                   const std::atomic<bool>* stop) {
  while (stop == nullptr || !stop->load()) {
    std::chrono::milliseconds wait = kWaitSlice;
    if (deadline) {
      const Clock::time_point now = Clock::now();
      if (now >= *deadline) return std::nullopt;
      wait = std::min(wait, std::chrono::ceil<std::chrono::milliseconds>(*deadline - now));
    }
    std::optional<cluster::LogMessage> message;
    try {
      message = reader_->next(wait);
    } catch (const cluster::ClusterError& error) {
      throw CliError(description_ + ": " + error.what());
    }
    if (!message) continue;
    const std::optional<std::uint64_t> seq = jetstream::diff_feed_seq(*message);
    if (!seq) {
      throw CliError(description_ + ": the message at stream sequence " +
                     std::to_string(message->sequence) + " has no readable " +
                     jetstream::kDiffSeqHeader + " header");
    }
    if (from_seq_ && *seq < *from_seq_) continue;
    return std::move(message->data);
  }
  return std::nullopt;
}

}  // namespace yoke::cli
