// libFuzzer target: the daemon's ingest and query path, as yoked runs it minus the sockets.
//
// The input is a script of framed messages: a tag byte, then for tags 0-2 a length byte and that
// many bytes (fewer at the end of the input).
//   tag % 4 == 0 or 1: an ingest message, offered to the PoolService;
//   tag % 4 == 2:      a query message, answered by the QueryHandler;
//   tag % 4 == 3:      close the window: seal() into the journal, then apply().
// The window is closed at the end as well, and the whole input also goes once through
// decode_ingest (and read_batch_envelope and read_plain_batch, which must agree with it) and
// the QueryHandler as a single message.
//
// Each input gets a fresh PoolService (so a crash replays from its input alone) over one journal
// in a temporary directory that lives as long as the process. Every reply is held to
// service_model.h: a refusal names a code the model allows and changes no pool, acceptances get
// the pool's next seq, retries their batch's seq, and after each commit the pool's graph is the
// model's, its held pairs are matched, its certificate holds and, on up to 12 vertices, its
// optimum is the brute-force one (around the held pairs).
// A violation prints what failed and traps.

#include <unistd.h>

#include <algorithm>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <map>
#include <memory>
#include <optional>
#include <set>
#include <string>
#include <string_view>
#include <utility>
#include <variant>
#include <vector>

#include <google/protobuf/stubs/logging.h>

#include "daemon/journal/journal_commit_log.h"
#include "daemon/service/batch_decoder.h"
#include "daemon/service/ingest_envelope.h"
#include "daemon/service/plain_batch.h"
#include "daemon/pools/pool_names.h"
#include "daemon/service/pool_service.h"
#include "daemon/service/wire_types.h"
#include "daemon/service/query_handler.h"
#include "daemon/service/recovery.h"
#include "yoke/certificate.h"
#include "service_model.h"

