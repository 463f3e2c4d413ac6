// Seeded streams of pool events (engine/include/yoke/events.h) for the differential tests, the soak run and
// the benchmarks. The first batch sets the whole base graph of one family; after it, weights
// change, vertices are added with edges to vertices near them and removed, edges appear and
// vanish.
//
// Valid by construction: every event applies to the state the events before it leave, so
// Pool::check accepts every batch, and every prefix of a stream is valid too. Deterministic:
// the same spec gives the same events on every machine, and the events do not depend on the
// batch sizes (they are drawn from their own stream and only cut into batches). Cost: O(1)
// expected per event, O(degree) for a removal, O(arrival_edges) for an addition.
#pragma once

#include <cstdint>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

#include "yoke/events.h"
#include "yoke/types.h"

namespace yoke {
class Pool;
}

namespace yoke::gen {

// The base graph families of generators.h, by their `yoke gen` names.
enum class StreamFamily { city, random, dispatch, complete, stress };

// Throws std::invalid_argument for a name other than city, random, dispatch, complete, stress.
StreamFamily parse_stream_family(std::string_view name);
const char* stream_family_name(StreamFamily family);

// Relative shares of the actions a stream draws after its first batch (percentages by
// convention; any non-negative numbers with a positive sum). An action emits one event or a
// few in a row; consecutive events usually land in the same batch.
struct EventMix {
  int nudge_weight = 0;   // an existing edge's weight moves by 1..5% of the weight range
  int random_weight = 0;  // an existing edge gets a new weight, uniform over the range
  int add = 0;            // a new vertex with ~arrival_edges edges to vertices near it
  int remove = 0;         // a uniformly chosen alive vertex leaves (matched or not)
  int unset = 0;          // an existing edge is removed
  int link = 0;           // a new edge between two existing vertices near each other
  int vertex_burst = 0;   // 2..4 changes at the edges of one vertex, back to back
  int add_remove = 0;     // a vertex is added with 1..3 edges and removed right away (in the
                          // same batch unless the cut between batches falls in between)
  int set_unset = 0;      // an edge (new or existing) is set and then unset right away
  int tricky_weight = 0;  // an edge set to a weight that is easy to get wrong: 0, negative, a
                          // tie with a neighbouring edge, its own weight, or +-extreme_weight
  int re_add = 0;         // a removed vertex's key is added again: one removed long ago, or
                          // one removed and added back right away
  // Large changes, the repair's expensive cases. The aimed ones (*) look at the pool the
  // stream is fed to (EventStream::aim_at); without one they act on a random edge or vertex.
  int rise = 0;            // an edge's weight rises by 25..100% of the weight range
  int rise_tight = 0;      // * the same on a tight edge: an unmatched one at zero slack, else a
                           //   matched one
  int rise_cycle = 0;      // * the same on an edge of a blossom's cycle
  int fall_matched = 0;    // * a matched edge's weight falls by 25..100% of the range
  int remove_matched = 0;  // * a matched vertex leaves

