#include "query_handler.h"

#include <algorithm>
#include <exception>
#include <optional>

#include "daemon/pools/pool_names.h"
#include "wire_types.h"

namespace yoke::daemon {
namespace {

v1::QueryReply error_reply(v1::Error::Code code, std::string message) {
  v1::QueryReply reply;
  *reply.mutable_error() = make_error(code, std::move(message));
  return reply;
}

// An error about the pool the request names, which the reply names too.
v1::QueryReply pool_error(v1::Error::Code code, std::string message, const std::string& pool) {
  v1::QueryReply reply = error_reply(code, std::move(message));
  reply.set_pool(pool);
  return reply;
}

std::string kind_name(const v1::QueryRequest& request) {
  switch (request.kind_case()) {
    case v1::QueryRequest::kSummary: return "summary";
    case v1::QueryRequest::kMate: return "mate";
    case v1::QueryRequest::kMatching: return "matching";
    case v1::QueryRequest::kExplain: return "explain";
    case v1::QueryRequest::kStats: return "stats";
    case v1::QueryRequest::kSnapshot: return "snapshot";
    case v1::QueryRequest::kHealth: return "health";
    default: return "unknown";
  }
}

}  // namespace

QueryHandler::QueryHandler(PoolService& service, std::size_t max_message_bytes,
                           SnapshotNow snapshot_now, HealthNow health_now)
    : service_(service),
      max_message_bytes_(max_message_bytes),
      snapshot_now_(std::move(snapshot_now)),
      health_now_(std::move(health_now)) {}

std::string QueryHandler::handle(std::string_view message, std::string* kind) {
  v1::QueryReply reply;
  v1::QueryRequest request;
  std::string asked;
  if (message.size() > max_message_bytes_) {
    asked = "oversized";
    reply = error_reply(v1::Error::OVERSIZED_MESSAGE,
                        "message of " + std::to_string(message.size()) +
                            " bytes exceeds the limit of " + std::to_string(max_message_bytes_));
  } else if (!request.ParseFromArray(message.data(), static_cast<int>(message.size()))) {
    asked = "malformed";
    reply = error_reply(v1::Error::MALFORMED_MESSAGE, "the message is not a yoke.v1.QueryRequest");
  } else if (request.version() != v1::PROTOCOL_VERSION_1) {
    asked = kind_name(request);
    reply = error_reply(v1::Error::UNSUPPORTED_VERSION,
                        "protocol version " + std::to_string(request.version()) +
                            " is not spoken here; this daemon speaks version 1");
    reply.set_request_id(request.request_id());
  } else {
    asked = kind_name(request);
    try {
      reply = answer(request);
    } catch (const std::exception& error) {
      reply = error_reply(v1::Error::INTERNAL, error.what());
    }
    reply.set_request_id(request.request_id());
  }
  reply.set_version(v1::PROTOCOL_VERSION_1);
  if (kind != nullptr) *kind = std::move(asked);
  return reply.SerializeAsString();
}

std::optional<QueryHandler::PoolRead> QueryHandler::pool_read_by(std::string_view message) {
  v1::QueryRequest request;
  if (!request.ParseFromArray(message.data(), static_cast<int>(message.size())) ||
      request.version() != v1::PROTOCOL_VERSION_1) {
    return std::nullopt;
  }
  switch (request.kind_case()) {
    case v1::QueryRequest::kSummary:
    case v1::QueryRequest::kMate:
    case v1::QueryRequest::kMatching:
    case v1::QueryRequest::kStats: return PoolRead{resolve_pool_name(request.pool()), false};
    case v1::QueryRequest::kExplain: return PoolRead{resolve_pool_name(request.pool()), true};
    default: return std::nullopt;
  }
}

v1::QueryReply QueryHandler::answer(const v1::QueryRequest& request) {
  if (request.kind_case() == v1::QueryRequest::kHealth) {
    v1::QueryReply reply;
    *reply.mutable_health() = health_now_();
    return reply;
  }
  if (request.kind_case() == v1::QueryRequest::KIND_NOT_SET) {
    return error_reply(v1::Error::UNKNOWN_MESSAGE_KIND,
                       "the request carries no kind this daemon knows");
  }
  const std::string name = resolve_pool_name(request.pool());
  const bool about_one_pool =
      request.kind_case() != v1::QueryRequest::kSnapshot || !request.snapshot().all_pools();
  if (about_one_pool) {
    // A name no pool can have is told apart from a pool that is not there, as a batch's is.
    if (auto problem = pool_name_problem(name)) {
      return pool_error(v1::Error::UNKNOWN_POOL, std::move(*problem), name);
    }
    if (auto not_here = service_.routing().refusal(name, Asked::query)) {
      v1::QueryReply reply;
      *reply.mutable_error() = std::move(*not_here);
      reply.set_pool(name);
      return reply;
    }
  }
  if (request.kind_case() == v1::QueryRequest::kSnapshot) {
    if (!request.snapshot().all_pools() && service_.progress(name) == nullptr) {
      return pool_error(v1::Error::UNKNOWN_POOL, "there is no pool " + name, name);
    }
    v1::QueryReply reply;
    reply.set_pool(name);
    *reply.mutable_snapshot() = snapshot_now_(request.snapshot().all_pools(), name);
    if (!request.snapshot().all_pools() && reply.snapshot().pools_size() == 0) {
      // The snapshot settles the open window first: a retirement in it took the pool away.
      return pool_error(v1::Error::UNKNOWN_POOL,
                        "there is no pool " + name + " (retired before the snapshot was taken)",
                        name);
    }
    return reply;
  }
  Pool* pool = service_.registry().find(name);
  const PoolProgress* progress = service_.progress(name);
  if (pool == nullptr || progress == nullptr) {
    return pool_error(v1::Error::UNKNOWN_POOL, "there is no pool " + name, name);
  }

  v1::QueryReply reply;
  reply.set_pool(name);
  const auto unknown_vertex = [&](std::uint64_t vertex) {
    return pool_error(v1::Error::UNKNOWN_VERTEX,
                      "pool " + name + " holds no vertex " + std::to_string(vertex), name);
  };
  switch (request.kind_case()) {
    case v1::QueryRequest::kSummary: {
      v1::Summary& summary = *reply.mutable_summary();
      summary.set_seq(progress->seq);
      summary.set_weight(pool->weight());
      summary.set_pairs(pool->pairs());
      summary.set_vertices(pool->vertex_count());
      summary.set_edges(pool->edge_count());
      summary.set_mode(to_wire(pool->mode()));
      summary.set_no_perfect_matching(progress->no_perfect_matching);
      return reply;
    }
    case v1::QueryRequest::kMate: {
      const std::uint64_t vertex = request.mate().vertex();
      if (!pool->has_vertex(vertex)) return unknown_vertex(vertex);
      v1::Mate& mate = *reply.mutable_mate();
      mate.set_seq(progress->seq);
      mate.set_vertex(vertex);
      // pair_of, not explain: no prices, so O(degree) in every pool (an explanation of an odd
      // max-cardinality pool costs a search, docs/mathematics.md §9).
      if (const std::optional<MatchedPair> pair = pool->pair_of(vertex)) {
        mate.set_mate(pair->b);
        mate.set_pair_weight(pair->w);
      }
      return reply;
    }
    case v1::QueryRequest::kMatching: {
      v1::Matching& matching = *reply.mutable_matching();
      matching.set_seq(progress->seq);
      matching.set_weight(pool->weight());
      for (const MatchedPair& pair : pool->matching()) *matching.add_matching() = to_wire(pair);
      matching.set_mode(to_wire(pool->mode()));
      matching.set_no_perfect_matching(progress->no_perfect_matching);
      matching.set_incarnation(progress->incarnation);
      return reply;
    }
    case v1::QueryRequest::kExplain: {
      const std::uint64_t vertex = request.explain().vertex();
      std::uint32_t limit = request.explain().max_alternatives();
      if (limit == 0) limit = kDefaultAlternatives;
      limit = std::min(limit, kMostAlternatives);
      const auto explanation = pool->explain(vertex, limit);
      if (!explanation) return unknown_vertex(vertex);
      v1::Explanation& explain = *reply.mutable_explain();
      explain.set_seq(progress->seq);
      explain.set_vertex(vertex);
      if (explanation->mate) {
        explain.set_mate(*explanation->mate);
        explain.set_pair_weight(explanation->pair_weight);
      }
      explain.set_pair_bonus(explanation->pair_bonus);
      explain.set_held(explanation->held);
      explain.set_dual_x2(explanation->dual2);
      explain.set_weight_offset(explanation->weight_offset);
      for (const Alternative& alternative : explanation->alternatives) {
        v1::Alternative& wire = *explain.add_alternatives();
        wire.set_other(alternative.other);
        wire.set_weight(alternative.w);
        wire.set_slack_x2(alternative.slack2);
        if (alternative.other_mate) wire.set_other_mate(*alternative.other_mate);
      }
      return reply;
    }
    case v1::QueryRequest::kStats: {
      v1::Stats& stats = *reply.mutable_stats();
      stats.set_seq(progress->seq);
      stats.set_weight(pool->weight());
      stats.set_pairs(pool->pairs());
      stats.set_vertices(pool->vertex_count());
      stats.set_edges(pool->edge_count());
      *stats.mutable_config() = pool_config(*pool);
      stats.set_batches_accepted(progress->batches_accepted);
      stats.set_batches_rejected(progress->batches_rejected);
      stats.set_batches_duplicate(progress->batches_duplicate);
      stats.set_events_applied(progress->events_applied);
      stats.set_commits(progress->commits);
      *stats.mutable_last_repair() = to_wire(progress->last_repair);
      *stats.mutable_last_timings() = progress->last_timings;
      stats.set_last_snapshot_seq(progress->last_snapshot_seq);
      return reply;
    }
    default:
      return error_reply(v1::Error::UNKNOWN_MESSAGE_KIND,
                         "the request carries no kind this daemon knows");
  }
}

}  // namespace yoke::daemon
