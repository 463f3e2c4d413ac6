// The event script's syntax, written down once: its prose is docs/formats.md ("Event script"),
// and the reader (event_script_reader.h) and the writer (event_script_writer.h) take every word
// from here.
//
//     add U          vertex U arrives with no edges
//     set U V W      insert edge {U,V} or change its weight (U and V arrive if new)
//     unset U V      remove edge {U,V}; U and V stay
//     remove U       remove vertex U and all its edges
//     hold U V       match U with V from now on, whatever the weights (edge {U,V} must exist)
//     release U V    the held pair {U,V} is optimised again
//     commit         end of a batch
//
// U and V are unsigned 64-bit ids, W a signed 64-bit weight. Tokens are separated by blanks
// (tokens.h: is_blank); a token that starts with '#' begins a comment that runs to the end of
// the line. Events after the last `commit` form one more batch.
#pragma once

#include <array>
#include <cstddef>
#include <string_view>

#include "yoke/events.h"

namespace yoke::formats::script_syntax {

// The word that ends a batch.
inline constexpr std::string_view kCommit = "commit";

// At the start of a token: the rest of the line is a comment.
inline constexpr char kComment = '#';

// A line's verb and the fields that follow it.
struct VerbForm {
  std::string_view verb;
  std::string_view fields;  // as usage messages show them
  std::size_t field_count;
};

// Every verb, events in EventKind order, then `commit`.
inline constexpr std::array<VerbForm, 7> kVerbForms{{
    {"add", "U", 1},
    {"set", "U V W", 3},
    {"unset", "U V", 2},
    {"remove", "U", 1},
    {"hold", "U V", 2},
    {"release", "U V", 2},
    {kCommit, "", 0},
}};

static_assert(static_cast<std::size_t>(EventKind::add_vertex) == 0 &&
                  static_cast<std::size_t>(EventKind::set_edge) == 1 &&
                  static_cast<std::size_t>(EventKind::unset_edge) == 2 &&
                  static_cast<std::size_t>(EventKind::remove_vertex) == 3 &&
                  static_cast<std::size_t>(EventKind::hold_pair) == 4 &&
                  static_cast<std::size_t>(EventKind::release_pair) == 5,
              "kVerbForms lists the events in EventKind order");

// The form of an event kind's line.
constexpr const VerbForm& form_of(EventKind kind) {
  return kVerbForms[static_cast<std::size_t>(kind)];
}

// The form of a verb, or nullptr for a word that is no verb. O(number of verbs).
constexpr const VerbForm* find_verb(std::string_view verb) {
  for (const VerbForm& form : kVerbForms) {
    if (form.verb == verb) return &form;
  }
  return nullptr;
}

// The event kind a verb other than `commit` stands for.
constexpr EventKind kind_of(const VerbForm& form) {
  return static_cast<EventKind>(&form - kVerbForms.data());
}

}  // namespace yoke::formats::script_syntax