  friend bool operator==(const EventMix&, const EventMix&) = default;
};

// 35% nudge-weight, 35% random-weight, 15% add, 15% remove: the benchmark load.
EventMix benchmark_mix();
// Every action, each often enough to show up in a few hundred events: the test load.
EventMix test_mix();
// The expensive cases and the everyday ones side by side, for the repair's tail (one action
// per commit, aimed at the pool): drifts, large rises on random, tight and blossom-cycle
// edges, matched edges that fall, new edges between existing vertices, removed edges,
// arrivals, and departures of matched and random vertices.
EventMix tail_mix();
// True when the mix holds an aimed action (*): the stream is then best fed to a pool as drawn.
bool mix_is_aimed(const EventMix& mix);

// "bench", "test", "tail", or "NAME=SHARE,..." with NAME one of nudge-weight, random-weight,
// add, remove, unset, link, vertex-burst, add-remove, set-unset, tricky-weight, re-add, rise,
// rise-tight, rise-cycle, fall-matched, remove-matched (the field names of EventMix with '-'
// for '_'; unnamed shares are 0).
// Throws std::invalid_argument naming what is wrong.
EventMix parse_mix(std::string_view text);
// The "NAME=SHARE,..." form of the non-zero shares; parse_mix reads it back.
std::string mix_text(const EventMix& mix);

struct StreamSpec {
  StreamFamily family = StreamFamily::city;
  std::size_t vertices = 1000;  // of the base graph
  int degree = 6;  // city: neighbours per point; dispatch: couriers per order; random: mean degree
  Weight min_weight = 1;  // base weights of the random and complete families
  Weight max_weight = 1000;
  std::uint64_t seed = 1;
  // Dense ids 0..n-1 for the base graph and n, n+1, ... for arrivals; or scattered 64-bit keys,
  // a quarter of them within 2^32 of 2^64-1 (the first two are 2^64-1 and 2^64-2).
  bool scrambled_keys = false;
  std::size_t events = 10000;  // after the first batch
  std::size_t batch_min = 100;  // batch sizes are uniform in [batch_min, batch_max]
  std::size_t batch_max = 100;
  EventMix mix = benchmark_mix();
  int arrival_edges = 10;
  int explicit_add_percent = 25;  // arrivals that start with `add` rather than their first `set`
  Weight extreme_weight = 0;      // > 0: some `tricky-weight` actions set +-extreme_weight
  // > 1: every weight the stream sets (the base graph's too) is rounded towards zero to a
  // multiple of it: coarse weights, so ties and near-ties everywhere.
  Weight weight_grain = 1;
  // Each batch after the first holds the events of exactly one action, and `events` counts
  // those batches (batch_min and batch_max are not used).
  bool action_batches = false;
};

// A small stream for the differential tests, with every knob varied by the seed: base size in
// [max_vertices / 4, max_vertices] (a third of that for complete graphs), batch sizes 1, 5, 100
// or uniform in 1..100 (seed % 4), tied, mixed-sign or wide weights (seed % 3), dense or
// scrambled keys, 1..10 edges per arrival, the test mix; about `commits` commits after the base
// graph's.
StreamSpec test_stream_spec(StreamFamily family, std::uint64_t seed, std::size_t max_vertices,
                            std::size_t commits);

// A stream drawn lazily, batch by batch (a soak run of millions of events never holds them all).
class EventStream {
 public:
  // Generates the base graph. Throws std::invalid_argument for a spec it cannot honour.
  explicit EventStream(const StreamSpec& spec);
  ~EventStream();
  EventStream(const EventStream&) = delete;
  EventStream& operator=(const EventStream&) = delete;

  // Replaces `batch` with the next batch: the whole base graph first (isolated base vertices as
  // `add`, every edge as `set`), then batches of batch_min..batch_max events until spec.events
  // events have followed the first batch. Returns false, with `batch` empty, when it is over.
  bool next_batch(std::vector<Event>& batch);

  // Vertices and edges of the base graph (the first batch).
  std::size_t base_vertices() const;
  std::size_t base_edges() const;

  // Aimed actions look at `pool` (nullptr: none), which the caller keeps fed: every batch
  // committed before the next is drawn. Their events then depend on the pool's state, and so
  // on the batch cuts; every event stays valid for the stream's own picture of the graph.
  void aim_at(const Pool* pool);
  // The name of the action that drew the last batch's last event (an aimed action that found
  // no target is named as the action it fell back to): with action_batches, the batch's kind.
  const char* last_action() const;

 private:
  class Builder;
  std::unique_ptr<Builder> builder_;
  std::size_t batches_ = 0;
  std::size_t events_left_ = 0;
  bool action_batches_ = false;
};

// All batches of a stream at once.
std::vector<std::vector<Event>> generate_stream(const StreamSpec& spec);

}  // namespace yoke::gen
