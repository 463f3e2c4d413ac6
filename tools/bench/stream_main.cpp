// yoke_stream_bench: a warm yoke::Pool repairing commit by commit against LEMON's
// MaxWeightedMatching solving the same graph from scratch after the same commit, on Vardolune
// city graphs with the benchmark event mix (tools/graphgen/event_stream.h).
//
//   yoke_stream_bench [--quick] [--vertices N[,N...]]... [--events E] [--seed S]
//                     [--lemon-samples K] [--only SETTING]... [--list]
//                     [--churn-bonus B[,B...] | none] [--churn-only]
//
// Then the churn section (churn_runner.h): the same stream through pools with a churn bonus,
// and the tail section (tail_runner.h): one action per commit from the tail mix, per kind.
//
//   [--tail-actions A | --tail-only]
//
// And the modes section (mode_runner.h): one single-action stream replayed in every mode, each
// mode's repair p50/p99 against max-weight's (off unless --mode-actions or --quick asks).
//
//   [--mode-actions A] [--modes-only]
//
// Exit codes: 0 done (a missed performance target is reported, not fatal); 1 yoke and LEMON
// disagree on a weight, a certificate fails or a churn check fails; 2 bad options or an error
// the engine threw.
#include <algorithm>
#include <cstdint>
#include <iostream>
#include <optional>
#include <stdexcept>
#include <string>
#include <vector>

#include <CLI/CLI.hpp>

#include "tools/bench/churn_report.h"
#include "tools/bench/heap_counter.h"
#include "tools/bench/mode_runner.h"
#include "tools/bench/report.h"
#include "tools/bench/stream_report.h"
#include "tools/bench/stream_runner.h"
#include "tools/bench/stream_settings.h"
#include "tools/bench/tail_report.h"
#include "tools/bench/tail_runner.h"

