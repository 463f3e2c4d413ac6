#include "tools/bench/churn_runner.h"

#include <algorithm>
#include <chrono>
#include <cmath>
#include <span>
#include <stdexcept>
#include <string>
#include <utility>
#include <vector>

#include "yoke/certificate.h"
#include "yoke/pool.h"
#include "tools/bench/number_format.h"
#include "tools/bench/stopwatch.h"
#include "tools/bench/stored_stream.h"
#include "tools/bench/stream_runner.h"

namespace yoke::bench {
namespace {

using Clock = std::chrono::steady_clock;

constexpr double kMaxPercent = 1000;

// What one run leaves behind for the next to be compared with: per streamed commit.
struct Trace {
  std::vector<Weight> weights;
  std::vector<std::size_t> changed;
};

Weight largest_weight(const StoredStream& stream) {
  Weight largest = 0;
  bool any = false;
  for (const std::vector<Event>* events : {&stream.base, &stream.events}) {
    for (const Event& e : *events) {
      if (e.kind != EventKind::set_edge) continue;
      largest = any ? std::max(largest, e.w) : e.w;
      any = true;
    }
  }
  return largest;
}


// The export after the last commit: its certificate must hold for the weights the pool
// optimises, and its matching, bonus taken off, must weigh what the pool reports.
void check_final(const Pool& pool, ChurnRun& run) {
  const PoolExport exported = pool.export_certified();
  const CheckResult check = check_certificate(exported.graph, exported.certificate);
  run.certificate_holds = check.ok;
  if (!check.ok) run.failure = check.failure;
  Weight certified = 0;
  for (const Edge& e : exported.graph.edges()) {
    if (exported.certificate.mate[e.a] == e.b) certified += e.w - exported.matched_bonus;
  }
  run.certified_weight_equal = certified == pool.weight();
  if (!run.certified_weight_equal && run.failure.empty()) {
    run.failure = "certified matching weighs " + std::to_string(certified) +
                  " without the bonus, the pool reports " + std::to_string(pool.weight());
  }
}

// `optimum`: bonus 0's weight after each streamed commit, or null for bonus 0 itself.
ChurnRun run_one(const StoredStream& stream, Weight bonus, std::string label,
                 const std::vector<Weight>* optimum, Trace& trace) {
  ChurnRun run;
  run.label = std::move(label);
  run.bonus = bonus;
  run.commits = stream.batches();

  Pool pool(Mode::max_weight, PoolLimits{}, bonus);
  reject_if_invalid(pool, stream.base, 0);
  pool.commit(stream.base);

  std::vector<double> changed(run.commits);
  std::vector<double> repair_us(run.commits);
  trace.weights.assign(run.commits, 0);
  trace.changed.assign(run.commits, 0);
  Clock::duration in_commits{};
  for (std::size_t c = 0; c < run.commits; ++c) {
    const std::span<const Event> batch = stream.batch(c);
    reject_if_invalid(pool, batch, c + 1);

    const Stopwatch cpu;  // this thread's CPU time too: waiting for a core inflates wall time
    const Clock::time_point start = Clock::now();
    const CommitResult committed = pool.commit(batch);
    const Clock::duration took = Clock::now() - start;
    run.repair_cpu_seconds += cpu.cpu_ms() / 1e3;
    in_commits += took;
    repair_us[c] = std::chrono::duration<double, std::micro>(took).count();

    const MatchingDiff& diff = committed.diff;
    const std::size_t pairs_changed = diff.removed.size() + diff.added.size();
    changed[c] = static_cast<double>(pairs_changed);
    run.changed_total += pairs_changed;
    for (const MatchedPair& p : diff.removed) {
      if (pool.has_vertex(p.a) && pool.has_vertex(p.b)) ++run.broken;
    }
    trace.weights[c] = committed.weight;
    trace.changed[c] = pairs_changed;
    if (optimum != nullptr) {
      const Weight best = (*optimum)[c];
      if (committed.weight > best) run.never_above_optimum = false;
      if (best > 0) {
        run.lowest_weight_ratio =
            std::min(run.lowest_weight_ratio,
                     static_cast<double>(committed.weight) / static_cast<double>(best));
      }
    }
  }
  run.final_weight = pool.weight();
  run.final_pairs = pool.pairs();
  run.repair_seconds = std::chrono::duration<double>(in_commits).count();
  run.changed = spread_of(std::move(changed));
  run.repair_us = spread_of(std::move(repair_us));
  if (!run.never_above_optimum) {
    run.failure = "weight above bonus 0's (the optimum) after some commit";
  }
  check_final(pool, run);
  return run;
}

std::string bonus_label(const ChurnBonus& bonus, Weight value) {
  if (!bonus.relative) return std::to_string(value);
  return bonus.text + " = " + std::to_string(value);
}

}  // namespace

ChurnBonus parse_churn_bonus(std::string_view text) {
  ChurnBonus bonus;
  bonus.text = std::string(text);
  const auto bad = [&](const std::string& why) {
    return std::invalid_argument("churn bonus '" + bonus.text + "': " + why);
  };
  if (text.empty()) throw bad("empty");
  std::size_t used = 0;
  if (text.back() == '%') {
    bonus.relative = true;
    const std::string number(text.substr(0, text.size() - 1));
    try {
      bonus.percent = std::stod(number, &used);
    } catch (const std::exception&) {
      throw bad("not a number followed by %");
    }
    if (used != number.size() || !std::isfinite(bonus.percent)) {
      throw bad("not a number followed by %");
    }
    if (bonus.percent <= 0 || bonus.percent > kMaxPercent) {
      throw bad("a share must be above 0% and at most " + format("%.0f", kMaxPercent) + "%");
    }
    return bonus;
  }
  const std::string number(text);
  try {
    bonus.absolute = std::stoll(number, &used);
  } catch (const std::exception&) {
    throw bad("not a whole number or a share like 2%");
  }
  if (used != number.size()) throw bad("not a whole number or a share like 2%");
  if (bonus.absolute < 1) throw bad("must be at least 1 (bonus 0, the reference, always runs)");
  return bonus;
}

std::vector<ChurnBonus> default_churn_bonuses() {
  return {parse_churn_bonus("2%"), parse_churn_bonus("10%")};
}

Weight churn_bonus_value(const ChurnBonus& bonus, Weight max_weight) {
  if (!bonus.relative) return bonus.absolute;
  const double value = std::round(bonus.percent / 100.0 * static_cast<double>(max_weight));
  return std::max<Weight>(1, static_cast<Weight>(value));
}

double ChurnResult::reference_seconds() const {
  return (runs.front().repair_seconds + runs.back().repair_seconds) / 2;
}

double ChurnResult::reference_cpu_seconds() const {
  return (runs.front().repair_cpu_seconds + runs.back().repair_cpu_seconds) / 2;
}

double ChurnResult::reference_p99_us() const {
  return (runs.front().repair_us.p99 + runs.back().repair_us.p99) / 2;
}

bool ChurnResult::ok() const {
  return repeat_identical &&
         std::all_of(runs.begin(), runs.end(), [](const ChurnRun& r) { return r.ok(); });
}

ChurnResult run_churn(const StreamSetting& setting, std::uint64_t seed,
                      const std::vector<ChurnBonus>& bonuses) {
  ChurnResult result;
  result.setting = setting;
  result.seed = seed;
  const StoredStream stream = store_stream(stream_spec(setting, seed));
  result.max_weight = largest_weight(stream);

  Trace reference;
  result.runs.push_back(run_one(stream, 0, "0", nullptr, reference));
  Trace trace;
  for (const ChurnBonus& bonus : bonuses) {
    const Weight value = churn_bonus_value(bonus, result.max_weight);
    result.runs.push_back(
        run_one(stream, value, bonus_label(bonus, value), &reference.weights, trace));
  }
  result.runs.push_back(run_one(stream, 0, "0 again", &reference.weights, trace));
  result.repeat_identical =
      trace.weights == reference.weights && trace.changed == reference.changed &&
      result.runs.back().broken == result.runs.front().broken;
  return result;
}

}  // namespace yoke::bench
