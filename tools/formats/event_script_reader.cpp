#include "event_script_reader.h"

#include <algorithm>
#include <array>

#include "event_script_syntax.h"
#include "id_map.h"
#include "tokens.h"

namespace yoke::formats {
namespace {

// The tokens of one line up to its comment: the verb and at most three fields are kept, the
// count covers them all (so "set 1 2 3 4" can say it found 4 fields).
struct Tokens {
  std::array<std::string_view, 4> values;
  std::size_t count = 0;
};

Tokens split_tokens(std::string_view line) {
  Tokens tokens;
  std::size_t i = 0;
  while (i < line.size()) {
    while (i < line.size() && is_blank(line[i])) ++i;
    if (i == line.size() || line[i] == script_syntax::kComment) break;
    const std::size_t start = i;
    while (i < line.size() && !is_blank(line[i])) ++i;
    if (tokens.count < tokens.values.size()) {
      tokens.values[tokens.count] = line.substr(start, i - start);
    }
    ++tokens.count;
  }
  return tokens;
}

using script_syntax::VerbForm;

// "add, set, unset, remove, hold, release or commit", for the unknown-verb message.
std::string verb_list() {
  std::string list;
  for (std::size_t i = 0; i < script_syntax::kVerbForms.size(); ++i) {
    if (i > 0) list += i + 1 == script_syntax::kVerbForms.size() ? " or " : ", ";
    list += script_syntax::kVerbForms[i].verb;
  }
  return list;
}

// Builds the script batch by batch and keeps the pre-scan counts.
class ScriptBuilder {
 public:
  explicit ScriptBuilder(std::size_t line_count)
      // Ids up to twice the line count (small dense ids in practice) take IdMap's flat path.
      : ids_(std::max<std::uint64_t>(IdMap::kDefaultDirectLimit, 2 * std::uint64_t{line_count})) {}

  void parse_line(std::string_view text, std::size_t line) {
    const Tokens tokens = split_tokens(text);
    if (tokens.count == 0) return;  // blank or comment only
    const VerbForm* form = script_syntax::find_verb(tokens.values[0]);
    if (form == nullptr) {
      throw EventScriptError(
          line, "unknown verb " + shown(tokens.values[0]) + " (expected " + verb_list() + ")");
    }
    if (tokens.count - 1 != form->field_count) {
      std::string usage = std::string(form->verb);
      if (form->field_count > 0) usage += " " + std::string(form->fields);
      throw EventScriptError(line, "'" + usage + "' takes " + std::to_string(form->field_count) +
                                       (form->field_count == 1 ? " field" : " fields") +
                                       " after the verb, found " +
                                       std::to_string(tokens.count - 1));
    }
    if (form->verb == script_syntax::kCommit) {
      current_.commit_line = line;
      script_.batches.push_back(std::move(current_));
      current_ = {};
      return;
    }
    current_.events.push_back(parse_event(*form, tokens, line));
    current_.lines.push_back(line);
    ++script_.event_count;
  }

  EventScript finish() && {
    if (!current_.events.empty()) script_.batches.push_back(std::move(current_));
    script_.distinct_vertices = ids_.size();
    return std::move(script_);
  }

 private:
  Event parse_event(const VerbForm& form, const Tokens& tokens, std::size_t line) {
    Event event;
    event.kind = script_syntax::kind_of(form);
    event.u = vertex_id(tokens.values[1], line);
    if (form.field_count >= 2) {
      event.v = vertex_id(tokens.values[2], line);
      if (event.u == event.v) {
        throw EventScriptError(line, "self loop on vertex " + std::to_string(event.u));
      }
      if (event.kind == EventKind::set_edge) event.w = weight(tokens.values[3], line);
    }
    return event;
  }

  VertexKey vertex_id(std::string_view token, std::size_t line) {
    VertexKey id = 0;
    if (auto problem = parse_integer(token, id, "vertex id")) {
      throw EventScriptError(line, *problem);
    }
    if (ids_.intern(id) == kNoVertex) {
      throw EventScriptError(line, "too many distinct vertex ids (at most 4294967294)");
    }
    return id;
  }

  Weight weight(std::string_view token, std::size_t line) {
    Weight w = 0;
    if (auto problem = parse_integer(token, w, "weight")) {
      throw EventScriptError(line, *problem);
    }
    // |w| as unsigned, exact also for the most negative weight.
    const std::uint64_t magnitude =
        w < 0 ? std::uint64_t{0} - static_cast<std::uint64_t>(w) : static_cast<std::uint64_t>(w);
    script_.largest_abs_weight = std::max(script_.largest_abs_weight, magnitude);
    return w;
  }

  EventScript script_;
  ScriptBatch current_;
  IdMap ids_;
};

}  // namespace

EventScript parse_event_script(std::string_view text) {
  const auto line_count = static_cast<std::size_t>(std::count(text.begin(), text.end(), '\n')) + 1;
  ScriptBuilder builder(line_count);
  std::size_t line = 0;
  while (!text.empty()) {
    const std::size_t newline = text.find('\n');
    builder.parse_line(text.substr(0, newline), ++line);
    text.remove_prefix(newline == std::string_view::npos ? text.size() : newline + 1);
  }
  return std::move(builder).finish();
}

}  // namespace yoke::formats
