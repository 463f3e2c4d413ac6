#include "tools/bench/stream_report.h"

#include <ostream>

#include "tools/bench/lemon_matching.h"
#include "tools/bench/machine_facts.h"
#include "tools/bench/number_format.h"
#include "tools/graphgen/event_stream.h"

#ifndef YOKE_BENCH_BUILD_TYPE
#define YOKE_BENCH_BUILD_TYPE "unknown"
#endif

namespace yoke::bench {
namespace {

// The targets, stated for the 10^5-vertex graph; shown beside every setting.
constexpr double kMedianRatioTarget = 0.001;  // yoke p50 / LEMON median, at most
constexpr double kP99RatioTarget = 0.01;      // yoke p99 / LEMON median, at most
constexpr double kEventsPerSecondTarget = 1e5;  // in 100-event commits, at least
constexpr std::size_t kThroughputBatch = 100;

// Three significant figures or so, whatever the magnitude (microseconds to seconds).
std::string amount(double value) {
  if (value < 10) return format("%.2f", value);
  if (value < 1000) return format("%.1f", value);
  return format("%.0f", value);
}

std::string scientific(double value) { return format("%.2e", value); }

double quotient(std::size_t a, std::size_t b) {
  return static_cast<double>(a) / static_cast<double>(b);
}

std::string percent(std::size_t part, std::size_t whole) {
  return whole == 0 ? "n/a" : format("%.1f%%", 100.0 * quotient(part, whole));
}

std::string per(std::size_t bytes, std::size_t count) {
  return count == 0 ? "n/a" : format("%.0f", quotient(bytes, count));
}

std::string events_per_arrival(const EventTally& t) {
  return t.arrivals == 0 ? "n/a" : format("%.2f", quotient(t.arrival_events, t.arrivals));
}

std::string verdict(bool met) { return met ? "pass" : "MISS"; }

double median_ratio(const StreamResult& r) {
  const double lemon_us = r.lemon_median_ms() * 1000;
  return lemon_us > 0 ? r.commit_us.p50 / lemon_us : 0;
}

double p99_ratio(const StreamResult& r) {
  const double lemon_us = r.lemon_median_ms() * 1000;
  return lemon_us > 0 ? r.commit_us.p99 / lemon_us : 0;
}

bool has_lemon(const StreamResult& r) { return !r.samples.empty() && r.lemon_median_ms() > 0; }

bool throughput_applies(const StreamResult& r) { return r.setting.batch == kThroughputBatch; }

bool weights_equal(const StreamResult& r) {
  for (const LemonSample& s : r.samples) {
    if (!s.weights_equal()) return false;
  }
  return true;
}

bool certificates_hold(const StreamResult& r) {
  for (const LemonSample& s : r.samples) {
    if (!s.certificate_holds) return false;
  }
  return true;
}

const LemonSample* last_sample(const StreamResult& r) {
  return r.samples.empty() ? nullptr : &r.samples.back();
}

void print_samples(std::ostream& out, const StreamResult& r) {
  out << "\n  | sample | after commit | n | m | yoke weight | certified weight | LEMON weight | "
         "LEMON run ms | LEMON run cpu ms | LEMON build+run ms | weights | certificate |\n"
      << "  |--:|--:|--:|--:|--:|--:|--:|--:|--:|--:|---|---|\n";
  for (std::size_t i = 0; i < r.samples.size(); ++i) {
    const LemonSample& s = r.samples[i];
    out << "  | " << i + 1 << " | " << s.commit << " | " << s.vertices << " | " << s.edges
        << " | " << s.yoke_weight << " | " << s.certified_weight << " | " << s.lemon_weight
        << " | " << amount(s.lemon_run_ms) << " | " << amount(s.lemon_run_cpu_ms) << " | "
        << amount(s.lemon_build_run_ms) << " | " << (s.weights_equal() ? "equal" : "DIFFER")
        << " | " << (s.certificate_holds ? "holds" : "FAILS") << " |\n";
  }
  for (const LemonSample& s : r.samples) {
    if (!s.certificate_holds) {
      out << "  FAILED CHECK after commit " << s.commit << ": " << s.failure << "\n";
    }
  }
}

}  // namespace

void print_stream_preamble(std::ostream& out, const StreamRunInfo& info) {
  const gen::EventMix mix = gen::benchmark_mix();
  out << "# yoke stream benchmark: repair per commit in a warm yoke::Pool against LEMON "
      << lemon_version()
      << " MaxWeightedMatching solving from scratch; same graph, same events, same run\n"
      << "command:  " << info.command << "\n"
      << "machine:  " << usable_cpus() << " CPUs (nproc), " << cpu_model() << "\n"
      << "load:     " << load_average() << " (1/5/15 min, at start)\n"
      << "source:   commit " << source_commit() << "\n"
      << "compiler: " << __VERSION__ << ", build type " << YOKE_BENCH_BUILD_TYPE << "\n"
      << "graphs:   Vardolune city graphs, " << kStreamCityNeighbours
      << " nearest neighbours per point (yoke_bench's city graphs), seed " << info.seed << "\n"
      << "actions:  --mix bench: " << mix.nudge_weight + mix.random_weight
      << "% weight changes (drifts below) = " << mix.nudge_weight
      << "% nudge-weight (weight moves by 1..5% of the weight range) + " << mix.random_weight
      << "% random-weight (new weight uniform over the range); " << mix.add
      << "% add (arrivals below: a new vertex with edges to up to " << kArrivalEdges
      << " vertices near a random place, a quarter announced by `add` first); " << mix.remove
      << "% remove (departures below: a uniformly chosen vertex, matched or not)\n"
      << "events:   an arrival is ~" << kArrivalEdges
      << " events and the others one each, so most events are arrival edges (counts per\n"
      << "          setting below); a 1-event commit holds one edge of an arrival, not all of it\n"
      << "yoke:     every commit timed alone: steady_clock around Pool::commit. Drawing the stream "
         "(done\n"
      << "          before the pool exists), Pool::check and the mate look-ups that count matched "
         "drifts\n"
      << "          and departures are outside. The base graph's commit (a from-scratch solve) "
         "is \"load\".\n"
      << "LEMON:    at " << info.lemon_samples
      << " evenly spaced commits (the last after the final one) the pool is exported\n"
      << "          (Pool::export_certified, not timed) and LEMON solves the export from "
         "scratch, in its edge\n"
      << "          order. \"run\" = mwm.run() only, as yoke_bench times it: the reference of "
         "every ratio.\n"
      << "          \"build+run\" adds building the ListGraph and weight map and freeing them.\n"
      << "checks:   at each sample: yoke's committed weight = its certified matching's weight = "
         "LEMON's\n"
      << "          (\"equal\"), and yoke::check_certificate accepts the export's certificate "
         "(\"holds\")\n"
      << "memory:   heap bytes asked of operator new, the pool's only: peak while loading, live "
         "after\n"
      << "          loading, peak while streaming (samples excluded), live at the end. LEMON: "
         "peak of\n"
      << "          ListGraph + weights + solver on the last sample's graph.\n"
      << "targets:  the issue's, stated for 10^5 vertices, shown for every setting: p50 repair "
         "<= "
      << kMedianRatioTarget << " x LEMON\n"
      << "          median run, p99 <= " << kP99RatioTarget << " x, >= "
      << format("%.0f", kEventsPerSecondTarget) << " events/s in " << kThroughputBatch
      << "-event commits. MISS is reported, never fatal.\n\n"
      << std::flush;
}

void print_setting(std::ostream& out, const StreamResult& r) {
  const EventTally& t = r.tally;
  const std::size_t actions = t.drift_events + t.arrivals + t.departure_events;
  const PoolMemory& m = r.memory;
  out << r.setting.name << ": n " << r.base_vertices << ", m " << r.base_edges << " (base), "
      << r.commits << (r.commits == 1 ? " commit" : " commits") << " of " << r.setting.batch
      << (r.setting.batch == 1 ? " event" : " events")
      << ", stream drawn in " << amount(r.generate_ms) << " ms\n"
      << "  load    " << amount(r.load_ms) << " ms (first commit, solved from scratch), weight "
      << r.load_weight << ", pairs " << r.load_pairs;
  if (has_lemon(r)) {
    out << "; load / LEMON median run " << format("%.2f", r.load_ms / r.lemon_median_ms());
  }
  out << "\n"
      << "  actions drift " << t.drift_events << " (" << percent(t.drift_events, actions)
      << "), arrivals " << t.arrivals << " (" << percent(t.arrivals, actions) << "), departures "
      << t.departure_events << " (" << percent(t.departure_events, actions) << ")\n"
      << "  events  drift " << t.drift_events << " (" << percent(t.drift_events, t.events())
      << "), arrival " << t.arrival_events << " (" << percent(t.arrival_events, t.events())
      << "), departure " << t.departure_events << " ("
      << percent(t.departure_events, t.events()) << ")";
  if (t.other_events > 0) out << ", other " << t.other_events;
  out << "; " << events_per_arrival(t) << " events per arrival\n"
      << "          drifts on matched edges " << percent(t.drifts_on_matched, t.drift_events)
      << ", departures of matched vertices " << percent(t.departures_matched, t.departure_events)
      << " (as the pool stood before the commit)\n"
      << "  yoke    repair per commit: p50 " << amount(r.commit_us.p50) << " us, p90 "
      << amount(r.commit_us.p90) << " us, p99 " << amount(r.commit_us.p99) << " us, max "
      << amount(r.commit_us.max) << " us, mean " << amount(r.commit_us.mean) << " us; "
      << format("%.0f", r.events_per_second()) << " events/s (" << r.events << " events in "
      << format("%.3f", r.commit_seconds) << " s of commits; CPU "
      << format("%.3f", r.commit_cpu_seconds) << " s, "
      << format("%.0f",
                r.commit_cpu_seconds > 0 ? static_cast<double>(r.events) / r.commit_cpu_seconds : 0)
      << " events per CPU second)\n"
      << "  work    per commit: roots " << format("%.2f", r.mean_roots) << ", searches "
      << format("%.2f", r.mean_searches) << ", augmentations "
      << format("%.2f", r.mean_augmentations) << ", vertices touched mean "
      << amount(r.touched.mean) << ", p99 " << amount(r.touched.p99) << ", max "
      << amount(r.touched.max) << "\n"
      << "          searches ending without augmenting "
      << percent(r.searches - std::min(r.searches, r.augmentations), r.searches)
      << ", dual levels per search "
      << format("%.2f", r.searches
                            ? static_cast<double>(r.dual_steps) / static_cast<double>(r.searches)
                            : 0.0)
      << ", touched at a search's last level " << percent(r.last_level_scans, r.scans)
      << ", stale bounds per commit "
      << format("%.0f", static_cast<double>(r.stale_bounds) /
                            std::max<double>(1, static_cast<double>(r.commits)))
      << "\n";
  if (has_lemon(r)) {
    out << "  LEMON   median run " << amount(r.lemon_median_ms()) << " ms, build+run "
        << amount(r.lemon_median_build_run_ms()) << " ms, over " << r.samples.size()
        << " samples\n"
        << "  ratios  p50/LEMON " << scientific(median_ratio(r)) << " (target <= "
        << kMedianRatioTarget << ": " << verdict(median_ratio(r) <= kMedianRatioTarget)
        << "), p99/LEMON " << scientific(p99_ratio(r)) << " (target <= " << kP99RatioTarget
        << ": " << verdict(p99_ratio(r) <= kP99RatioTarget) << ")";
    if (throughput_applies(r)) {
      out << ", " << format("%.0f", r.events_per_second()) << " events/s (target >= "
          << format("%.0f", kEventsPerSecondTarget) << ": "
          << verdict(r.events_per_second() >= kEventsPerSecondTarget) << ")";
    }
    out << "\n";
  }
  out << "  memory  pool after load " << mib(m.after_load) << " MiB = "
      << per(m.after_load, r.base_vertices) << " B/vertex, " << per(m.after_load, r.base_edges)
      << " B/edge (load peak " << mib(m.load_peak) << " MiB = " << per(m.load_peak, r.base_vertices)
      << " B/vertex, " << per(m.load_peak, r.base_edges) << " B/edge)\n"
      << "          pool at end " << mib(m.at_end) << " MiB = " << per(m.at_end, m.end_vertices)
      << " B/vertex, " << per(m.at_end, m.end_edges) << " B/edge for n " << m.end_vertices
      << ", m " << m.end_edges << " (streaming peak " << mib(m.stream_peak) << " MiB)\n";
  if (const LemonSample* s = last_sample(r)) {
    out << "          LEMON peak " << mib(s->lemon_peak_bytes) << " MiB = "
        << per(s->lemon_peak_bytes, s->vertices) << " B/vertex, "
        << per(s->lemon_peak_bytes, s->edges) << " B/edge on the same graph (after commit "
        << s->commit << "); pool at end / LEMON peak "
        << (s->lemon_peak_bytes > 0 ? format("%.2f", quotient(m.at_end, s->lemon_peak_bytes))
                                    : std::string("n/a"))
        << "\n";
  }
  print_samples(out, r);
  out << "\n" << std::flush;
}

void print_stream_tables(std::ostream& out, const std::vector<StreamResult>& results) {
  out << "## Repair per commit against LEMON from scratch (times in us unless named)\n\n"
      << "| setting | n | m | commits | events | p50 | p90 | p99 | max | mean | events/s | "
         "LEMON run ms | p50/LEMON | <= "
      << kMedianRatioTarget << " | p99/LEMON | <= " << kP99RatioTarget << " | events/s >= "
      << format("%.0f", kEventsPerSecondTarget) << " | weights | certificate |\n"
      << "|---|--:|--:|--:|--:|--:|--:|--:|--:|--:|--:|--:|--:|---|--:|---|---|---|---|\n";
  for (const StreamResult& r : results) {
    const bool lemon = has_lemon(r);
    out << "| " << r.setting.name << " | " << r.base_vertices << " | " << r.base_edges << " | "
        << r.commits << " | " << r.events << " | " << amount(r.commit_us.p50) << " | "
        << amount(r.commit_us.p90) << " | " << amount(r.commit_us.p99) << " | "
        << amount(r.commit_us.max) << " | " << amount(r.commit_us.mean) << " | "
        << format("%.0f", r.events_per_second()) << " | "
        << (lemon ? amount(r.lemon_median_ms()) : "n/a") << " | "
        << (lemon ? scientific(median_ratio(r)) : "n/a") << " | "
        << (lemon ? verdict(median_ratio(r) <= kMedianRatioTarget) : "n/a") << " | "
        << (lemon ? scientific(p99_ratio(r)) : "n/a") << " | "
        << (lemon ? verdict(p99_ratio(r) <= kP99RatioTarget) : "n/a") << " | "
        << (throughput_applies(r) ? verdict(r.events_per_second() >= kEventsPerSecondTarget) : "-")
        << " | " << (weights_equal(r) ? "equal" : "DIFFER") << " | "
        << (certificates_hold(r) ? "holds" : "FAILS") << " |\n";
  }

  out << "\n## Load, work per commit, memory (bytes per vertex and per edge)\n\n"
      << "| setting | load ms | LEMON build+run ms | roots | searches | touched mean | "
         "touched p99 | pool B/v after load | pool B/e after load | pool B/v load peak | "
         "pool B/v end | pool B/e end | LEMON B/v | LEMON B/e |\n"
      << "|---|--:|--:|--:|--:|--:|--:|--:|--:|--:|--:|--:|--:|--:|\n";
  for (const StreamResult& r : results) {
    const PoolMemory& m = r.memory;
    const LemonSample* s = last_sample(r);
    out << "| " << r.setting.name << " | " << amount(r.load_ms) << " | "
        << (has_lemon(r) ? amount(r.lemon_median_build_run_ms()) : "n/a") << " | "
        << format("%.2f", r.mean_roots) << " | " << format("%.2f", r.mean_searches) << " | "
        << amount(r.touched.mean) << " | " << amount(r.touched.p99) << " | "
        << per(m.after_load, r.base_vertices) << " | " << per(m.after_load, r.base_edges)
        << " | " << per(m.load_peak, r.base_vertices) << " | " << per(m.at_end, m.end_vertices)
        << " | " << per(m.at_end, m.end_edges) << " | "
        << (s ? per(s->lemon_peak_bytes, s->vertices) : "n/a") << " | "
        << (s ? per(s->lemon_peak_bytes, s->edges) : "n/a") << " |\n";
  }

  out << "\n## Event mix (actions: drift / arrival / departure; events by what they do)\n\n"
      << "| setting | drift actions | arrivals | departures | drift events | arrival events | "
         "departure events | events per arrival | drifts on matched | departures matched |\n"
      << "|---|--:|--:|--:|--:|--:|--:|--:|--:|--:|\n";
  for (const StreamResult& r : results) {
    const EventTally& t = r.tally;
    const std::size_t actions = t.drift_events + t.arrivals + t.departure_events;
    out << "| " << r.setting.name << " | " << percent(t.drift_events, actions) << " | "
        << percent(t.arrivals, actions) << " | " << percent(t.departure_events, actions) << " | "
        << percent(t.drift_events, t.events()) << " | " << percent(t.arrival_events, t.events())
        << " | " << percent(t.departure_events, t.events()) << " | "
        << events_per_arrival(t) << " | " << percent(t.drifts_on_matched, t.drift_events) << " | "
        << percent(t.departures_matched, t.departure_events) << " |\n";
  }
  out << std::flush;
}

}  // namespace yoke::bench
