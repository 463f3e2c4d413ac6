// yoke_soak: one long seeded event stream through one incremental pool, checked as it goes.
//
// Every commit's diff is applied to a running copy of the matching; every K commits the pool's
// certificate is checked (yoke::check_certificate), its matching is compared with that copy and
// with the commit's weight and pairs, and a from-scratch solve of the same graph (yoke's static
// engine) must find the same optimum. The first mismatch stops the run with exit code 1.
//
// Built with the tests (YOKE_BUILD_TESTS), not registered with CTest: it runs for minutes.
//   ninja -C build yoke_soak
//   build/tests/soak/yoke_soak                        # 10^6 events, city of 2x10^4 vertices
//   build/tests/soak/yoke_soak --events 200000 --family dispatch --batch 1 --batch-max 100
//                              --mode max-cardinality --mix test --check-every 50 --seed 7
// Output: the time of the base graph's commit, a progress line per check, then one summary line:
//   soak done: E events in C commits, X events/s in commits (Y/s overall), N checks passed
// Exit codes: 0 every check passed; 1 a check failed (the line says which); 2 bad options or
// an error the engine threw.
#include <algorithm>
#include <chrono>
#include <cstdint>
#include <iostream>
#include <optional>
#include <set>
#include <string>
#include <utility>
#include <vector>

#include <CLI/CLI.hpp>

#include "yoke/certificate.h"
#include "yoke/pool.h"
#include "yoke/solve.h"
#include "tools/cli/number_options.h"
#include "tools/graphgen/event_stream.h"
#include "tools/postmortem/certified_matching.h"

namespace {

using namespace yoke;
using Clock = std::chrono::steady_clock;
using KeyPair = std::pair<VertexKey, VertexKey>;

struct SoakOptions {
  std::string family = "city";
  std::size_t vertices = 20000;
  std::size_t events = 1000000;
  std::size_t batch = 100;
  std::size_t batch_max = 0;  // > 0: batch sizes uniform in [batch, batch_max]
  std::uint64_t seed = 1;
  std::size_t check_every = 100;
  std::string mode = "max-weight";
  std::string mix = "bench";
  bool scrambled_keys = false;
};

double seconds(Clock::duration d) { return std::chrono::duration<double>(d).count(); }

// The first disagreement between the pool and the checks, or nothing.
std::optional<std::string> check_pool(const Pool& pool, const CommitResult& result,
                                      const std::set<KeyPair>& from_diffs) {
  const PoolExport exported = pool.export_certified();
  // yoke::check_certificate: the engine's independent checker.
  const CheckResult verdict = check_certificate(exported.graph, exported.certificate);
  if (!verdict.ok) return "certificate rejected: " + verdict.failure;

  const postmortem::CertifiedMatching certified = postmortem::certified_matching(exported);
  if (certified.weight != result.weight || certified.pairs.size() != result.pairs) {
    return "the commit reports weight " + std::to_string(result.weight) + " pairs " +
           std::to_string(result.pairs) + ", its certificate's matching " +
           int128_text(certified.weight) + " and " + std::to_string(certified.pairs.size());
  }
  if (!std::equal(certified.pairs.begin(), certified.pairs.end(), from_diffs.begin(),
                  from_diffs.end())) {
    return std::string("the diffs do not add up to the matching");
  }

  // yoke's static engine (independent from-scratch solve).
  const SolveResult fresh = solve(exported.graph, pool.mode());
  if (fresh.weight != result.weight || fresh.status != result.status ||
      (pool.mode() != Mode::max_weight && fresh.pairs != result.pairs)) {
    return "a from-scratch solve finds weight " + std::to_string(fresh.weight) + " pairs " +
           std::to_string(fresh.pairs) + ", the pool " + std::to_string(result.weight) +
           " and " + std::to_string(result.pairs);
  }
  return std::nullopt;
}

// Applies a diff to the running copy of the matching (removals first: a pair may leave and
// come back in one commit when a vertex departs and returns).
std::optional<std::string> apply_diff(const MatchingDiff& diff, std::set<KeyPair>& matched) {
  for (const MatchedPair& p : diff.removed) {
    if (matched.erase({p.a, p.b}) == 0) {
      return "the diff removes " + std::to_string(p.a) + " " + std::to_string(p.b) +
             ", which was not matched";
    }
  }
  for (const MatchedPair& p : diff.added) {
    if (!matched.emplace(p.a, p.b).second) {
      return "the diff adds " + std::to_string(p.a) + " " + std::to_string(p.b) +
             ", which was matched already";
    }
  }
  return std::nullopt;
}

int run(const SoakOptions& o) {
  gen::StreamSpec spec;
  spec.family = gen::parse_stream_family(o.family);
  spec.mix = gen::parse_mix(o.mix);
  spec.vertices = o.vertices;
  spec.events = o.events;
  spec.batch_min = o.batch;
  spec.batch_max = o.batch_max == 0 ? o.batch : o.batch_max;
  spec.seed = o.seed;
  spec.scrambled_keys = o.scrambled_keys;
  const Mode mode = parse_mode(o.mode);

  const auto start = Clock::now();
  gen::EventStream stream(spec);
  Pool pool(mode);
  std::cout << "soak: " << o.family << " " << stream.base_vertices() << " vertices "
            << stream.base_edges() << " edges, " << o.events << " events in batches of "
            << spec.batch_min << ".." << spec.batch_max << ", mode " << mode_name(mode)
            << ", mix " << gen::mix_text(spec.mix) << ", seed " << o.seed << ", check every "
            << o.check_every << " commits" << std::endl;

  std::set<KeyPair> matched;
  std::vector<Event> batch;
  std::size_t events = 0;
  std::size_t checks = 0;
  Clock::duration in_commits{};
  for (bool first = true; stream.next_batch(batch); first = false) {
    if (const auto error = pool.check(batch)) {
      std::cout << "FAIL commit " << pool.commits() + 1 << ": the pool rejects a generated batch"
                << " at event " << error->index << ": " << error->message << std::endl;
      return 1;
    }
    const auto before = Clock::now();
    const CommitResult result = pool.commit(batch);
    const auto took = Clock::now() - before;
    if (first) {
      std::cout << "base graph committed in " << seconds(took) << " s" << std::endl;
    } else {  // the rates are about the stream, not the first solve of the base graph
      in_commits += took;
      events += batch.size();
    }

    std::optional<std::string> problem = apply_diff(result.diff, matched);
    const bool last = events == o.events;
    if (!problem && (result.commit % o.check_every == 0 || last || first)) {
      problem = check_pool(pool, result, matched);
      ++checks;
      std::cout << "commit " << result.commit << " events " << events << " vertices "
                << pool.vertex_count() << " edges " << pool.edge_count() << " weight "
                << result.weight << " pairs " << result.pairs << " events/s "
                << static_cast<std::uint64_t>(events / std::max(seconds(in_commits), 1e-9))
                << (problem ? "" : " ok") << std::endl;
    }
    if (problem) {
      std::cout << "FAIL commit " << result.commit << " (after " << events
                << " events): " << *problem << std::endl;
      return 1;
    }
  }
  const double total = seconds(Clock::now() - start);
  std::cout << "soak done: " << events << " events in " << pool.commits() << " commits, "
            << static_cast<std::uint64_t>(events / std::max(seconds(in_commits), 1e-9))
            << " events/s in commits (" << static_cast<std::uint64_t>(events / total)
            << "/s overall), " << checks << " checks passed" << std::endl;
  return 0;
}

}  // namespace

