// The reader of the event script, the input of `yoke replay` and `yoke send`: text to batches
// of engine events. The syntax is in event_script_syntax.h, its prose in docs/formats.md
// ("Event script"); the writer is event_script_writer.h.
//
// Events after the last `commit` form one more batch, committed at the end of the input; a
// `commit` right after `commit` is a batch with no events. The parser checks the form of each
// line only; whether an event fits the pool's state (an unknown vertex, a missing edge, a weight
// beyond the pool's limits) is Pool::check's job.
#pragma once

#include <cstdint>
#include <stdexcept>
#include <string>
#include <string_view>
#include <vector>

#include "yoke/events.h"
#include "tokens.h"

namespace yoke::formats {

struct ScriptBatch {
  std::vector<Event> events;
  std::vector<std::size_t> lines;  // lines[i]: the 1-based line of events[i]
  std::size_t commit_line = 0;     // the `commit` line; 0 for the implicit one at end of file
};

struct EventScript {
  std::vector<ScriptBatch> batches;
  std::size_t event_count = 0;
  // The pre-scan that sizes a pool for the whole script: how many distinct vertex ids the
  // script mentions, and the largest |W| of any `set` (2^63 for W = -2^63).
  std::size_t distinct_vertices = 0;
  std::uint64_t largest_abs_weight = 0;
};

// A malformed script: the first offending line (1-based) and what is wrong with it.
class EventScriptError : public LineError {
 public:
  using LineError::LineError;
};

// Parses a whole script. Throws EventScriptError for the first bad line: an unknown verb, a
// wrong number of fields, an id or weight that is not an integer or out of range, or a `set`,
// `unset`, `hold` or `release` of a self loop. Cost O(size of text + number of events).
EventScript parse_event_script(std::string_view text);

}  // namespace yoke::formats
