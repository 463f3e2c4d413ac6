// The churn section of yoke_stream_bench: one stored stream committed, batch by batch, into
// pools that differ only in their churn bonus (Pool's third argument), so that what a bonus
// buys (fewer pairs changed and broken per commit) and what it costs (weight below the
// optimum, repair time) are measured on the very same events in the same process.
//
// Bonus 0 runs first and again last: the two times show the machine's noise and their mean is
// the reference of the time ratios; the two runs must agree on every commit (determinism).
#pragma once

#include <cstddef>
#include <cstdint>
#include <string>
#include <string_view>
#include <vector>

#include "yoke/types.h"
#include "tools/bench/spread.h"
#include "tools/bench/stream_settings.h"

namespace yoke::bench {

// A bonus as asked for: absolute ("40"), or a share of the stream's largest weight ("2%").
struct ChurnBonus {
  bool relative = false;
  double percent = 0;  // relative only, > 0
  Weight absolute = 0;  // !relative only, >= 1
  std::string text;     // as written
};

// "40", "2%", "0.5%". Throws std::invalid_argument naming what is wrong (0, negative, junk,
// a share above 1000%).
ChurnBonus parse_churn_bonus(std::string_view text);

// 2% and 10% of the stream's largest weight.
std::vector<ChurnBonus> default_churn_bonuses();

// The bonus in weight units for a stream whose largest weight is `max_weight`: a share is
// rounded to the nearest unit and is at least 1.
Weight churn_bonus_value(const ChurnBonus& bonus, Weight max_weight);

// One pool over the whole stream. Figures cover the streamed commits (the base graph's commit,
// solved from scratch with nothing standing, is left out).
struct ChurnRun {
  std::string label;  // "0", "2% = 25", "40", "0 again"
  Weight bonus = 0;
  std::size_t commits = 0;
  Spread changed;                 // pairs removed + added, per commit
  std::uint64_t changed_total = 0;
  std::uint64_t broken = 0;       // removed pairs whose two vertices are both still alive
  Weight final_weight = 0;        // Pool::weight() after the last commit (no bonus in it)
  std::size_t final_pairs = 0;
  double lowest_weight_ratio = 1;  // min over commits of weight / bonus 0's weight there
  double repair_seconds = 0;       // sum of the timed Pool::commit calls (wall clock)
  double repair_cpu_seconds = 0;   // the same calls in this thread's CPU time (and two clock
                                   // reads per commit)
  Spread repair_us;
  bool never_above_optimum = true;  // weight <= bonus 0's after every commit
  bool certificate_holds = false;   // the export after the last commit, bonus included
  bool certified_weight_equal = false;  // its matching's weight, bonus taken off, = weight()
  std::string failure;

  bool ok() const { return never_above_optimum && certificate_holds && certified_weight_equal; }
};

struct ChurnResult {
  StreamSetting setting;
  std::uint64_t seed = 0;
  Weight max_weight = 0;        // largest weight any event of the stream sets
  std::vector<ChurnRun> runs;   // bonus 0, each bonus in the order asked, bonus 0 again
  bool repeat_identical = true;  // both bonus-0 runs: same weight and diff sizes every commit

  double reference_seconds() const;  // mean repair time of the two bonus-0 runs
  double reference_cpu_seconds() const;
  double reference_p99_us() const;
  const ChurnRun& reference() const { return runs.front(); }
  bool ok() const;
};

// Draws the setting's stream (stream_spec) once and runs it through a pool per bonus.
ChurnResult run_churn(const StreamSetting& setting, std::uint64_t seed,
                      const std::vector<ChurnBonus>& bonuses);

}  // namespace yoke::bench
