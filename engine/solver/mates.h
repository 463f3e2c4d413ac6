// The matching as mate pointers, with an optional journal of the vertices whose mate changed.
//
// A pool repairs its matching in many small steps spread over the search and the blossom
// forest; the journal remembers, for each vertex written since it was opened, the mate it had
// then. The diff of a commit is read from the journal: O(vertices written), never O(n).
// Writes are tagged with the event they go back to (set_cause), so that every change of pairs
// can name its cause.
#pragma once

#include <cstdint>
#include <vector>

#include "yoke/events.h"
#include "yoke/types.h"

namespace yoke {

class Mates {
 public:
  struct Change {
    Vertex vertex;
    Vertex before;           // the mate when the journal was opened
    EventCause first_cause;  // the cause of the first write: when v lost `before`
  };

  explicit Mates(std::size_t vertex_count = 0) : mate_(vertex_count, kNoVertex) {}

  Vertex operator[](Vertex v) const { return mate_[v]; }
  std::size_t size() const { return mate_.size(); }
  const std::vector<Vertex>& values() const { return mate_; }

  void set(Vertex v, Vertex m) {
    if (journal_open_) {
      note(v);
      last_cause_[v] = cause_;
    }
    mate_[v] = m;
  }
  // The event the writes from now on go back to.
  void set_cause(EventCause cause) { cause_ = cause; }
  // The cause of the last write of v since the journal was opened. Precondition: v was written.
  EventCause last_cause(Vertex v) const { return last_cause_[v]; }
  // New vertices are exposed.
  void resize(std::size_t vertex_count);
  // Replaces every mate (a restored pool); the journal is closed and empty.
  void assign(std::vector<Vertex> mates);

  // Forgets the previous journal and records first writes from now on.
  void open_journal();
  void close_journal() { journal_open_ = false; }
  const std::vector<Change>& journal() const { return journal_; }
  // The mate v had when the journal was opened. O(1).
  Vertex before(Vertex v) const {
    return written_[v] == epoch_ ? journal_[position_[v]].before : mate_[v];
  }

 private:
  void note(Vertex v) {
    if (written_[v] == epoch_) return;
    written_[v] = epoch_;
    position_[v] = static_cast<std::uint32_t>(journal_.size());
    journal_.push_back({v, mate_[v], cause_});
  }

  std::vector<Vertex> mate_;  // kNoVertex when exposed
  bool journal_open_ = false;
  std::uint32_t epoch_ = 0;
  std::vector<std::uint32_t> written_;   // per vertex: the epoch of its last journal entry
  std::vector<std::uint32_t> position_;  // per vertex: its entry in journal_
  std::vector<EventCause> last_cause_;   // per vertex: valid where written_ is the epoch
  EventCause cause_ = kNoCause;
  std::vector<Change> journal_;
};

}  // namespace yoke
