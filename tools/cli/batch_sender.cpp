#include "batch_sender.h"

#include <algorithm>
#include <memory>

#include "yoke/v1/ingest.pb.h"

namespace yoke::cli {
namespace {

namespace v1 = yoke::v1;
using Outcome = SendReport::Outcome;

// The daemon's ways of saying "nothing was applied, send it again".
bool asks_for_resend(int code) {
  return code == v1::Error::OUT_OF_ORDER || code == v1::Error::UNAVAILABLE;
}

class BatchSender {
 public:
  BatchSender(EndpointRoute& route, const std::vector<std::string>& requests,
              const SenderSettings& settings)
      : route_(route),
        ingest_(std::make_unique<EndpointClient>(zmq::socket_type::dealer, route.current())),
        requests_(requests),
        settings_(settings),
        slots_(requests.size()),
        end_(requests.size()) {}

  SendReport run() {
    while (!finished_) {
      while (oldest_ < end_ && slots_[oldest_].done) ++oldest_;
      if (oldest_ >= end_) break;
      while (next_ < end_ && next_ - oldest_ < settings_.in_flight) send(next_++);
      // The oldest unacknowledged batch was sent (or resent) first, so its silence is the one
      // that runs out first.
      const auto frames = ingest_->receive(slots_[oldest_].sent_at + settings_.timeout);
      if (frames) {
        handle(*frames);
      } else if (route_.several()) {
        // Counted as a resend, like silence from the only endpoint, then tried elsewhere.
        if (out_of_retries(nullptr, oldest_)) break;
        for (std::size_t i = oldest_; i < std::min(next_, end_); ++i) ++slots_[i].resends;
        route_.skip_silent();
        reconnect();
      } else {
        resend_unacknowledged(nullptr, oldest_);
      }
    }
    report_.endpoint = route_.current();
    return report_;
  }

 private:
  struct Slot {
    Clock::time_point sent_at;
    unsigned resends = 0;
    unsigned awaiting = 0;  // copies sent whose reply has not come (lost ones stay counted)
    bool done = false;
  };

  void send(std::size_t index) {
    Slot& slot = slots_[index];
    slot.sent_at = Clock::now();
    // A copy the full queue refused is as good as lost: the timeout resends it.
    if (ingest_->send(requests_[index])) ++slot.awaiting;
  }

  // A fresh socket to route_.current(), and every batch sent and not acknowledged sent there
  // again in order (replies still due on the old socket are lost with it).
  void reconnect() {
    ingest_ = std::make_unique<EndpointClient>(zmq::socket_type::dealer, route_.current());
    for (std::size_t i = oldest_; i < std::min(next_, end_); ++i) {
      slots_[i].awaiting = 0;
      if (!slots_[i].done) send(i);
    }
  }

  // Whether a batch from the oldest unacknowledged on has used its retries; if so the run
  // fails (refused_on_retry with `cause`, or no_acknowledgement without).
  bool out_of_retries(const v1::Error* cause, std::size_t cause_index) {
    const std::size_t stop = std::min(next_, end_);
    for (std::size_t i = oldest_; i < stop; ++i) {
      if (!slots_[i].done && slots_[i].resends >= settings_.retries) {
        if (cause != nullptr) {
          fail(Outcome::refused_on_retry);
          report_.failed_batch = cause_index;
          report_.error = *cause;
        } else {
          fail(Outcome::no_acknowledgement);
        }
        return true;
      }
    }
    return false;
  }

  // Sends every batch from the oldest unacknowledged one again, in order, keeping their numbers
  // (each must follow its predecessor: after_batch). `cause` is the refusal that asked for it,
  // or null for silence. Gives up when a batch has used its retries.
  void resend_unacknowledged(const v1::Error* cause, std::size_t cause_index) {
    if (out_of_retries(cause, cause_index)) return;
    const std::size_t stop = std::min(next_, end_);
    for (std::size_t i = oldest_; i < stop; ++i) {
      if (slots_[i].done) continue;
      ++slots_[i].resends;
      send(i);
    }
  }

