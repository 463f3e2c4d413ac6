#include "wire_types.h"

#include <limits>

namespace yoke::daemon {

v1::Mode to_wire(Mode mode) {
  switch (mode) {
    case Mode::max_weight: return v1::MODE_MAX_WEIGHT;
    case Mode::max_cardinality: return v1::MODE_MAX_CARDINALITY;
    case Mode::perfect: return v1::MODE_PERFECT;
  }
  return v1::MODE_UNSPECIFIED;
}

std::optional<Mode> from_wire(v1::Mode mode) {
  switch (mode) {
    case v1::MODE_MAX_WEIGHT: return Mode::max_weight;
    case v1::MODE_MAX_CARDINALITY: return Mode::max_cardinality;
    case v1::MODE_PERFECT: return Mode::perfect;
    default: return std::nullopt;
  }
}

v1::PoolConfig pool_config(const Pool& pool) {
  v1::PoolConfig config;
  const PoolLimits& limits = pool.limits();
  config.set_mode(to_wire(pool.mode()));
  config.mutable_limits()->set_max_vertices(limits.max_vertices);
  config.mutable_limits()->set_max_edges(limits.max_edges);
  config.mutable_limits()->set_max_abs_weight(static_cast<std::uint64_t>(limits.max_abs_weight));
  config.set_churn_bonus(static_cast<std::uint64_t>(pool.churn_bonus()));
  return config;
}

std::unique_ptr<Pool> make_pool(const v1::PoolConfig& config) {
  const auto mode = from_wire(config.mode());
  const auto limits = from_wire(config.limits());
  const auto bonus_bound = static_cast<std::uint64_t>(std::numeric_limits<Weight>::max());
  if (!mode || !limits || config.churn_bonus() > bonus_bound) return nullptr;
  return std::make_unique<Pool>(*mode, *limits, static_cast<Weight>(config.churn_bonus()));
}

std::optional<PoolLimits> from_wire(const v1::PoolLimits& wire) {
  if (wire.max_abs_weight() > static_cast<std::uint64_t>(std::numeric_limits<Weight>::max())) {
    return std::nullopt;
  }
  PoolLimits limits;
  limits.max_vertices = wire.max_vertices();
  limits.max_edges = wire.max_edges();
  limits.max_abs_weight = static_cast<Weight>(wire.max_abs_weight());
  return limits;
}

v1::Pair to_wire(const MatchedPair& pair) {
  v1::Pair wire;
  write_wire(pair, wire);
  return wire;
}

void write_wire(const MatchedPair& pair, v1::Pair& wire) {
  wire.set_a(pair.a);
  wire.set_b(pair.b);
  wire.set_weight(pair.w);
}

v1::RepairStats to_wire(const RepairStats& stats) {
  v1::RepairStats wire;
  wire.set_events(stats.events);
  wire.set_roots(stats.roots);
  wire.set_searches(stats.searches);
  wire.set_augmentations(stats.augmentations);
  wire.set_blossoms_dissolved(stats.blossoms_dissolved);
  wire.set_vertices_touched(stats.vertices_touched);
  wire.set_initial_solve(stats.initial_solve);
  return wire;
}

v1::Event to_wire(const Event& event) {
  v1::Event wire;
  write_wire(event, wire);
  return wire;
}

v1::Event::Kind wire_kind(EventKind kind) {
  switch (kind) {
    case EventKind::add_vertex: return v1::Event::ADD_VERTEX;
    case EventKind::set_edge: return v1::Event::SET_EDGE;
    case EventKind::unset_edge: return v1::Event::UNSET_EDGE;
    case EventKind::remove_vertex: return v1::Event::REMOVE_VERTEX;
    case EventKind::hold_pair: return v1::Event::HOLD_PAIR;
    case EventKind::release_pair: return v1::Event::RELEASE_PAIR;
  }
  return v1::Event::KIND_UNSPECIFIED;
}

std::optional<EventKind> engine_kind(std::uint64_t wire_kind) {
  switch (wire_kind) {
    case v1::Event::ADD_VERTEX: return EventKind::add_vertex;
    case v1::Event::SET_EDGE: return EventKind::set_edge;
    case v1::Event::UNSET_EDGE: return EventKind::unset_edge;
    case v1::Event::REMOVE_VERTEX: return EventKind::remove_vertex;
    case v1::Event::HOLD_PAIR: return EventKind::hold_pair;
    case v1::Event::RELEASE_PAIR: return EventKind::release_pair;
    default: return std::nullopt;
  }
}

bool carries_v(EventKind kind) {
  return kind == EventKind::set_edge || kind == EventKind::unset_edge ||
         kind == EventKind::hold_pair || kind == EventKind::release_pair;
}

void write_wire(const Event& event, v1::Event& wire) {
  wire.set_kind(wire_kind(event.kind));
  wire.set_u(event.u);
  if (carries_v(event.kind)) wire.set_v(event.v);
  if (carries_w(event.kind)) wire.set_w(event.w);
}

v1::Ack batch_ack(const std::string& client_id, std::uint64_t client_batch,
                  const std::string& pool) {
  v1::Ack ack;
  ack.set_client_id(client_id);
  ack.set_client_batch(client_batch);
  ack.set_pool(pool);
  return ack;
}

v1::Ack accepted(v1::Ack ack, std::uint64_t seq, bool duplicate) {
  ack.mutable_accepted()->set_seq(seq);
  ack.mutable_accepted()->set_duplicate(duplicate);
  return ack;
}

v1::Ack refused(v1::Ack ack, v1::Error error) {
  *ack.mutable_rejected()->add_errors() = std::move(error);
  return ack;
}

v1::Error::Code to_wire(EventErrorCode code) {
  switch (code) {
    case EventErrorCode::vertex_exists: return v1::Error::VERTEX_EXISTS;
    case EventErrorCode::self_loop: return v1::Error::SELF_LOOP;
    case EventErrorCode::weight_out_of_range: return v1::Error::WEIGHT_OUT_OF_RANGE;
    case EventErrorCode::unknown_vertex: return v1::Error::UNKNOWN_VERTEX;
    case EventErrorCode::unknown_edge: return v1::Error::UNKNOWN_EDGE;
    case EventErrorCode::limit_exceeded: return v1::Error::POOL_LIMIT_EXCEEDED;
    case EventErrorCode::already_held: return v1::Error::ALREADY_HELD;
    case EventErrorCode::not_held: return v1::Error::NOT_HELD;
  }
  return v1::Error::INTERNAL;
}

v1::Error make_error(v1::Error::Code code, std::string message,
                     std::optional<std::uint32_t> event_index) {
  v1::Error error;
  error.set_code(code);
  error.set_message(std::move(message));
  if (event_index) error.set_event_index(*event_index);
  return error;
}

std::string error_code_name(v1::Error::Code code) { return v1::Error::Code_Name(code); }

}  // namespace yoke::daemon
