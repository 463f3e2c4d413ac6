// The JSON forms of the daemon's messages (yoke.v1) that `yoke watch` and `yoke query` print:
// one object per message, keys in the order written below, pairs as [a, b, weight] arrays,
// keys as unsigned and weights as signed 64-bit JSON integers, modes spelled as the rest of the
// command line spells them ("max-weight", "max-cardinality", "perfect"; null when unset).
//
//   Diff:          {"pool","seq","prev_seq","weight","pairs","no_perfect_matching",
//                   "removed":[[a,b,w],...],"added":[[a,b,w],...],
//                   "repair_us","commit_to_publish_us","publish_unix_us","stats":{RepairStats}}
//   RepairStats:   {"events","roots","searches","augmentations","blossoms_dissolved",
//                   "vertices_touched","initial_solve"}
//   Summary:       {"pool","seq","weight","pairs","vertices","edges","mode","no_perfect_matching"}
//   Mate:          {"pool","seq","vertex","mate" (null when exposed),"pair_weight" (null when
//                   exposed)}
//   Matching:      {"pool","seq","weight","pairs" (the count),"matching":[[a,b,w],...],"mode",
//                   "no_perfect_matching"}
//   Explanation:   {"pool","seq"} followed by the keys of vertex_explanation_json
//                   (explanation_text.h: the shape `yoke replay --explain --json` prints too)
//   Stats:         {"pool","seq","weight","pairs","vertices","edges","mode",
//                   "limits":{"max_vertices","max_edges","max_abs_weight"},"batches_accepted",
//                   "batches_rejected","batches_duplicate","events_applied","commits",
//                   "last_repair":{RepairStats},"last_timings":{"repair_us",
//                   "commit_to_publish_us","publish_unix_us"},"last_snapshot_seq"}
//   SnapshotTaken: {"pools":[{"pool","seq"},...],"path"}
//   Health:        {"ok","status","uptime_s","pools","daemon_version"}
//   Error:         {"code":"CODE_NAME","message", "event_index" (only when the error has one)}
#pragma once

#include <string>

#include <nlohmann/json.hpp>

#include "yoke/v1/protocol.pb.h"
#include "yoke/v1/publish.pb.h"
#include "yoke/v1/query.pb.h"

namespace yoke::cli {

// Keeps keys in insertion order, so output follows the layouts above.
using Json = nlohmann::ordered_json;

// "max-weight", "max-cardinality", "perfect"; nullptr for MODE_UNSPECIFIED or an unknown value.
const char* mode_text(yoke::v1::Mode mode);

// The code's name as the schema spells it ("OUT_OF_ORDER"), or "CODE_<n>" for a code this
// build does not know (a newer daemon).
std::string error_code_name(int code);

Json diff_json(const yoke::v1::Diff& diff);
Json summary_json(const std::string& pool, const yoke::v1::Summary& summary);
Json mate_json(const std::string& pool, const yoke::v1::Mate& mate);
Json matching_json(const std::string& pool, const yoke::v1::Matching& matching);
Json explanation_json(const std::string& pool, const yoke::v1::Explanation& explanation);
Json stats_json(const std::string& pool, const yoke::v1::Stats& stats);
Json snapshot_taken_json(const yoke::v1::SnapshotTaken& snapshot);
Json health_json(const yoke::v1::Health& health);
Json error_json(const yoke::v1::Error& error);

// The JSON of whatever a query reply holds (its pool from reply.pool()); null for an empty one.
Json query_reply_json(const yoke::v1::QueryReply& reply);

// One line of output: compact, invalid UTF-8 (a pool name is the client's bytes) replaced by
// U+FFFD instead of throwing.
std::string json_line(const Json& value);

}  // namespace yoke::cli