int main(int argc, char** argv) {
  SoakOptions o;
  CLI::App app("yoke_soak: a long event stream through one pool, checked every K commits");
  app.add_option("--family", o.family, "city, random, dispatch, complete or stress")
      ->check(CLI::IsMember({"city", "random", "dispatch", "complete", "stress"}))
      ->capture_default_str();
  app.add_option("--vertices", o.vertices, "Vertices of the base graph")->capture_default_str();
  app.add_option("--events", o.events, "Events after the base graph")->capture_default_str();
  app.add_option("--batch", o.batch, "Events per batch")
      ->check(cli::kAtLeastOne)
      ->capture_default_str();
  app.add_option("--batch-max", o.batch_max, "Largest batch (sizes uniform in [batch, max])");
  app.add_option("--seed", o.seed, "Random seed")->capture_default_str();
  app.add_option("--check-every", o.check_every, "Commits between two full checks")
      ->check(cli::kAtLeastOne)
      ->capture_default_str();
  app.add_option("--mode", o.mode, "max-weight, max-cardinality or perfect")
      ->check(CLI::IsMember({"max-weight", "max-cardinality", "perfect"}))
      ->capture_default_str();
  app.add_option("--mix", o.mix, "bench, test, or NAME=SHARE,... (see event_stream.h)")
      ->capture_default_str();
  app.add_flag("--scrambled-keys", o.scrambled_keys, "Scattered 64-bit vertex keys");
  try {
    app.parse(argc, argv);
    if (o.batch_max != 0 && o.batch_max < o.batch) {
      throw CLI::ValidationError("--batch-max", "is below --batch");
    }
  } catch (const CLI::ParseError& error) {
    const int code = app.exit(error);
    return code == 0 ? 0 : 2;
  }
  try {
    return run(o);
  } catch (const std::exception& error) {
    std::cerr << "error: " << error.what() << "\n";
    return 2;
  }
}
