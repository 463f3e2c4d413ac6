#include "tools/bench/mode_runner.h"

#include <algorithm>
#include <ostream>

#include "yoke/certificate.h"
#include "yoke/pool.h"
#include "tools/bench/aimed_stream.h"
#include "tools/bench/number_format.h"
#include "tools/bench/stopwatch.h"
#include "tools/bench/stored_stream.h"
#include "tools/bench/stream_settings.h"
#include "tools/graphgen/event_stream.h"

namespace yoke::bench {
namespace {

// Every mode replays the very same events, aimed at a max-weight pool fed the stream (what
// `yoke gen stream --mix tail` writes).
ModeFigures replay_in_mode(const AimedStream& stream, Mode mode) {
  ModeFigures figures;
  figures.mode = mode;
  Pool pool(mode);
  {
    const Stopwatch watch;
    pool.commit(stream.base);
    figures.load_ms = watch.elapsed_ms();
  }
  std::vector<double> wall_us, cpu_us, touched;
  for (std::size_t c = 0; c < stream.batches.size(); ++c) {
    reject_if_invalid(pool, stream.batches[c], c + 1);
    const Stopwatch watch;
    const CommitResult committed = pool.commit(stream.batches[c]);
    wall_us.push_back(watch.elapsed_ms() * 1000);
    cpu_us.push_back(watch.cpu_ms() * 1000);
    touched.push_back(static_cast<double>(committed.stats.vertices_touched));
    if (!committed.diff.added.empty() || !committed.diff.removed.empty()) ++figures.changed_commits;
  }
  figures.repair_us = spread_of(wall_us);
  figures.repair_cpu_us = spread_of(cpu_us);
  figures.touched = spread_of(touched);
  figures.pairs_at_end = pool.pairs();
  const PoolExport exported = pool.export_certified();
  figures.certified = check_certificate(exported.graph, exported.certificate).ok;
  return figures;
}

std::string mode_figure(double value) {
  if (value < 10) return format("%.2f", value);
  if (value < 1000) return format("%.1f", value);
  return format("%.0f", value);
}

std::string over_reference(double value, double reference) {
  if (reference <= 0) return "n/a";
  return format("%.1fx", value / reference);
}

}  // namespace

bool ModeResult::ok() const {
  return std::all_of(modes.begin(), modes.end(), [](const ModeFigures& m) { return m.certified; });
}

std::vector<ModeSetting> mode_settings(const std::vector<std::size_t>& sizes, std::size_t actions) {
  std::vector<ModeSetting> settings;
  for (const std::size_t n : sizes) {
    const std::string graph = n >= 1000 && n % 1000 == 0 ? std::to_string(n / 1000) + "k"
                                                         : std::to_string(n);
    settings.push_back({"modes/city-" + graph, n, actions});
  }
  return settings;
}

ModeResult run_modes(const ModeSetting& setting, std::uint64_t seed) {
  ModeResult result;
  result.setting = setting;
  result.seed = seed;
  const AimedStream stream = draw_aimed_stream(aimed_tail_spec(setting.vertices, setting.actions, seed));
  result.base_vertices = stream.base_vertices;
  result.base_edges = stream.base_edges;
  for (const Mode mode : {Mode::max_weight, Mode::max_cardinality, Mode::perfect}) {
    result.modes.push_back(replay_in_mode(stream, mode));
  }
  return result;
}

void print_modes_preamble(std::ostream& out) {
  out << "\n## Modes section: the same single-action stream in each mode\n"
      << "stream:   --mix tail (" << gen::mix_text(gen::tail_mix())
      << "), aimed at a max-weight pool fed the stream\n"
      << "timed:    Pool::commit alone (wall clock; \"cpu\": this thread's CPU time); \"x mw\": "
         "the CPU-time figure over max-weight's\n"
      << "target:   max-cardinality repair p50 within 3x of max-weight (issue 13)\n";
}

void print_modes(std::ostream& out, const ModeResult& result) {
  out << "\n### " << result.setting.name << ": " << result.base_vertices << " vertices, "
      << result.base_edges << " edges, " << result.setting.actions << " commits, seed "
      << result.seed << "\n\n"
      << "| mode | load ms | repair us p50 | p99 | max | cpu p50 | p50 x mw | p99 x mw | "
         "touched p50 | p99 | commits changing pairs | pairs at end | certificate |\n"
      << "|---|---|---|---|---|---|---|---|---|---|---|---|---|\n";
  const ModeFigures& reference = result.modes.front();
  for (const ModeFigures& m : result.modes) {
    out << "| " << mode_name(m.mode) << " | " << mode_figure(m.load_ms) << " | "
        << mode_figure(m.repair_us.p50) << " | " << mode_figure(m.repair_us.p99) << " | "
        << mode_figure(m.repair_us.max) << " | " << mode_figure(m.repair_cpu_us.p50) << " | "
        << over_reference(m.repair_cpu_us.p50, reference.repair_cpu_us.p50) << " | "
        << over_reference(m.repair_cpu_us.p99, reference.repair_cpu_us.p99) << " | "
        << mode_figure(m.touched.p50) << " | " << mode_figure(m.touched.p99) << " | " << m.changed_commits
        << " | " << m.pairs_at_end << " | " << (m.certified ? "holds" : "FAILS") << " |\n";
  }
}

}  // namespace yoke::bench
