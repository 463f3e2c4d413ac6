// An event script's batches as a replay's commits (`yoke replay SCRIPT`): commit k is the
// script's k-th batch, into a pool sized to the whole script. Points are commit numbers.
#pragma once

#include <cstdint>
#include <span>
#include <string>

#include "commit_source.h"
#include "yoke/pool.h"
#include "tools/formats/event_script_reader.h"

namespace yoke::postmortem {

// The pool a script is replayed into: sized to the whole script (distinct ids, largest |W|),
// or the mode's largest bounds when the script's weights exceed them (so that Pool::check
// names the offending line). Throws ReplayError "NAME: why" when the mode refuses even those.
Pool script_pool(Mode mode, const formats::EventScript& script, const std::string& name);

class ScriptSource : public CommitSource {
 public:
  // `script` must outlive the source; `name` names it in messages (FILE:LINE). With until > 0
  // only the first `until` batches are replayed. Throws ReplayError as script_pool().
  ScriptSource(const formats::EventScript& script, std::string name, Mode mode,
               std::uint64_t until);

  HistoryUnit unit() const override { return HistoryUnit::commit; }
  Pool& start() override { return pool_; }
  std::uint64_t start_point() const override { return 0; }
  bool from_snapshot() const override { return false; }
  const ReplayedCommit* next() override;
  std::size_t remaining() const override { return batches_.size() - next_; }
  // "NAME:LINE: why", the line of the refused event.
  std::string refusal(const ReplayedCommit& commit, const EventError& error) const override;

 private:
  std::span<const formats::ScriptBatch> batches_;
  std::string name_;
  Pool pool_;
  std::size_t next_ = 0;
  ReplayedCommit current_;
};

}  // namespace yoke::postmortem
