#include "tools/bench/tail_report.h"

#include <ostream>
#include <string>

#include "tools/bench/number_format.h"
#include "tools/bench/stream_settings.h"
#include "tools/graphgen/event_stream.h"

namespace yoke::bench {
namespace {

// The target for single-action commits: p99 repair at most 1/300 of LEMON's solve.
constexpr double kTailRatioTarget = 300;

std::string figure(double value) {
  if (value < 10) return format("%.2f", value);
  if (value < 1000) return format("%.1f", value);
  return format("%.0f", value);
}

// "1/N": how many times the kind's p99 fits into LEMON's from-scratch solve.
std::string fraction_of_lemon(double us, double lemon_ms) {
  if (us <= 0 || lemon_ms <= 0) return "n/a";
  return "1/" + format("%.0f", lemon_ms * 1000 / us);
}

void print_row(std::ostream& out, const KindFigures& k, double lemon_cpu_ms) {
  const std::size_t commits = k.repair_us.count;
  out << "| " << k.kind << " | " << commits << " | " << figure(k.repair_us.p50) << " | "
      << figure(k.repair_us.p99) << " | " << figure(k.repair_us.max) << " | "
      << figure(k.repair_cpu_us.p99) << " | " << fraction_of_lemon(k.repair_cpu_us.p99, lemon_cpu_ms)
      << " | " << figure(k.touched.p50) << " | "
      << figure(k.touched.p99) << " | " << figure(k.touched.max) << " | ";
  if (k.changed_commits > 0) {
    out << k.changed_commits << " | " << figure(k.touched_per_pair.p50) << " | "
        << figure(k.touched_per_pair.p99) << " | ";
  } else {
    out << "0 | - | - | ";
  }
  const std::size_t idle = commits - k.changed_commits;
  if (idle > 0) {
    out << idle << " | " << figure(k.idle_touched.p99) << " | " << k.idle_heavy << " |\n";
  } else {
    out << "0 | - | 0 |\n";
  }
}

}  // namespace

void print_tail_preamble(std::ostream& out, std::size_t lemon_samples) {
  out << "\n## Tail section: one action per commit, per action kind\n"
      << "mix:      --mix tail (" << gen::mix_text(gen::tail_mix()) << "), "
      << "rise = +25..100% of the weight range;\n"
      << "          rise-tight, rise-cycle, fall-matched and remove-matched are aimed at the "
         "pool (an aimed action\n"
      << "          that finds no target is filed under the action it fell back to)\n"
      << "graphs:   Vardolune city graphs, " << kStreamCityNeighbours
      << " neighbours per point; \"-grainG\": every weight rounded to a multiple of G (ties)\n"
      << "timed:    Pool::commit alone, wall clock and (\"cpu\") this thread's CPU time, which "
         "leaves out waiting\n"
      << "          for a core on a shared machine; \"touched\" is RepairStats::vertices_touched, "
         "\"per pair\" divides it by\n"
      << "          the pairs the commit removed and added (commits that changed a pair); "
         "\"idle\" commits change\n"
      << "          no pair, \">" << format("%.0f", kIdleTouchLimit)
      << "\" counts those that touched more vertices than that\n"
      << "LEMON:    from scratch on the pool's export at " << lemon_samples
      << " evenly spaced commits (weights and certificates checked);\n"
      << "          \"p99/LEMON\" = 1/N: the kind's cpu p99 repair is 1/N of LEMON's median run's CPU time "
         "(target 1/"
      << format("%.0f", kTailRatioTarget) << " or less)\n";
}

void print_tail(std::ostream& out, const TailResult& r) {
  const double lemon_ms = r.lemon_median_ms();
  const double lemon_cpu_ms = r.lemon_median_cpu_ms();
  out << "\n### " << r.setting.name << ": n " << r.base_vertices << ", m " << r.base_edges
      << ", " << r.setting.actions << " actions; stream drawn (with its aiming pool) in "
      << figure(r.generate_ms) << " ms; load " << figure(r.load_ms) << " ms; LEMON median run "
      << figure(lemon_ms) << " ms (cpu " << figure(lemon_cpu_ms) << " ms) over " << r.samples.size() << " samples, weights and "
      << "certificates " << (r.ok() ? "ok" : "FAILED") << "\n\n"
      << "| kind | commits | repair p50 us | p99 us | max us | cpu p99 us | p99/LEMON | touched p50 | p99 | "
         "max | changed | per pair p50 | p99 | idle | idle p99 | idle >"
      << format("%.0f", kIdleTouchLimit) << " |\n"
      << "|---|--:|--:|--:|--:|--:|--:|--:|--:|--:|--:|--:|--:|--:|--:|--:|\n";
  for (const KindFigures& k : r.kinds) print_row(out, k, lemon_cpu_ms);
  print_row(out, r.all, lemon_cpu_ms);
  for (const LemonSample& s : r.samples) {
    if (!s.ok()) {
      out << "FAILED CHECK after commit " << s.commit << ": weights yoke " << s.yoke_weight
          << ", certified " << s.certified_weight << ", LEMON " << s.lemon_weight << "; "
          << s.failure << "\n";
    }
  }
  out << std::flush;
}

}  // namespace yoke::bench