namespace {

using namespace yoke;
using namespace yoke::daemon;
using fuzz::EdgeKey;

[[noreturn]] void violated(const char* what, int line, const std::string& detail = {}) {
  std::fprintf(stderr, "ingest_fuzz: invariant violated at line %d: %s %s\n", line, what,
               detail.c_str());
  __builtin_trap();
}
// Variadic: conditions hold braced initialisers with commas.
#define REQUIRE(...)                                    \
  do {                                                  \
    if (!(__VA_ARGS__)) violated(#__VA_ARGS__, __LINE__); \
  } while (0)

constexpr std::size_t kMostMessages = 64;     // per input: keeps each run in the milliseconds
constexpr std::size_t kBruteForceVertices = 12;

// Small pools, so that every commit can be checked in full; one per mode, with the engine's
// widest weight bound (0) and narrow ones that make ties common, and one ("w") whose limits a
// few events reach, since the fuzzer finds no gradient towards a limit of dozens of edges.
DaemonConfig make_config() {
  DaemonConfig config;
  config.journal.durability = journal::Durability::none;
  config.journal.segment_bytes = std::uint64_t{1} << 20;
  config.limits.max_message_bytes = 200;  // below the 255 a frame can carry: OVERSIZED is reachable
  config.limits.max_events_per_batch = 24;
  config.limits.max_pools = 4;  // the three declared (reserved), one other, then refusals
  config.pool_defaults = {Mode::max_weight, {16, 40, 0}};
  config.pools["c"] = {Mode::max_cardinality, {12, 30, 0}};
  config.pools["p"] = {Mode::perfect, {10, 20, 1000}};
  config.pools["w"] = {Mode::max_weight, {6, 5, 50}};
  return config;
}

std::filesystem::path g_temp_dir;  // removed at exit

struct Fixture {
  DaemonConfig config = make_config();
  std::unique_ptr<journal::JournalCommitLog> log;  // lent to each input's PoolService
};

Fixture& fixture() {
  static Fixture* const instance = [] {
    std::string dir = (std::filesystem::temp_directory_path() / "yoke-fuzz-XXXXXX").string();
    if (mkdtemp(dir.data()) == nullptr) {
      std::perror("ingest_fuzz: mkdtemp");
      std::abort();
    }
    g_temp_dir = dir;
    std::atexit([] {
      std::error_code ignored;
      std::filesystem::remove_all(g_temp_dir, ignored);
    });
    // protobuf logs every string field that is not UTF-8 to stderr: noise here, and slow.
    google::protobuf::SetLogHandler(nullptr);
    auto* fixture = new Fixture;  // never freed: lives as long as the fuzzer
    fixture->log = journal::JournalCommitLog::open(g_temp_dir / "journal", fixture->config.journal);
    return fixture;
  }();
  return *instance;
}

const PoolSettings& settings_for(const DaemonConfig& config, const std::string& pool) {
  const auto it = config.pools.find(pool);
  return it == config.pools.end() ? config.pool_defaults : it->second;
}

bool same_message(const google::protobuf::MessageLite& a, const google::protobuf::MessageLite& b) {
  return a.SerializeAsString() == b.SerializeAsString();
}

v1::Ack accepted_ack(const DecodedBatch& batch, std::uint64_t seq, bool duplicate) {
  v1::Ack ack;
  ack.set_client_id(batch.client_id);
  ack.set_client_batch(batch.client_batch);
  ack.set_pool(batch.pool);
  ack.mutable_accepted()->set_seq(seq);
  ack.mutable_accepted()->set_duplicate(duplicate);
  return ack;
}

// What the model knows of one pool.
struct PoolModel {
  PoolLimits limits;
  Mode mode = Mode::max_weight;
  fuzz::ModelGraph committed;
  std::map<EdgeKey, Weight> matching;  // followed through the diffs alone
  std::uint64_t seq = 0;
  bool exists = false;  // once a batch of it was accepted: a refusal creates no pool
  // The window, from the first batch offered to the pool since the last commit.
  bool open = false;
  fuzz::ModelGraph window;
  fuzz::WindowCount count;
  std::uint64_t seq_before = 0;
  std::uint64_t next_seq = 0;
  std::size_t batches = 0;  // accepted in this window
  bool retiring = false;    // retired in this window (RetirePool): gone at its commit
};

// The pools' sizes, to show that a refusal changed none of them.
using Fingerprint = std::map<std::string, std::vector<std::uint64_t>>;

class Run {
 public:
  explicit Run(Fixture& fixture)
      : fixture_(fixture),
        service_(fixture.config, initial_state(fixture), *fixture.log),
        queries_(
            service_, fixture.config.limits.max_message_bytes,
            [](bool, const std::string&) { return v1::SnapshotTaken(); },
            [] {
              v1::Health health;
              health.set_ok(true);
              health.set_status("ok");
              return health;
            }) {}

  // Leaves the journal to the next input without the segments this one filled.
  ~Run() { fixture_.log->drop_before(fixture_.log->end_position()); }

  void ingest(std::string_view message);
  void close_window();
  void query(std::string_view message);
  void check_pool_names();

 private:
  static ServiceState initial_state(const Fixture& fixture) {
    return empty_service_state(fixture.config);
  }
  PoolModel& model_of(const std::string& name);
  static void open_window(PoolModel& pool);
  bool declared(const std::string& name) const { return fixture_.config.pools.contains(name); }
  bool pool_has_a_slot(const std::string& name) const;
  Fingerprint fingerprint();
  void check_unchanged(const Fingerprint& before, std::size_t window_events_before);
  void check_pool(const std::string& name);

  Fixture& fixture_;
  PoolService service_;
  QueryHandler queries_;
  Ticket next_ticket_ = 1;
  std::map<std::string, PoolModel> pools_;  // every pool a decoded batch named
  std::size_t existing_undeclared_ = 0;  // pools held that the config does not declare
  // (pool, client) -> every batch number applied -> its seq.
  std::map<std::pair<std::string, std::string>, std::map<std::uint64_t, std::uint64_t>> ledger_;
  std::map<Ticket, v1::Ack> waiting_;  // replies due at seal()
  std::vector<std::string> after_retirement_;  // sent behind a retirement: once it is applied
};

void Run::open_window(PoolModel& pool) {
  if (pool.open) return;
  pool.open = true;
  pool.window = pool.committed;
  pool.count = {pool.committed.edges.size(), 0, 0};
  pool.seq_before = pool.seq;
  pool.next_seq = pool.seq + 1;
}

PoolModel& Run::model_of(const std::string& name) {
  auto [it, inserted] = pools_.try_emplace(name);
  if (inserted) {
    const PoolSettings& settings = settings_for(fixture_.config, name);
    it->second.mode = settings.mode;
    it->second.limits = settings.limits;
    if (it->second.limits.max_abs_weight == 0) {
      it->second.limits.max_abs_weight =
          fuzz::largest_weight(settings.mode, settings.limits.max_vertices);
    }
  }
  return it->second;
}

Fingerprint Run::fingerprint() {
  Fingerprint prints;
  for (const std::string& name : service_.registry().names()) {
    const Pool& pool = *service_.registry().find(name);
    prints[name] = {static_cast<std::uint64_t>(pool.weight()), pool.pairs(), pool.vertex_count(),
                    pool.edge_count(), pool.commits()};
  }
  return prints;
}

// A refused or retried batch changes no pool, creates none, and adds nothing to the window.
void Run::check_unchanged(const Fingerprint& before, std::size_t window_events_before) {
  REQUIRE(fingerprint() == before);
  REQUIRE(service_.window_events() == window_events_before);
}

// The cap on pools (InputLimits::max_pools): an existing pool has its slot, a declared one its
// reserved slot, the others share the rest.
bool Run::pool_has_a_slot(const std::string& name) const {
  const auto it = pools_.find(name);
  if ((it != pools_.end() && it->second.exists) || declared(name)) return true;
  const std::size_t undeclared_slots =
      fixture_.config.limits.max_pools - fixture_.config.pools.size();
  return existing_undeclared_ < undeclared_slots;
}

// The service holds exactly the pools that accepted a batch.
void Run::check_pool_names() {
  std::vector<std::string> expected;
  for (const auto& [name, pool] : pools_) {
    if (pool.exists) expected.push_back(name);
  }
  REQUIRE(service_.registry().names() == expected);
}

void Run::ingest(std::string_view message) {
  const Ticket ticket = next_ticket_++;
  const Fingerprint before = fingerprint();
  const std::size_t window_events_before = service_.window_events();
  DecodeResult mine = decode_ingest(message, fixture_.config.limits);
  if (const auto* named = std::get_if<DecodedBatch>(&mine)) {
    // Behind a retirement not yet applied: the service holds it and offers it once the window
    // is (pool_retire_test checks the holding); the model sends it then, after the commit.
    if (const auto it = pools_.find(named->pool); it != pools_.end() && it->second.retiring) {
      after_retirement_.emplace_back(message);
      return;
    }
    // So is a batch that would make a pool while every slot is taken, behind any retirement not
    // yet applied: it waits for the slot that may free (ingest.proto, RetirePool).
    const bool retirement_pending = std::any_of(
        pools_.begin(), pools_.end(), [](const auto& entry) { return entry.second.retiring; });
    if (!named->retire && retirement_pending && !pool_has_a_slot(named->pool)) {
      after_retirement_.emplace_back(message);
      return;
    }
  }
  const std::optional<v1::Ack> got = service_.offer(ticket, message);

  if (const auto* refusal = std::get_if<v1::Ack>(&mine)) {
    REQUIRE(refusal->has_rejected() && refusal->rejected().errors_size() > 0);
    REQUIRE(got && same_message(*got, *refusal));
    check_unchanged(before, window_events_before);
    return;
  }
  const DecodedBatch& batch = std::get<DecodedBatch>(mine);
  REQUIRE(!pool_name_problem(batch.pool));
  PoolModel& pool = model_of(batch.pool);

  const auto expect_refusal = [&](const std::vector<v1::Error::Code>& codes,
                                  std::optional<std::uint32_t> index) {
    REQUIRE(got && got->has_rejected() && got->rejected().errors_size() > 0);
    REQUIRE(got->client_id() == batch.client_id && got->client_batch() == batch.client_batch &&
            got->pool() == batch.pool);
    const v1::Error& first = got->rejected().errors(0);
    if (std::find(codes.begin(), codes.end(), first.code()) == codes.end()) {
      violated("the refusal names a code the model does not allow", __LINE__,
               v1::Error::Code_Name(first.code()) + ": " + first.message());
    }
    REQUIRE(first.has_event_index() == index.has_value());
    if (index) REQUIRE(first.event_index() == *index);
    check_unchanged(before, window_events_before);
  };

  // Retiring a pool (ingest.proto, RetirePool): one that exists, at at_seq when given.
  if (batch.retire) {
    if (!pool.exists) {
      expect_refusal({v1::Error::UNKNOWN_POOL}, std::nullopt);
      return;
    }
    const std::uint64_t last = pool.open ? pool.next_seq - 1 : pool.seq;
    if (batch.at_seq != 0 && batch.at_seq != last) {
      expect_refusal({v1::Error::SEQ_MISMATCH}, std::nullopt);
      return;
    }
    if (got) violated("the model retires a pool the service did not", __LINE__, got->DebugString());
    open_window(pool);
    ++pool.batches;
    pool.retiring = true;
    waiting_.emplace(ticket, accepted_ack(batch, pool.next_seq++, false));
    REQUIRE(service_.retire_waiting());
    REQUIRE(service_.window_events() == window_events_before);
    return;
  }

  // The cap on pools (InputLimits::max_pools): declared pools have their slots reserved, the
  // others share the rest. The service applies it before the retry rules; a batch refused by
  // both may name either.
  if (!pool_has_a_slot(batch.pool)) {
    std::vector<v1::Error::Code> codes = {v1::Error::UNKNOWN_POOL};
    if (!batch.client_id.empty() && batch.after_batch != 0) {
      codes.push_back(v1::Error::OUT_OF_ORDER);
    }
    expect_refusal(codes, std::nullopt);
    return;
  }

  // The retry rules (events.proto, EventBatch): only batches that name their client. An input
  // holds at most kMostMessages batches, no more than the ledger remembers per client by
  // default, and no window closes past the idle horizon: every applied batch is remembered.
  if (!batch.client_id.empty()) {
    const auto found = ledger_.find({batch.pool, batch.client_id});
    const std::map<std::uint64_t, std::uint64_t>* applied =
        found == ledger_.end() ? nullptr : &found->second;
    if (applied != nullptr && batch.client_batch <= applied->rbegin()->first) {
      const auto same = applied->find(batch.client_batch);
      if (same == applied->end()) {
        // Never applied: known so from the client's first batch in the pool on.
        expect_refusal({batch.client_batch > applied->begin()->first ? v1::Error::BATCH_SKIPPED
                                                                     : v1::Error::BATCH_FORGOTTEN},
                       std::nullopt);
        REQUIRE(got->rejected().errors(0).last_batch() == applied->rbegin()->first);
        return;
      }
      const v1::Ack ack = accepted_ack(batch, same->second, true);
      if (same->second > pool.seq) {  // still in the window: answered once durable
        REQUIRE(!got);
        waiting_.emplace(ticket, ack);
      } else {
        REQUIRE(got && same_message(*got, ack));
      }
      check_unchanged(before, window_events_before);
      return;
    }
    if (batch.after_batch != 0 &&
        (applied == nullptr || applied->rbegin()->first != batch.after_batch)) {
      expect_refusal({v1::Error::OUT_OF_ORDER}, std::nullopt);
      return;
    }
  }

  // The pool's checks, against the pool plus the window's accepted batches.
  open_window(pool);
  fuzz::ModelGraph graph = pool.window;
  fuzz::WindowCount count = pool.count;
  fuzz::BatchLimits limits(pool.limits);
  for (std::size_t i = 0; i < batch.events.size(); ++i) {
    const auto codes = fuzz::apply_event(graph, count, pool.limits, batch.events[i]);
    if (!codes.empty()) {
      expect_refusal(codes, static_cast<std::uint32_t>(i));
      return;
    }
    limits.after_event(i, graph, count);
  }
  if (const auto at = limits.refused_at()) {
    expect_refusal({v1::Error::POOL_LIMIT_EXCEEDED}, static_cast<std::uint32_t>(*at));
    return;
  }
  if (got) {
    violated("the model accepts a batch the service refused", __LINE__, got->DebugString());
  }
  if (!pool.exists) {
    pool.exists = true;
    if (!declared(batch.pool)) ++existing_undeclared_;
  }
  const Pool* held = service_.registry().find(batch.pool);
  REQUIRE(held != nullptr && held->limits().max_abs_weight == pool.limits.max_abs_weight);
  pool.window = std::move(graph);
  pool.count = count;
  const std::uint64_t seq = pool.next_seq++;
  ++pool.batches;
  if (!batch.client_id.empty()) ledger_[{batch.pool, batch.client_id}][batch.client_batch] = seq;
  waiting_.emplace(ticket, accepted_ack(batch, seq, false));
  REQUIRE(service_.window_events() == window_events_before + batch.events.size());
}

void Run::close_window() {
  const std::vector<std::pair<Ticket, v1::Ack>> replies = service_.seal();
  REQUIRE(replies.size() == waiting_.size());
  for (const auto& [ticket, ack] : replies) {
    const auto it = waiting_.find(ticket);
    REQUIRE(it != waiting_.end());
    if (!same_message(ack, it->second)) {
      violated("seal() acknowledged other than expected", __LINE__,
               ack.DebugString() + " expected " + it->second.DebugString());
    }
    waiting_.erase(it);
  }
  REQUIRE(service_.window_empty() && service_.window_events() == 0);

  const std::vector<v1::Diff> diffs = service_.apply();
  auto diff = diffs.begin();
  for (auto entry = pools_.begin(); entry != pools_.end();) {  // the diffs come in name order too
    const std::string& name = entry->first;
    PoolModel& pool = entry->second;
    const bool committed = pool.batches > 0;
    pool.open = false;
    pool.batches = 0;
    if (!committed) {
      ++entry;
      continue;
    }
    REQUIRE(diff != diffs.end() && diff->pool() == name);
    REQUIRE(diff->prev_seq() == pool.seq_before && diff->seq() == pool.next_seq - 1);
    REQUIRE(diff->retired() == pool.retiring);
    if (pool.retiring) {
      // Its last diff removes every pair it held; then nothing of it is left.
      std::map<EdgeKey, Weight> removed;
      for (const v1::Pair& pair : diff->removed()) removed.emplace(EdgeKey{pair.a(), pair.b()}, pair.weight());
      REQUIRE(removed == pool.matching && diff->added_size() == 0);
      REQUIRE(diff->weight() == 0 && diff->pairs() == 0);
      REQUIRE(service_.registry().find(name) == nullptr && service_.progress(name) == nullptr);
      REQUIRE(service_.ledger().clients_of(name).empty());
      std::erase_if(ledger_, [&name](const auto& mark) { return mark.first.first == name; });
      if (!declared(name)) --existing_undeclared_;
      entry = pools_.erase(entry);
      ++diff;
      continue;
    }
    // The matching as the diffs tell it: removed pairs carry their weight before the commit.
    for (const v1::Pair& pair : diff->removed()) {
      const auto it = pool.matching.find({pair.a(), pair.b()});
      REQUIRE(it != pool.matching.end() && it->second == pair.weight());
      pool.matching.erase(it);
    }
    for (const v1::Pair& pair : diff->added()) {
      REQUIRE(pair.a() < pair.b());
      const auto edge = pool.window.edges.find({pair.a(), pair.b()});
      REQUIRE(edge != pool.window.edges.end() && edge->second == pair.weight());
      REQUIRE(pool.matching.emplace(edge->first, pair.weight()).second);
    }
    pool.committed = std::move(pool.window);
    pool.seq = diff->seq();
    // Pairs that stayed matched take their edges' new weights.
    Weight total = 0;
    for (auto& [key, w] : pool.matching) {
      const auto edge = pool.committed.edges.find(key);
      REQUIRE(edge != pool.committed.edges.end());
      w = edge->second;
      total += w;
    }
    REQUIRE(diff->weight() == total && diff->pairs() == pool.matching.size());
    check_pool(name);
    ++diff;
    ++entry;
  }
  REQUIRE(diff == diffs.end());
  for (const std::string& message : std::exchange(after_retirement_, {})) ingest(message);
}

// After a commit: the pool holds the model's graph and the diffs' matching with every held pair
// in it, its certificate holds, and on a few vertices its optimum is the brute-force one.
void Run::check_pool(const std::string& name) {
  const PoolModel& model = pools_.at(name);
  const Pool& pool = *service_.registry().find(name);
  const PoolProgress* progress = service_.progress(name);
  REQUIRE(progress != nullptr && progress->seq == model.seq);
  REQUIRE(pool.vertex_count() == model.committed.alive.size());
  REQUIRE(pool.edge_count() == model.committed.edges.size());

  std::map<EdgeKey, Weight> listed;
  Weight total = 0;
  for (const MatchedPair& pair : pool.matching()) {
    REQUIRE(pair.a < pair.b && listed.emplace(EdgeKey{pair.a, pair.b}, pair.w).second);
    total += pair.w;
  }
  REQUIRE(listed == model.matching);
  REQUIRE(pool.pairs() == listed.size() && pool.weight() == total);
  // Every held pair is matched (engine/include/yoke/events.h, hold_pair).
  for (const auto& [a, b] : model.committed.held) {
    if (a < b) REQUIRE(listed.count(EdgeKey{a, b}) == 1);
  }

  // The export leaves held vertices and their edges out: they are fixed, not optimised.
  const PoolExport exported = pool.export_certified();
  const std::size_t n = exported.keys.size();
  std::set<VertexKey> optimised = model.committed.alive;
  std::map<EdgeKey, Weight> optimised_edges = model.committed.edges;
  for (const auto& [a, b] : model.committed.held) {
    optimised.erase(a);
    std::erase_if(optimised_edges, [a = a](const auto& edge) {
      return edge.first.first == a || edge.first.second == a;
    });
  }
  REQUIRE(exported.held.size() * 2 == model.committed.held.size());
  REQUIRE(std::set<VertexKey>(exported.keys.begin(), exported.keys.end()) == optimised);
  REQUIRE(n == optimised.size());
  std::map<EdgeKey, Weight> edges;
  for (EdgeIndex e = 0; e < exported.graph.edge_slots(); ++e) {
    if (!exported.graph.is_live(e)) continue;
    const Edge& edge = exported.graph.edge(e);
    edges.emplace(fuzz::edge_key(exported.keys[edge.a], exported.keys[edge.b]), edge.w);
  }
  REQUIRE(edges == optimised_edges);
  const CheckResult check = check_certificate(exported.graph, exported.certificate);
  if (!check.ok) violated("the pool's certificate does not hold", __LINE__, check.failure);
  std::size_t certificate_pairs = 0;
  for (Vertex v = 0; v < n; ++v) {
    const Vertex mate = exported.certificate.mate[v];
    if (mate == kNoVertex || mate < v) continue;
    REQUIRE(listed.count(fuzz::edge_key(exported.keys[v], exported.keys[mate])) == 1);
    ++certificate_pairs;
  }
  REQUIRE(certificate_pairs + exported.held.size() == listed.size());

  const bool short_of_perfect = 2 * listed.size() != model.committed.alive.size();
  REQUIRE(progress->no_perfect_matching == (model.mode == Mode::perfect && short_of_perfect));
  const auto optimum = fuzz::brute_force_optimum(model.committed, model.mode, kBruteForceVertices);
  if (optimum) {
    REQUIRE(total == optimum->weight);
    if (model.mode != Mode::max_weight) REQUIRE(listed.size() == optimum->pairs);
  }
}

// Any bytes get one well-formed reply; a reply about a pool agrees with the model.
void Run::query(std::string_view message) {
  v1::QueryReply reply;
  REQUIRE(reply.ParseFromString(queries_.handle(message)));
  REQUIRE(reply.version() == v1::PROTOCOL_VERSION_1);
  v1::QueryRequest request;
  if (message.size() > fixture_.config.limits.max_message_bytes ||
      !request.ParseFromArray(message.data(), static_cast<int>(message.size()))) {
    REQUIRE(reply.has_error());
    return;
  }
  if (request.version() == v1::PROTOCOL_VERSION_1) {
    REQUIRE(reply.request_id() == request.request_id());
  }
  if (reply.has_error()) {
    if (reply.error().code() == v1::Error::INTERNAL) {
      violated("a query failed inside the daemon", __LINE__, reply.error().message());
    }
    return;
  }
  // Reply kinds carry the request kinds' field numbers.
  REQUIRE(static_cast<int>(reply.kind_case()) == static_cast<int>(request.kind_case()));
  if (reply.has_health() || reply.has_snapshot()) return;

  const auto it = pools_.find(reply.pool());
  REQUIRE(it != pools_.end() && it->second.exists);  // only an accepted batch creates a pool
  const PoolModel& model = it->second;
  std::map<VertexKey, std::pair<VertexKey, Weight>> mates;
  Weight total = 0;
  for (const auto& [key, w] : model.matching) {
    mates[key.first] = {key.second, w};
    mates[key.second] = {key.first, w};
    total += w;
  }
  // The pair's weight is present exactly when the mate is.
  const auto check_mate = [&](std::uint64_t vertex, bool has_mate, std::uint64_t mate,
                              bool has_weight, Weight w) {
    REQUIRE(model.committed.alive.count(vertex) == 1);
    const auto found = mates.find(vertex);
    REQUIRE(has_mate == (found != mates.end()));
    REQUIRE(has_weight == has_mate);
    if (has_mate) REQUIRE(mate == found->second.first && w == found->second.second);
  };
  switch (reply.kind_case()) {
    case v1::QueryReply::kSummary: {
      const v1::Summary& summary = reply.summary();
      REQUIRE(summary.seq() == model.seq && summary.weight() == total);
      REQUIRE(summary.pairs() == model.matching.size());
      REQUIRE(summary.vertices() == model.committed.alive.size());
      REQUIRE(summary.edges() == model.committed.edges.size());
      break;
    }
    case v1::QueryReply::kMate: {
      const v1::Mate& mate = reply.mate();
      REQUIRE(mate.seq() == model.seq);
      check_mate(mate.vertex(), mate.has_mate(), mate.mate(), mate.has_pair_weight(),
                 mate.pair_weight());
      break;
    }
    case v1::QueryReply::kMatching: {
      const v1::Matching& matching = reply.matching();
      REQUIRE(matching.seq() == model.seq && matching.weight() == total);
      std::map<EdgeKey, Weight> pairs;
      for (const v1::Pair& pair : matching.matching()) {
        REQUIRE(pairs.empty() || pairs.rbegin()->first < EdgeKey{pair.a(), pair.b()});  // sorted
        pairs.emplace(EdgeKey{pair.a(), pair.b()}, pair.weight());
      }
      REQUIRE(pairs == model.matching);
      break;
    }
    case v1::QueryReply::kExplain: {
      const v1::Explanation& explain = reply.explain();
      REQUIRE(explain.seq() == model.seq);
      check_mate(explain.vertex(), explain.has_mate(), explain.mate(), explain.has_pair_weight(),
                 explain.pair_weight());
      std::uint32_t limit = request.explain().max_alternatives();
      if (limit == 0) limit = QueryHandler::kDefaultAlternatives;
      REQUIRE(static_cast<std::uint32_t>(explain.alternatives_size()) <= limit);
      std::pair<std::int64_t, std::uint64_t> previous{0, 0};
      for (const v1::Alternative& alternative : explain.alternatives()) {
        const auto edge =
            model.committed.edges.find(fuzz::edge_key(explain.vertex(), alternative.other()));
        REQUIRE(edge != model.committed.edges.end() && edge->second == alternative.weight());
        REQUIRE(!explain.has_mate() || alternative.other() != explain.mate());
        REQUIRE(alternative.slack_x2() >= 0);
        const std::pair<std::int64_t, std::uint64_t> order{alternative.slack_x2(),
                                                           alternative.other()};
        REQUIRE(previous <= order);  // least slack first, ties by key
        previous = order;
        const auto other = mates.find(alternative.other());
        REQUIRE(alternative.has_other_mate() == (other != mates.end()));
        if (other != mates.end()) REQUIRE(alternative.other_mate() == other->second.first);
      }
      break;
    }
    case v1::QueryReply::kStats: {
      const v1::Stats& stats = reply.stats();
      REQUIRE(stats.seq() == model.seq && stats.weight() == total);
      REQUIRE(stats.vertices() == model.committed.alive.size());
      REQUIRE(stats.edges() == model.committed.edges.size());
      break;
    }
    default:
      violated("a reply of an unknown kind", __LINE__);
  }
}

// The whole input as one ingest message, under limits wide enough that it gets parsed.
void check_decoder(std::string_view input) {
  const InputLimits wide{std::uint64_t{1} << 20, std::uint64_t{1} << 20};
  const DecodeResult result = decode_ingest(input, wide);
  // A batch read by hand (read_plain_batch) is the one Protobuf reads, and decode_ingest's
  // answer is Protobuf's, whichever read it.
  if (const auto plain = read_plain_batch(input, wide)) {
    const DecodeResult parsed = decode_ingest_with_protobuf(input, wide);
    const auto* batch = std::get_if<DecodedBatch>(&parsed);
    REQUIRE(batch && batch->pool == plain->pool && batch->client_id == plain->client_id &&
            batch->client_batch == plain->client_batch &&
            batch->after_batch == plain->after_batch && !batch->retire &&
            batch->events.size() == plain->events.size());
    for (std::size_t i = 0; i < batch->events.size(); ++i) {
      const Event& a = batch->events[i];
      const Event& b = plain->events[i];
      REQUIRE(a.kind == b.kind && a.u == b.u && a.v == b.v && a.w == b.w);
    }
  }
  // The envelope read on the loop for a big message (a new pool's first, decoded on a worker)
  // names the batch decode_ingest reads, whenever both read one.
  const std::optional<BatchEnvelope> envelope = read_batch_envelope(input);
  if (const auto* batch = std::get_if<DecodedBatch>(&result); envelope && batch && !batch->retire) {
    REQUIRE(resolve_pool_name(envelope->pool) == batch->pool &&
            envelope->client_id == batch->client_id &&
            envelope->client_batch == batch->client_batch);
  }
  if (const auto* ack = std::get_if<v1::Ack>(&result)) {
    REQUIRE(ack->has_rejected() && ack->rejected().errors_size() > 0);
    REQUIRE(ack->rejected().errors(0).code() != v1::Error::INTERNAL);
    return;
  }
  const DecodedBatch& batch = std::get<DecodedBatch>(result);
  REQUIRE(!pool_name_problem(batch.pool));
  // Written back as the journal writes them (to_wire), each event reads back the same.
  for (std::size_t i = 0; i < batch.events.size(); ++i) {
    const Event& first = batch.events[i];
    const auto again = decode_event(to_wire(first), static_cast<std::uint32_t>(i));
    const Event* event = std::get_if<Event>(&again);
    REQUIRE(event && event->kind == first.kind && event->u == first.u && event->v == first.v &&
            event->w == first.w);
  }
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string_view input(reinterpret_cast<const char*>(data), size);
  {
    Run run(fixture());
    std::size_t at = 0;
    for (std::size_t steps = 0; at < input.size() && steps < kMostMessages; ++steps) {
      const unsigned tag = static_cast<unsigned char>(input[at++]);
      if (tag % 4 == 3) {
        run.close_window();
        continue;
      }
      std::size_t length = at < input.size() ? static_cast<unsigned char>(input[at++]) : 0;
      length = std::min(length, input.size() - at);
      const std::string_view message = input.substr(at, length);
      at += length;
      if (tag % 4 == 2) {
        run.query(message);
      } else {
        run.ingest(message);
        run.check_pool_names();
      }
    }
    run.close_window();
    run.query(input);
  }
  check_decoder(input);
  return 0;
}
