// The writer of the event script (syntax: event_script_syntax.h; prose: docs/formats.md, "Event
// script"): `yoke gen stream` writes scripts with it, and `yoke replay --history` names the
// events behind a change with its lines. One line per event, the verb and its fields separated
// by single spaces, no comments; each batch ends with `commit`.
#pragma once

#include <ostream>
#include <span>
#include <string>

#include "yoke/events.h"

namespace yoke::formats {

// Appends the event's line, without a newline: "add 7", "set 12 40 -3", "unset 12 40",
// "remove 12", "hold 40 12", "release 12 40". O(1).
void append_event_line(std::string& out, const Event& event);

// The event's line as a string, as append_event_line writes it.
std::string event_line(const Event& event);

// Writes one batch: each event's line, then `commit`. Cost O(events); buffered, so that a
// stream of 10^6 events writes in a fraction of a second.
void write_event_script(std::ostream& out, std::span<const Event> batch);

}  // namespace yoke::formats
