#include "proto_json.h"

namespace yoke::cli {
namespace {

namespace v1 = yoke::v1;

// Pairs as [a, b, weight]: compact, and the same form in diffs and whole matchings.
Json pairs_json(const google::protobuf::RepeatedPtrField<v1::Pair>& pairs) {
  Json out = Json::array();
  for (const v1::Pair& pair : pairs) {
    out.push_back(Json::array({pair.a(), pair.b(), pair.weight()}));
  }
  return out;
}

Json mode_json(v1::Mode mode) {
  const char* text = mode_text(mode);
  return text == nullptr ? Json(nullptr) : Json(text);
}

// A key that may be absent (an unpaired vertex has no mate): the key, or null.
template <typename Value>
Json optional_key(bool present, const Value& value) {
  return present ? Json(value) : Json(nullptr);
}

Json repair_stats_json(const v1::RepairStats& stats) {
  return Json{{"events", stats.events()},
              {"roots", stats.roots()},
              {"searches", stats.searches()},
              {"augmentations", stats.augmentations()},
              {"blossoms_dissolved", stats.blossoms_dissolved()},
              {"vertices_touched", stats.vertices_touched()},
              {"initial_solve", stats.initial_solve()}};
}

Json timings_json(const v1::Timings& timings) {
  return Json{{"repair_us", timings.repair_us()},
              {"commit_to_publish_us", timings.commit_to_publish_us()},
              {"publish_unix_us", timings.publish_unix_us()}};
}

}  // namespace

const char* mode_text(v1::Mode mode) {
  switch (mode) {
    case v1::MODE_MAX_WEIGHT: return "max-weight";
    case v1::MODE_MAX_CARDINALITY: return "max-cardinality";
    case v1::MODE_PERFECT: return "perfect";
    default: return nullptr;
  }
}

std::string error_code_name(int code) {
  if (v1::Error_Code_IsValid(code)) return v1::Error_Code_Name(static_cast<v1::Error_Code>(code));
  return "CODE_" + std::to_string(code);
}

Json diff_json(const v1::Diff& diff) {
  Json out{{"pool", diff.pool()},
           {"seq", diff.seq()},
           {"prev_seq", diff.prev_seq()},
           {"weight", diff.weight()},
           {"pairs", diff.pairs()},
           {"no_perfect_matching", diff.no_perfect_matching()},
           {"removed", pairs_json(diff.removed())},
           {"added", pairs_json(diff.added())}};
  // The timings sit at the top level: they are what a watcher graphs most often.
  out.update(timings_json(diff.timings()));
  out["stats"] = repair_stats_json(diff.stats());
  if (diff.retired()) out["retired"] = true;  // only then: older readers' lines stay as they were
  return out;
}

Json summary_json(const std::string& pool, const v1::Summary& summary) {
  return Json{{"pool", pool},
              {"seq", summary.seq()},
              {"weight", summary.weight()},
              {"pairs", summary.pairs()},
              {"vertices", summary.vertices()},
              {"edges", summary.edges()},
              {"mode", mode_json(summary.mode())},
              {"no_perfect_matching", summary.no_perfect_matching()}};
}

Json mate_json(const std::string& pool, const v1::Mate& mate) {
  return Json{{"pool", pool},
              {"seq", mate.seq()},
              {"vertex", mate.vertex()},
              {"mate", optional_key(mate.has_mate(), mate.mate())},
              {"pair_weight", optional_key(mate.has_pair_weight(), mate.pair_weight())}};
}

Json matching_json(const std::string& pool, const v1::Matching& matching) {
  return Json{{"pool", pool},
              {"seq", matching.seq()},
              {"weight", matching.weight()},
              {"pairs", matching.matching_size()},
              {"matching", pairs_json(matching.matching())},
              {"mode", mode_json(matching.mode())},
              {"no_perfect_matching", matching.no_perfect_matching()}};
}

// explanation_json is in explanation_text.cpp, beside the writer it shares.

Json stats_json(const std::string& pool, const v1::Stats& stats) {
  const v1::PoolLimits& limits = stats.config().limits();
  return Json{{"pool", pool},
              {"seq", stats.seq()},
              {"weight", stats.weight()},
              {"pairs", stats.pairs()},
              {"vertices", stats.vertices()},
              {"edges", stats.edges()},
              {"mode", mode_json(stats.config().mode())},
              {"limits",
               Json{{"max_vertices", limits.max_vertices()},
                    {"max_edges", limits.max_edges()},
                    {"max_abs_weight", limits.max_abs_weight()}}},
              {"churn_bonus", stats.config().churn_bonus()},
              {"batches_accepted", stats.batches_accepted()},
              {"batches_rejected", stats.batches_rejected()},
              {"batches_duplicate", stats.batches_duplicate()},
              {"events_applied", stats.events_applied()},
              {"commits", stats.commits()},
              {"last_repair", repair_stats_json(stats.last_repair())},
              {"last_timings", timings_json(stats.last_timings())},
              {"last_snapshot_seq", stats.last_snapshot_seq()}};
}

Json snapshot_taken_json(const v1::SnapshotTaken& snapshot) {
  Json pools = Json::array();
  for (const v1::SnapshotTaken::Entry& entry : snapshot.pools()) {
    pools.push_back(Json{{"pool", entry.pool()}, {"seq", entry.seq()}});
  }
  return Json{{"pools", std::move(pools)}, {"path", snapshot.path()}};
}

Json health_json(const v1::Health& health) {
  return Json{{"ok", health.ok()},
              {"status", health.status()},
              {"uptime_s", health.uptime_s()},
              {"pools", health.pools()},
              {"daemon_version", health.daemon_version()}};
}

Json error_json(const v1::Error& error) {
  Json out{{"code", error_code_name(error.code())}, {"message", error.message()}};
  if (error.has_event_index()) out["event_index"] = error.event_index();
  if (error.has_last_batch()) out["last_batch"] = error.last_batch();
  return out;
}

Json query_reply_json(const v1::QueryReply& reply) {
  const std::string& pool = reply.pool();
  switch (reply.kind_case()) {
    case v1::QueryReply::kError: return error_json(reply.error());
    case v1::QueryReply::kSummary: return summary_json(pool, reply.summary());
    case v1::QueryReply::kMate: return mate_json(pool, reply.mate());
    case v1::QueryReply::kMatching: return matching_json(pool, reply.matching());
    case v1::QueryReply::kExplain: return explanation_json(pool, reply.explain());
    case v1::QueryReply::kStats: return stats_json(pool, reply.stats());
    case v1::QueryReply::kSnapshot: return snapshot_taken_json(reply.snapshot());
    case v1::QueryReply::kHealth: return health_json(reply.health());
    case v1::QueryReply::KIND_NOT_SET: break;
  }
  return Json(nullptr);
}

std::string json_line(const Json& value) {
  return value.dump(-1, ' ', false, Json::error_handler_t::replace);
}

}  // namespace yoke::cli