namespace {

using namespace yoke::bench;

struct Options {
  bool quick = false;
  bool list = false;
  std::vector<std::size_t> vertices;  // empty: the default (or quick) sizes
  std::optional<std::size_t> events;
  std::uint64_t seed = 1;
  std::optional<std::size_t> lemon_samples;
  std::vector<std::string> only;
  std::vector<std::string> churn_bonus;  // empty: default_churn_bonuses(); "none": no section
  bool churn_only = false;
  std::optional<std::size_t> tail_actions;  // 0: no tail section
  bool tail_only = false;
  std::optional<std::size_t> mode_actions;  // 0: no modes section
  bool modes_only = false;
};

constexpr std::size_t kDefaultTailActions = 2000;
constexpr std::size_t kQuickTailActions = 200;

// The tail section's settings: every selected graph size (the smallest only with --quick).
std::vector<TailSetting> tail_selected(const Options& o) {
  const std::size_t actions = o.tail_actions.value_or(o.quick ? kQuickTailActions : kDefaultTailActions);
  if (actions == 0) return {};
  std::vector<std::size_t> sizes =
      !o.vertices.empty() ? o.vertices : (o.quick ? quick_sizes() : default_sizes());
  if (o.quick) sizes.resize(1);
  return tail_settings(sizes, actions);
}

// The modes section: off by default (a max-cardinality repair can cost a full solve today);
// --quick runs it on its smallest graph.
constexpr std::size_t kQuickModeActions = 100;

std::vector<ModeSetting> modes_selected(const Options& o) {
  const std::size_t actions = o.mode_actions.value_or(o.quick ? kQuickModeActions : 0);
  if (actions == 0) return {};
  std::vector<std::size_t> sizes =
      !o.vertices.empty() ? o.vertices : (o.quick ? quick_sizes() : default_sizes());
  if (o.quick) sizes.resize(1);
  return mode_settings(sizes, actions);
}

constexpr std::size_t kDefaultLemonSamples = 5;
constexpr std::size_t kQuickLemonSamples = 3;
constexpr int kDisagreement = 1;
constexpr int kUsageError = 2;

// The settings the options select; throws CLI::ValidationError for an --only that names none.
std::vector<StreamSetting> selected(const Options& o) {
  const std::vector<std::size_t> sizes =
      !o.vertices.empty() ? o.vertices : (o.quick ? quick_sizes() : default_sizes());
  const std::vector<StreamSetting> all = make_settings(sizes, o.events, o.quick);
  if (o.only.empty()) return all;
  for (const std::string& pattern : o.only) {
    if (std::none_of(all.begin(), all.end(),
                     [&](const StreamSetting& s) { return setting_matches(s, pattern); })) {
      throw CLI::ValidationError("--only", "no setting, graph or commit size named '" + pattern +
                                               "' (see --list)");
    }
  }
  std::vector<StreamSetting> chosen;
  for (const StreamSetting& s : all) {
    if (std::any_of(o.only.begin(), o.only.end(),
                    [&](const std::string& pattern) { return setting_matches(s, pattern); })) {
      chosen.push_back(s);
    }
  }
  return chosen;
}

// The churn section's bonuses; throws CLI::ValidationError for one that does not parse.
std::vector<ChurnBonus> churn_bonuses(const Options& o) {
  if (o.churn_bonus.empty()) return default_churn_bonuses();
  if (o.churn_bonus.size() == 1 && o.churn_bonus.front() == "none") {
    if (o.churn_only) throw CLI::ValidationError("--churn-only", "needs a churn bonus, not none");
    return {};
  }
  std::vector<ChurnBonus> bonuses;
  for (const std::string& text : o.churn_bonus) {
    try {
      bonuses.push_back(parse_churn_bonus(text));
    } catch (const std::invalid_argument& error) {
      throw CLI::ValidationError("--churn-bonus", error.what());
    }
  }
  return bonuses;
}

int run(const Options& o, const std::vector<StreamSetting>& settings,
        const std::vector<ChurnBonus>& bonuses, const std::vector<TailSetting>& tails,
        const std::vector<ModeSetting>& modes, const std::string& command) {
  if (!heap::counting_works()) {
    std::cerr << "yoke_stream_bench: the counting operator new is not in use; memory figures "
                 "would be wrong\n";
    return kUsageError;
  }
  const std::size_t samples =
      o.lemon_samples.value_or(o.quick ? kQuickLemonSamples : kDefaultLemonSamples);
  print_stream_preamble(std::cout, {command, o.seed, samples});
  std::vector<StreamResult> results;
  bool all_ok = true;
  const bool one_section = o.churn_only || o.tail_only || o.modes_only;
  if (!one_section) {
    for (const StreamSetting& setting : settings) {
      results.push_back(run_setting(setting, o.seed, samples));
      print_setting(std::cout, results.back());
      all_ok = all_ok && results.back().ok();
    }
    print_stream_tables(std::cout, results);
  }
  if (!bonuses.empty() && (!one_section || o.churn_only)) {
    print_churn_preamble(std::cout, bonuses);
    for (const StreamSetting& setting : settings) {
      const ChurnResult churn = run_churn(setting, o.seed, bonuses);
      print_churn_rows(std::cout, churn);
      all_ok = all_ok && churn.ok();
    }
  }
  if (!tails.empty() && (!one_section || o.tail_only)) {
    print_tail_preamble(std::cout, samples);
    for (const TailSetting& setting : tails) {
      const TailResult tail = run_tail(setting, o.seed, samples);
      print_tail(std::cout, tail);
      all_ok = all_ok && tail.ok();
    }
  }
  if (!modes.empty() && (!one_section || o.modes_only)) {
    print_modes_preamble(std::cout);
    for (const ModeSetting& setting : modes) {
      const ModeResult result = run_modes(setting, o.seed);
      print_modes(std::cout, result);
      all_ok = all_ok && result.ok();
    }
  }
  if (!all_ok) {
    std::cout << "\nFAILED: yoke and LEMON disagree on a weight, a certificate fails, or a churn "
                 "check fails (see above)\n";
    return kDisagreement;
  }
  return 0;
}

}  // namespace

