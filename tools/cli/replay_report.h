// `yoke replay ... --report FILE.html`: one self-contained HTML page about a replay, to open
// from file:// with no server and no network. It inlines Chart.js (Debian's libjs-chart.js,
// read from disk when the page is written) and the replay's numbers as JSON in a <script>
// block, and draws five charts: weight and pairs over the commits, pairs changed per commit,
// the distribution of repair times, the repair region per commit, and the vertices whose pair
// changed most often. A header table holds the source, the counts and the final state.
//
// After drawing, the page's script records what it drew in the DOM, so that a headless browser
// can confirm the rendering: `data-charts-drawn` on <body> (the number of charts created),
// and on every <canvas> `data-drawn="yes"` when it holds a non-blank pixel ("no" otherwise).
#pragma once

#include <cstddef>
#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <unordered_map>
#include <utility>
#include <vector>

#include "yoke/pool.h"

namespace yoke::cli {

// One commit of the replay, as the report keeps it.
struct ReportCommit {
  std::uint64_t index = 0;               // 1 for the first commit of the replay
  std::optional<std::uint64_t> seq;      // journal: the daemon's seq after the commit
  std::optional<std::uint64_t> wall_us;  // journal: when the daemon wrote its last record
  Weight weight = 0;
  std::uint64_t pairs = 0;
  std::uint64_t removed = 0;  // pairs the commit lost
  std::uint64_t added = 0;    // and gained
  std::uint64_t events = 0;
  std::uint64_t repair_us = 0;  // Pool::commit alone, as `--stats` measures it
  std::uint64_t roots = 0;
  std::uint64_t searches = 0;
  std::uint64_t touched = 0;  // RepairStats::vertices_touched
};

// A bin of the repair-time histogram: commits whose repair took [low, high) microseconds.
struct HistogramBin {
  std::uint64_t low = 0;
  std::uint64_t high = 0;
  std::uint64_t count = 0;
};

// Bins that double in width: [0,1), [1,2), [2,4), [4,8), ... from the bin of the smallest
// value to that of the largest (empty bins between them included). Empty for no values.
// Repair times spread over several orders of magnitude (the first commit of a pool is a solve
// from scratch), so equal-width bins would put nearly everything in the first.
std::vector<HistogramBin> doubling_histogram(const std::vector<std::uint64_t>& values);

// Text for HTML element content and quoted attribute values: & < > " ' escaped.
std::string html_escape(std::string_view text);

// JSON text made safe inside a <script> element: every '<', '>' and '&' (which JSON holds only
// inside strings) becomes a \u escape, so no "</script>" or "<!--" can end the block early.
std::string script_safe_json(std::string_view json);

// Library text made safe inside a <script> element: "</script" (any case) becomes "<\/script"
// (the same text to JavaScript in a string, a regular expression or a comment).
std::string script_safe_code(std::string_view code);

// Where Chart.js is read from: $YOKE_CHART_JS when set, else the first file that exists of
// the libjs-chart.js package's builds. Throws CliError naming the package when none does.
std::string chart_js_path();

// Where the replay came from, for the header.
struct ReportSource {
  std::string path;  // the script file or the data directory (or the cluster's log, described)
  bool journal = false;
  std::string pool;  // journal only
  std::string log_kind = "yoked data directory";  // journal: what `path` names
};

class ReplayReport {
 public:
  // At most this many points per series: longer replays are drawn in groups of consecutive
  // commits (the point at a group's last commit; changes summed, region sizes their maximum).
  static constexpr std::size_t kMaxPoints = 4000;
  // The busiest-vertices chart shows this many.
  static constexpr std::size_t kBusiest = 20;

  explicit ReplayReport(ReportSource source) : source_(std::move(source)) {}

  // The wall-clock time of the next commit (journal replays), before record().
  void note_wall_time(std::uint64_t unix_us) { next_wall_us_ = unix_us; }
  void record(const Pool& pool, const CommitResult& result, std::size_t events,
              std::uint64_t repair_ns, std::optional<std::uint64_t> seq);

  const std::vector<ReportCommit>& commits() const { return commits_; }
  // The vertices whose pair changed most often (each removed or added pair counts for both
  // ends), most first, ties by smaller id; at most kBusiest.
  std::vector<std::pair<VertexKey, std::uint64_t>> busiest() const;
  // The chart data: one JSON object (see the page's script for the fields).
  std::string data_json() const;
  // The whole page, with `chart_js` inlined.
  std::string html(std::string_view chart_js) const;
  // Reads Chart.js (chart_js_path()) and writes html() to `path`. Throws CliError.
  void write(const std::string& path) const;

 private:
  std::string header_rows() const;

  ReportSource source_;
  std::string mode_;
  std::vector<ReportCommit> commits_;
  std::unordered_map<VertexKey, std::uint64_t> changes_;
  std::optional<std::uint64_t> next_wall_us_;
};

}  // namespace yoke::cli
