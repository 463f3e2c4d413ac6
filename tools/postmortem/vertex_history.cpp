#include "vertex_history.h"

#include <string>
#include <utility>

#include "tools/formats/event_script_writer.h"

namespace yoke::postmortem {
namespace {

std::string point_text(HistoryUnit unit, std::uint64_t at) {
  return (unit == HistoryUnit::seq ? "seq " : "commit ") + std::to_string(at);
}

// A commit's points: "seq 7", "seqs 6-7", "commit 4".
std::string span_text(HistoryUnit unit, std::uint64_t first, std::uint64_t at) {
  if (unit == HistoryUnit::seq && first != at) {
    return "seqs " + std::to_string(first) + "-" + std::to_string(at);
  }
  return point_text(unit, at);
}

// The start of the replay: "the start" for an empty pool, else its point.
std::string start_text(HistoryUnit unit, const VertexState& start) {
  return start.at == 0 ? std::string("the start") : point_text(unit, start.at);
}

std::string origin_text(const EventOrigin& origin) {
  if (origin.line != 0) return "[line " + std::to_string(origin.line) + "]";
  std::string text = "[seq " + std::to_string(origin.seq);
  if (!origin.client_id.empty()) text += ", client " + origin.client_id;
  if (origin.client_batch != 0) text += ", batch " + std::to_string(origin.client_batch);
  return text + "]";
}

std::string cause_text(const ChangeCause& cause) {
  switch (cause.kind) {
    case ChangeCause::Kind::event:
      return "cause " + formats::event_line(cause.event) + " " + origin_text(cause.origin);
    case ChangeCause::Kind::first_solve:
      return "first solve of the pool (it was empty before this commit)";
    case ChangeCause::Kind::batch:
      return "one of the commit's " + std::to_string(cause.batch_events) +
             " events (no cause reported)";
  }
  return {};
}

std::string state_text(VertexKey vertex, const VertexState& state) {
  const std::string name = std::to_string(vertex);
  if (!state.present) return name + " is not in the pool";
  if (!state.mate) return name + " is unpaired";
  return name + " is paired with " + std::to_string(*state.mate) + " (weight " +
         std::to_string(state.pair_weight) + ")";
}

const char* change_name(HistoryChange change) {
  switch (change) {
    case HistoryChange::vertex_added: return "added";
    case HistoryChange::vertex_removed: return "removed";
    case HistoryChange::pair_gained: return "pair_gained";
    case HistoryChange::pair_lost: return "pair_lost";
  }
  return "";
}

void add_origin_json(const EventOrigin& origin, Json& out) {
  if (origin.line != 0) {
    out["line"] = origin.line;
  } else {
    out["seq"] = origin.seq;
    out["client_id"] = origin.client_id.empty() ? Json(nullptr) : Json(origin.client_id);
    out["client_batch"] = origin.client_batch == 0 ? Json(nullptr) : Json(origin.client_batch);
  }
}

Json cause_json(const ChangeCause& cause) {
  switch (cause.kind) {
    case ChangeCause::Kind::event: {
      Json out{
          {"kind", "event"}, {"index", cause.index}, {"event", formats::event_line(cause.event)}};
      add_origin_json(cause.origin, out);
      return out;
    }
    case ChangeCause::Kind::first_solve: return Json{{"kind", "first_solve"}};
    case ChangeCause::Kind::batch: return Json{{"kind", "batch"}, {"events", cause.batch_events}};
  }
  return Json(nullptr);
}

Json state_json(const VertexState& state) {
  return Json{{"at", state.at},
              {"present", state.present},
              {"mate", state.mate ? Json(*state.mate) : Json(nullptr)},
              {"pair_weight", state.mate ? Json(state.pair_weight) : Json(nullptr)}};
}

ChangeCause event_cause(const ReplayedCommit& commit, std::size_t index) {
  ChangeCause cause;
  cause.kind = ChangeCause::Kind::event;
  cause.index = index;
  cause.event = commit.events[index];
  if (commit.origin) cause.origin = commit.origin(index);
  return cause;
}

}  // namespace

HistoryBuilder::HistoryBuilder(const std::vector<VertexKey>& vertices, HistoryUnit unit) {
  for (const VertexKey vertex : vertices) {
    if (index_.contains(vertex)) continue;
    index_.emplace(vertex, histories_.size());
    VertexHistory history;
    history.vertex = vertex;
    history.unit = unit;
    histories_.push_back(std::move(history));
  }
  alive_.assign(histories_.size(), false);
}

VertexHistory* HistoryBuilder::find(VertexKey key) {
  const auto it = index_.find(key);
  return it == index_.end() ? nullptr : &histories_[it->second];
}

VertexState HistoryBuilder::state_of(const Pool& pool, VertexKey key, std::uint64_t at) {
  VertexState state;
  state.at = at;
  if (const auto explanation = pool.explain(key, 0)) {
    state.present = true;
    state.mate = explanation->mate;
    state.pair_weight = explanation->pair_weight;
  }
  return state;
}

void HistoryBuilder::start(const Pool& pool, std::uint64_t at) {
  for (std::size_t i = 0; i < histories_.size(); ++i) {
    VertexHistory& history = histories_[i];
    history.start = state_of(pool, history.vertex, at);
    alive_[i] = history.start.present;
    if (history.start.mate) {
      history.partners.push_back(
          Partnership{*history.start.mate, history.start.pair_weight, at, true, std::nullopt});
    }
  }
}

ChangeCause HistoryBuilder::cause_of(const ReplayedCommit& commit, const CommitResult& result,
                                     const std::vector<EventCause>& causes, std::size_t changes,
                                     std::size_t i) const {
  if (causes.size() == changes) {
    const EventCause cause = causes[i];
    if (cause == kNoCause) {
      ChangeCause out;
      out.kind = ChangeCause::Kind::first_solve;
      return out;
    }
    if (cause < commit.events.size()) return event_cause(commit, cause);
  }
  // No usable cause reported: the batch as a whole.
  if (result.stats.initial_solve) {
    ChangeCause out;
    out.kind = ChangeCause::Kind::first_solve;
    return out;
  }
  if (commit.events.size() == 1) return event_cause(commit, 0);
  ChangeCause out;
  out.kind = ChangeCause::Kind::batch;
  out.batch_events = commit.events.size();
  return out;
}

void HistoryBuilder::record(const ReplayedCommit& commit, const CommitResult& result) {
  if (histories_.empty()) return;
  const auto entry = [&](HistoryChange change, VertexKey other, Weight w, ChangeCause cause) {
    HistoryEntry out;
    out.first = commit.first;
    out.at = commit.at;
    out.change = change;
    out.other = other;
    out.w = w;
    out.cause = std::move(cause);
    return out;
  };

  // Vertices added and removed, in event order.
  for (std::size_t i = 0; i < commit.events.size(); ++i) {
    const Event& event = commit.events[i];
    const auto added = [&](VertexKey key) {
      const auto it = index_.find(key);
      if (it == index_.end() || alive_[it->second]) return;
      alive_[it->second] = true;
      histories_[it->second].entries.push_back(
          entry(HistoryChange::vertex_added, 0, 0, event_cause(commit, i)));
    };
    switch (event.kind) {
      case EventKind::add_vertex: added(event.u); break;
      case EventKind::set_edge:
        added(event.u);
        added(event.v);
        break;
      case EventKind::unset_edge:
      case EventKind::hold_pair:  // holds name vertices that are alive already
      case EventKind::release_pair: break;
      case EventKind::remove_vertex: {
        const auto it = index_.find(event.u);
        if (it == index_.end() || !alive_[it->second]) break;
        alive_[it->second] = false;
        histories_[it->second].entries.push_back(
            entry(HistoryChange::vertex_removed, 0, 0, event_cause(commit, i)));
        break;
      }
    }
  }

  // Pairs lost, then pairs gained.
  const MatchingDiff& diff = result.diff;
  for (std::size_t i = 0; i < diff.removed.size(); ++i) {
    const MatchedPair& pair = diff.removed[i];
    for (const auto& [self, other] : {std::pair{pair.a, pair.b}, std::pair{pair.b, pair.a}}) {
      VertexHistory* history = find(self);
      if (history == nullptr) continue;
      history->entries.push_back(
          entry(HistoryChange::pair_lost, other, pair.w,
                cause_of(commit, result, diff.removed_cause, diff.removed.size(), i)));
      for (Partnership& partner : history->partners) {
        if (partner.other == other && !partner.to) partner.to = commit.at;
      }
    }
  }
  for (std::size_t i = 0; i < diff.added.size(); ++i) {
    const MatchedPair& pair = diff.added[i];
    for (const auto& [self, other] : {std::pair{pair.a, pair.b}, std::pair{pair.b, pair.a}}) {
      VertexHistory* history = find(self);
      if (history == nullptr) continue;
      history->entries.push_back(
          entry(HistoryChange::pair_gained, other, pair.w,
                cause_of(commit, result, diff.added_cause, diff.added.size(), i)));
      history->partners.push_back(Partnership{other, pair.w, commit.at, false, std::nullopt});
    }
  }
}

void HistoryBuilder::finish(const Pool& pool, std::uint64_t at) {
  for (VertexHistory& history : histories_) history.end = state_of(pool, history.vertex, at);
}

std::string history_text(const VertexHistory& history, const std::string& where) {
  const HistoryUnit unit = history.unit;
  const std::string name = std::to_string(history.vertex);
  std::string out = "history of " + name + " (" + where + "), " + start_text(unit, history.start) +
                    " to " + point_text(unit, history.end.at) + ":\n";
  if (history.start.at != 0) {
    out += "  at " + start_text(unit, history.start) +
           " (the snapshot): " + state_text(history.vertex, history.start) + "\n";
  }
  for (const HistoryEntry& entry : history.entries) {
    out += "  " + span_text(unit, entry.first, entry.at) + ": ";
    switch (entry.change) {
      case HistoryChange::vertex_added:
      case HistoryChange::vertex_removed:
        out += std::string(change_name(entry.change)) + ": " +
               formats::event_line(entry.cause.event) + " " + origin_text(entry.cause.origin);
        break;
      case HistoryChange::pair_gained:
      case HistoryChange::pair_lost:
        out += "pair with " + std::to_string(entry.other) +
               (entry.change == HistoryChange::pair_gained ? " gained" : " lost") + " (weight " +
               std::to_string(entry.w) + "): " + cause_text(entry.cause);
        break;
    }
    out += '\n';
  }
  if (history.entries.empty() && !history.start.present) {
    out += "  " + name + " is in none of the replayed commits\n";
  }
  if (!history.partners.empty()) {
    out += "partners of " + name + ":\n";
    for (const Partnership& partner : history.partners) {
      out += "  " + std::to_string(partner.other) + " (weight " + std::to_string(partner.w) +
             ") from " + (partner.from_start ? "the snapshot at " : "") +
             point_text(unit, partner.from);
      out += partner.to ? " to " + point_text(unit, *partner.to)
                        : ", still paired at " + point_text(unit, history.end.at);
      out += '\n';
    }
  }
  out += "at " + point_text(unit, history.end.at) + ": " + state_text(history.vertex, history.end) +
         "\n";
  return out;
}

Json history_json(const VertexHistory& history, const std::optional<std::string>& pool) {
  Json changes = Json::array();
  for (const HistoryEntry& entry : history.entries) {
    Json change{{"first", entry.first}, {"at", entry.at}, {"change", change_name(entry.change)}};
    if (entry.change == HistoryChange::pair_gained || entry.change == HistoryChange::pair_lost) {
      change["other"] = entry.other;
      change["weight"] = entry.w;
    }
    change["cause"] = cause_json(entry.cause);
    changes.push_back(std::move(change));
  }
  Json partners = Json::array();
  for (const Partnership& partner : history.partners) {
    partners.push_back(Json{{"other", partner.other},
                            {"weight", partner.w},
                            {"from", partner.from},
                            {"from_start", partner.from_start},
                            {"to", partner.to ? Json(*partner.to) : Json(nullptr)}});
  }
  return Json{{"kind", "history"},
              {"vertex", history.vertex},
              {"pool", pool ? Json(*pool) : Json(nullptr)},
              {"unit", history.unit == HistoryUnit::seq ? "seq" : "commit"},
              {"start", state_json(history.start)},
              {"changes", std::move(changes)},
              {"partners", std::move(partners)},
              {"end", state_json(history.end)}};
}

}  // namespace yoke::postmortem