int main(int argc, char** argv) {
  Options o;
  CLI::App app(
      "yoke_stream_bench: repair per commit in a warm pool against LEMON solving from scratch");
  app.add_flag("--quick", o.quick, "Small graphs and short streams (a smoke test, seconds)");
  app.add_option("--vertices", o.vertices,
                 "Base graph sizes, instead of 100000 and 300000 (repeatable, or N,N,...)")
      ->delimiter(',')
      ->check(CLI::Range(std::size_t{2}, std::size_t{1} << 22));
  app.add_option("--events", o.events,
                 "Events streamed per setting (default 20000 up to 150000 vertices, 10000 above; "
                 "1000 with --quick)")
      ->check(CLI::Range(std::size_t{1}, std::size_t{1} << 30));
  app.add_option("--seed", o.seed, "Seed of the graphs and the streams")->capture_default_str();
  app.add_option("--lemon-samples", o.lemon_samples,
                 "Commits after which LEMON re-solves from scratch, at least 3 (default 5; 3 with "
                 "--quick)")
      ->check(CLI::Range(std::size_t{3}, std::size_t{1000}));  // a median of fewer means little
  app.add_option("--only", o.only,
                 "Run only this setting (city-100k/b1), graph (city-100k) or commit size (b100); "
                 "repeatable");
  app.add_flag("--list", o.list, "List the settings and exit");
  app.add_option("--churn-bonus", o.churn_bonus,
                 "Churn section: bonuses for standing pairs, absolute (40) or a share of the "
                 "stream's largest weight (2%); default 2%,10%; none skips the section")
      ->delimiter(',');
  app.add_flag("--churn-only", o.churn_only,
               "Only the churn section (no LEMON comparison)");

  std::vector<StreamSetting> settings;
  app.add_option("--tail-actions", o.tail_actions,
                 "Tail section: single-action commits per setting (default 2000; 200 with "
                 "--quick, on the smallest graph only); 0 skips the section")
      ->check(CLI::Range(std::size_t{0}, std::size_t{1} << 24));
  app.add_flag("--tail-only", o.tail_only, "Only the tail section");
  app.add_option("--mode-actions", o.mode_actions,
                 "Modes section: single-action commits replayed in each mode (default 0: no "
                 "section; 100 with --quick, on the smallest graph only)")
      ->check(CLI::Range(std::size_t{0}, std::size_t{1} << 24));
  app.add_flag("--modes-only", o.modes_only, "Only the modes section");

  std::vector<ChurnBonus> bonuses;
  std::vector<TailSetting> tails;
  std::vector<ModeSetting> modes;
  try {
    app.parse(argc, argv);
    settings = selected(o);
    bonuses = churn_bonuses(o);
    tails = tail_selected(o);
    modes = modes_selected(o);
    if (o.tail_only && tails.empty()) throw CLI::ValidationError("--tail-only", "needs --tail-actions above 0");
    if (o.modes_only && modes.empty()) throw CLI::ValidationError("--modes-only", "needs --mode-actions above 0");
    if (int{o.tail_only} + int{o.churn_only} + int{o.modes_only} > 1) {
      throw CLI::ValidationError("--tail-only", "--tail-only, --churn-only and --modes-only exclude each other");
    }
  } catch (const CLI::ParseError& error) {
    const int code = app.exit(error);
    return code == 0 ? 0 : kUsageError;
  }
  if (o.list) {
    for (const StreamSetting& s : settings) {
      std::cout << s.name << "  (" << s.vertices << " vertices, " << s.events << " events in "
                << s.commits() << (s.commits() == 1 ? " commit" : " commits") << " of "
                << s.batch << ")\n";
    }
    return 0;
  }
  try {
    return run(o, settings, bonuses, tails, modes, command_line(argc, argv));
  } catch (const std::exception& error) {
    std::cerr << "yoke_stream_bench: " << error.what() << "\n";
    return kUsageError;
  }
}
