#include "service_test_util.h"

#include <algorithm>
#include <iterator>
#include <map>
#include <random>
#include <set>

#include "daemon/service/batch_decoder.h"
#include "daemon/service/recovery.h"
#include "daemon/service/snapshot_capture.h"
#include "yoke/certificate.h"
#include "yoke/solve.h"
#include "tests/oracles/checked_solve.h"

namespace yoke {

void PrintTo(const MatchedPair& pair, std::ostream* out) {
  *out << "(" << pair.a << "," << pair.b << " w" << pair.w << ")";
}

}  // namespace yoke

namespace yoke::daemon::testing {

v1::Event wire_add(VertexKey u) {
  v1::Event event;
  event.set_kind(v1::Event::ADD_VERTEX);
  event.set_u(u);
  return event;
}

v1::Event wire_set(VertexKey u, VertexKey v, Weight w) {
  v1::Event event;
  event.set_kind(v1::Event::SET_EDGE);
  event.set_u(u);
  event.set_v(v);
  event.set_w(w);
  return event;
}

v1::Event wire_unset(VertexKey u, VertexKey v) {
  v1::Event event;
  event.set_kind(v1::Event::UNSET_EDGE);
  event.set_u(u);
  event.set_v(v);
  return event;
}

v1::Event wire_remove(VertexKey u) {
  v1::Event event;
  event.set_kind(v1::Event::REMOVE_VERTEX);
  event.set_u(u);
  return event;
}

v1::Event wire_hold(VertexKey u, VertexKey v) {
  v1::Event event;
  event.set_kind(v1::Event::HOLD_PAIR);
  event.set_u(u);
  event.set_v(v);
  return event;
}

v1::Event wire_release(VertexKey u, VertexKey v) {
  v1::Event event;
  event.set_kind(v1::Event::RELEASE_PAIR);
  event.set_u(u);
  event.set_v(v);
  return event;
}

v1::Event random_wire_event(std::mt19937_64& random) {
  const auto key = [&random]() -> VertexKey {
    switch (random() % 4) {
      case 0: return 0;
      case 1: return random() % 50;
      case 2: return random();
      default: return random() % 100000;
    }
  };
  const Weight w = static_cast<Weight>(random() % 2001) - 1000;
  switch (random() % 6) {
    case 0: return wire_add(key());
    case 1: return wire_set(key(), key(), random() % 5 == 0 ? 0 : w);
    case 2: return wire_unset(key(), key());
    case 3: return wire_remove(key());
    case 4: return wire_hold(key(), key());
    default: return wire_release(key(), key());
  }
}

v1::EventBatch make_batch(const std::vector<v1::Event>& events, const BatchHeader& header) {
  v1::EventBatch batch;
  batch.set_client_id(header.client_id);
  batch.set_client_batch(header.client_batch);
  batch.set_pool(header.pool);
  batch.set_after_batch(header.after_batch);
  for (const v1::Event& event : events) *batch.add_events() = event;
  return batch;
}

std::string ingest_message(const v1::EventBatch& batch, std::uint32_t version) {
  v1::IngestRequest request;
  request.set_version(version);
  *request.mutable_batch() = batch;
  return request.SerializeAsString();
}

std::string ingest_message(const std::vector<v1::Event>& events, const BatchHeader& header) {
  return ingest_message(make_batch(events, header));
}

std::string retire_message(const std::string& pool, std::uint64_t at_seq,
                           const std::string& client_id, std::uint64_t client_batch) {
  v1::IngestRequest request;
  request.set_version(1);
  v1::RetirePool& retire = *request.mutable_retire();
  retire.set_pool(pool);
  retire.set_at_seq(at_seq);
  retire.set_client_id(client_id);
  retire.set_client_batch(client_batch);
  return request.SerializeAsString();
}

std::vector<Event> engine_events(const std::vector<v1::Event>& events) {
  std::vector<Event> out;
  for (std::size_t i = 0; i < events.size(); ++i) {
    out.push_back(std::get<Event>(decode_event(events[i], static_cast<std::uint32_t>(i))));
  }
  return out;
}

PoolSettings tiny_pool_settings() {
  PoolSettings tiny;
  tiny.limits.max_vertices = 4;
  tiny.limits.max_edges = 3;
  tiny.limits.max_abs_weight = 1000;
  return tiny;
}

journal::Options fast_journal(std::uint64_t segment_bytes) {
  return journal::testing::small_segments(segment_bytes, journal::Durability::none);
}

DaemonConfig test_config(const std::filesystem::path& data_dir) {
  DaemonConfig config;
  config.data_dir = data_dir;
  config.journal = fast_journal();
  return config;
}

ServiceState fresh_state(const DaemonConfig& config) {
  return empty_service_state(config);
}

WindowResult close_window(PoolService& service) {
  WindowResult result;
  result.acks = service.seal();
  result.diffs = service.apply();
  return result;
}

ServiceHarness::ServiceHarness(DaemonConfig config) : config_(std::move(config)) {
  config_.data_dir = dir_.path();
  log_ = journal::JournalCommitLog::open(journal_dir(), config_.journal);
  service_ = std::make_unique<PoolService>(config_, fresh_state(config_), *log_);
}

std::optional<v1::Ack> ServiceHarness::offer(const std::vector<v1::Event>& events,
                                             const BatchHeader& header) {
  return offer_bytes(ingest_message(events, header));
}

std::optional<v1::Ack> ServiceHarness::offer_bytes(std::string_view message) {
  return service_->offer(next_ticket_++, message);
}

std::uint64_t ServiceHarness::snapshot(std::size_t keep) {
  SnapshotDirectory store(snapshot_dir(), keep);
  const std::uint64_t position = service_->next_journal_position();
  store.write(position, capture_snapshot(*service_));
  return position;
}

RecoveryReport ServiceHarness::restart(std::size_t keep) {
  stop();
  log_ = journal::JournalCommitLog::open(journal_dir(), config_.journal);
  const SnapshotDirectory store(snapshot_dir(), keep);
  RecoveryReport report;
  ServiceState state = recover(config_, *log_, store, report);
  service_ = std::make_unique<PoolService>(config_, std::move(state), *log_);
  return report;
}

namespace {

// The generator's picture of one pool and of its clients' batch numbers.
struct ScriptModel {
  std::set<VertexKey> alive;
  std::map<std::pair<VertexKey, VertexKey>, Weight> edges;
  std::map<std::string, std::uint64_t> last_batch;  // by client id
};

template <typename Container>
auto nth(const Container& items, std::uint64_t k) {
  auto it = items.begin();
  std::advance(it, static_cast<std::ptrdiff_t>(k % items.size()));
  return it;
}

}  // namespace

std::vector<ScriptWindow> random_script(const ScriptSpec& spec, std::uint64_t seed) {
  // Raw mt19937_64 output (fixed by the standard) with modulo: the same script everywhere.
  std::mt19937_64 random(seed);
  const auto below = [&random](std::uint64_t n) { return random() % n; };
  const std::vector<std::string> clients = {"van-1", "van-2", ""};
  std::map<std::string, ScriptModel> models;
  std::vector<ScriptWindow> windows(spec.windows);
  for (ScriptWindow& window : windows) {
    const std::size_t batches = 1 + below(spec.max_batches_per_window);
    for (std::size_t b = 0; b < batches; ++b) {
      ScriptBatch& batch = window.emplace_back();
      const std::string& pool = spec.pools[below(spec.pools.size())];
      ScriptModel& model = models[pool];
      batch.header.pool = pool == "default" && below(2) == 0 ? "" : pool;
      batch.header.client_id = clients[below(clients.size())];
      if (!batch.header.client_id.empty()) {
        std::uint64_t& last = model.last_batch[batch.header.client_id];
        if (last != 0 && below(3) == 0) batch.header.after_batch = last;
        last += 1 + below(2);  // gaps are allowed
        batch.header.client_batch = last;
      }
      const std::size_t events = 1 + below(spec.max_events_per_batch);
      while (batch.events.size() < events) {
        const std::uint64_t roll = below(100);
        if (roll < 55 || model.edges.empty()) {
          const VertexKey u = 1 + below(spec.keys);
          const VertexKey v = 1 + below(spec.keys);
          if (u == v) continue;
          const Weight w = static_cast<Weight>(below(static_cast<std::uint64_t>(spec.max_w) + 2)) - 1;
          batch.events.push_back(wire_set(u, v, w));
          model.alive.insert(u);
          model.alive.insert(v);
          model.edges[{std::min(u, v), std::max(u, v)}] = w;
        } else if (roll < 70) {
          const auto edge = nth(model.edges, random());
          batch.events.push_back(wire_unset(edge->first.second, edge->first.first));
          model.edges.erase(edge);
        } else if (roll < 82) {
          const VertexKey u = 1 + below(spec.keys);
          if (model.alive.contains(u)) continue;
          batch.events.push_back(wire_add(u));
          model.alive.insert(u);
        } else {
          if (model.alive.empty()) continue;
          const VertexKey u = *nth(model.alive, random());
          batch.events.push_back(wire_remove(u));
          model.alive.erase(u);
          std::erase_if(model.edges, [u](const auto& edge) {
            return edge.first.first == u || edge.first.second == u;
          });
        }
      }
    }
  }
  return windows;
}

::testing::AssertionResult run_script(ServiceHarness& harness,
                                      const std::vector<ScriptWindow>& windows,
                                      std::vector<WindowResult>* results) {
  for (std::size_t w = 0; w < windows.size(); ++w) {
    for (const ScriptBatch& batch : windows[w]) {
      if (auto ack = harness.offer(batch.events, batch.header)) {
        return ::testing::AssertionFailure() << "window " << w << ": batch answered at once: "
                                             << ack->ShortDebugString();
      }
    }
    WindowResult result = harness.close();
    if (result.acks.size() != windows[w].size()) {
      return ::testing::AssertionFailure() << "window " << w << ": " << result.acks.size()
                                           << " acks for " << windows[w].size() << " batches";
    }
    for (const auto& [ticket, ack] : result.acks) {
      if (!ack.has_accepted() || ack.accepted().duplicate()) {
        return ::testing::AssertionFailure() << "window " << w << ": " << ack.ShortDebugString();
      }
    }
    if (results != nullptr) results->push_back(std::move(result));
  }
  return ::testing::AssertionSuccess();
}

::testing::AssertionResult pool_certified(const Pool& pool) {
  const PoolExport exported = pool.export_certified();
  const CheckResult check = check_certificate(exported.graph, exported.certificate);
  if (!check.ok) return ::testing::AssertionFailure() << "certificate fails: " << check.failure;

  // The certified matching plus the held pairs (fixed, outside the certificate: PoolExport) is
  // the pool's matching, with the pool's weight and pairs.
  const std::vector<Vertex>& mate = exported.certificate.mate;
  Weight weight = 0;
  std::size_t pairs = 0;
  Weight held_weight = 0;
  std::set<std::pair<VertexKey, VertexKey>> held;
  for (const MatchedPair& pair : exported.held) {
    held_weight += pair.w;
    held.emplace(pair.a, pair.b);
  }
  weight += held_weight;
  pairs += held.size();
  for (EdgeIndex e = 0; e < exported.graph.edge_slots(); ++e) {
    if (!exported.graph.is_live(e)) continue;
    const Edge& edge = exported.graph.edge(e);
    if (mate[edge.a] == edge.b) {
      weight += edge.w;
      ++pairs;
    }
  }
  if (weight != pool.weight() || pairs != pool.pairs()) {
    return ::testing::AssertionFailure() << "certified matching has weight " << weight << " and "
                                         << pairs << " pairs; the pool says " << pool.weight()
                                         << " and " << pool.pairs();
  }
  std::map<VertexKey, Vertex> dense;
  for (std::size_t i = 0; i < exported.keys.size(); ++i) {
    dense[exported.keys[i]] = static_cast<Vertex>(i);
  }
  for (const MatchedPair& pair : pool.matching()) {
    if (held.contains({pair.a, pair.b})) continue;
    if (mate[dense.at(pair.a)] != dense.at(pair.b)) {
      return ::testing::AssertionFailure()
             << "pair " << pair.a << "-" << pair.b << " is not in the certified matching";
    }
  }

  // Source: the engine's static solve of the same graph, checked by the certificate checker.
  SolveResult fresh;
  if (auto solved = oracle::solve_checked(exported.graph, pool.mode(), fresh); !solved) {
    return solved;
  }
  if (fresh.weight + held_weight != pool.weight()) {
    return ::testing::AssertionFailure() << "static solve weight " << fresh.weight
                                         << " (+ held " << held_weight << ") != pool weight "
                                         << pool.weight();
  }
  if (pool.mode() != Mode::max_weight && fresh.pairs + held.size() != pool.pairs()) {
    return ::testing::AssertionFailure() << "static solve pairs " << fresh.pairs
                                         << " != pool pairs " << pool.pairs();
  }
  return ::testing::AssertionSuccess();
}

void PrintTo(const PoolView& view, std::ostream* out) {
  *out << "{seq " << view.seq << ", incarnation " << view.incarnation << ", weight " << view.weight << ", pairs " << view.pairs
       << ", vertices " << view.vertices << ", edges " << view.edges << ", matching";
  for (const MatchedPair& pair : view.matching) {
    *out << " ";
    yoke::PrintTo(pair, out);
  }
  *out << "}";
}

PoolView view_of(PoolService& service, const std::string& pool_name) {
  PoolView view;
  const Pool* pool = service.registry().find(pool_name);
  if (pool == nullptr) return view;
  if (const PoolProgress* progress = service.progress(pool_name)) {
    view.seq = progress->seq;
    view.incarnation = progress->incarnation;
  }
  view.weight = pool->weight();
  view.pairs = pool->pairs();
  view.vertices = pool->vertex_count();
  view.edges = pool->edge_count();
  view.matching = pool->matching();
  return view;
}

std::vector<v1::JournalRecord> journal_records(const std::filesystem::path& journal_dir) {
  std::vector<v1::JournalRecord> records;
  journal::Reader reader = journal::Reader::from_start(journal_dir);
  while (auto record = reader.next()) {
    v1::JournalRecord& parsed = records.emplace_back();
    EXPECT_TRUE(parsed.ParseFromArray(record->payload.data(),
                                      static_cast<int>(record->payload.size())));
  }
  return records;
}

}  // namespace yoke::daemon::testing