  void handle(const std::vector<std::string>& frames) {
    if (frames.size() != 1) {
      return bad_reply("a reply of " + std::to_string(frames.size()) + " frames (expected 1)");
    }
    v1::IngestReply reply;
    if (!reply.ParseFromString(frames[0])) {
      return bad_reply("a reply that is not a yoke.v1.IngestReply");
    }
    if (reply.version() != v1::PROTOCOL_VERSION_1) {
      return bad_reply("a reply in protocol version " + std::to_string(reply.version()) +
                       " (this yoke speaks version 1)");
    }
    if (!reply.has_ack()) return bad_reply("a reply of a kind this yoke does not know");
    const v1::Ack& ack = reply.ack();
    if (ack.client_id().empty() && ack.client_batch() == 0 && ack.has_rejected()) {
      // Not about any one batch: a request the daemon could not read, or one it refused unread
      // (UNAVAILABLE while shutting down). The latter is left to the timeout, which resends
      // whatever is still unacknowledged.
      const v1::Error error = first_error(ack.rejected());
      if (error.code() == v1::Error::NOT_OWNER) return move(error);
      report_.error = error;
      if (!asks_for_resend(error.code())) fail(Outcome::unreadable);
      return;
    }
    // Not ours, or a number this run never sent: nothing to act on.
    if (ack.client_id() != settings_.client_id ||
        ack.client_batch() < settings_.first_batch_number ||
        ack.client_batch() - settings_.first_batch_number >= next_) {
      return;
    }
    const auto index = static_cast<std::size_t>(ack.client_batch() - settings_.first_batch_number);
    Slot& slot = slots_[index];
    if (slot.awaiting > 0) --slot.awaiting;
    if (slot.done) return;  // a later copy's answer to a batch already acknowledged
    if (ack.has_accepted()) return accept(slot, ack.accepted());
    if (ack.has_rejected()) {
      const v1::Error error = first_error(ack.rejected());
      if (error.code() == v1::Error::NOT_OWNER) return move(error);
      route_.answered();
      return reject(index, error);
    }
    bad_reply("an acknowledgement that neither accepts nor rejects its batch");
  }

  // Another daemon serves the pool (or none does, for now): nothing of this batch was
  // applied; every unacknowledged batch goes where the route leads.
  void move(const v1::Error& refusal) {
    route_.follow(refusal);
    reconnect();
  }

  void accept(Slot& slot, const v1::Accepted& accepted) {
    route_.answered();
    slot.done = true;
    const std::uint64_t seq = accepted.seq();
    report_.first_seq = report_.accepted == 0 ? seq : std::min(report_.first_seq, seq);
    report_.last_seq = report_.accepted == 0 ? seq : std::max(report_.last_seq, seq);
    ++report_.accepted;
    if (accepted.duplicate()) ++report_.duplicates;
  }

  void reject(std::size_t index, const v1::Error& error) {
    // Batches after a refused one are refused for its sake (OUT_OF_ORDER): not news.
    if (index >= end_) return;
    if (asks_for_resend(error.code())) {
      // Only the answer to the newest copy counts: an older copy's refusal may predate the
      // resend that already fixed it.
      if (slots_[index].awaiting == 0) resend_unacknowledged(&error, index);
      return;
    }
    // Stop sending here; the run ends once every batch before it is acknowledged.
    end_ = index;
    report_.outcome = Outcome::rejected;
    report_.failed_batch = index;
    report_.error = error;
  }

  static v1::Error first_error(const v1::Rejected& rejected) {
    if (rejected.errors_size() > 0) return rejected.errors(0);
    v1::Error error;
    error.set_code(v1::Error::INTERNAL);
    error.set_message("the daemon rejected the batch without saying why");
    return error;
  }

  void bad_reply(std::string problem) {
    fail(Outcome::bad_reply);
    report_.problem = std::move(problem);
  }

  void fail(Outcome outcome) {
    report_.outcome = outcome;
    finished_ = true;
  }

  EndpointRoute& route_;
  std::unique_ptr<EndpointClient> ingest_;
  const std::vector<std::string>& requests_;
  const SenderSettings& settings_;
  std::vector<Slot> slots_;
  std::size_t oldest_ = 0;  // the first batch not acknowledged
  std::size_t next_ = 0;    // the first batch never sent
  std::size_t end_;         // batches from here on are not sent (one was rejected)
  bool finished_ = false;   // a failure that ends the run at once
  SendReport report_;
};

}  // namespace

SendReport send_batches(EndpointRoute& route, const std::vector<std::string>& requests,
                        const SenderSettings& settings) {
  return BatchSender(route, requests, settings).run();
}

}  // namespace yoke::cli
