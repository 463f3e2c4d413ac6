#include "replay_report.h"

#include <algorithm>
#include <cctype>
#include <cstdio>
#include <cstdlib>
#include <ctime>
#include <filesystem>
#include <sstream>

#include "cli_error.h"
#include "file_io.h"
#include "json_writer.h"

namespace yoke::cli {
namespace {

// The builds libjs-chart.js has shipped (Chart.js 4 names its UMD build chart.umd.js).
constexpr const char* kChartJsCandidates[] = {
    "/usr/share/javascript/chart.js/chart.umd.js",
    "/usr/share/javascript/chart.js/chart.min.js",
    "/usr/share/javascript/chart.js/Chart.min.js",
    "/usr/share/javascript/chart.js/chart.js",
};

constexpr const char* kCaution =
    "yoke's pairs are advisory; working-time, safety and labour rules decide.";

// The index of the doubling bin holding `value`: 0 for 0, k for [2^(k-1), 2^k).
std::size_t bin_of(std::uint64_t value) {
  std::size_t bin = 0;
  while (value != 0) {
    ++bin;
    value >>= 1;
  }
  return bin;
}

std::uint64_t bin_low(std::size_t bin) { return bin == 0 ? 0 : std::uint64_t{1} << (bin - 1); }
std::uint64_t bin_high(std::size_t bin) {
  return bin >= 64 ? UINT64_MAX : std::uint64_t{1} << bin;
}

std::string bin_label(const HistogramBin& bin) {
  if (bin.low == 0) return "<1";
  return std::to_string(bin.low) + "-" + std::to_string(bin.high);
}

// Nearest rank, as `--stats` computes it. 0 if empty.
std::uint64_t percentile(const std::vector<std::uint64_t>& sorted, std::uint64_t p) {
  if (sorted.empty()) return 0;
  const std::uint64_t rank = std::max<std::uint64_t>(1, (p * sorted.size() + 99) / 100);
  return sorted[rank - 1];
}

// "2024-05-01 06:30:12 UTC".
std::string utc_text(std::uint64_t unix_us) {
  const auto seconds = static_cast<std::time_t>(unix_us / 1000000);
  std::tm parts{};
  gmtime_r(&seconds, &parts);
  char text[64];
  const std::size_t length = std::strftime(text, sizeof text, "%Y-%m-%d %H:%M:%S UTC", &parts);
  return std::string(text, length);
}

// "3 h 02 min", "4 min 05 s", "12.3 s".
std::string duration_text(std::uint64_t us) {
  const std::uint64_t seconds = us / 1000000;
  char text[64];
  if (seconds >= 3600) {
    std::snprintf(text, sizeof text, "%llu h %02llu min",
                  static_cast<unsigned long long>(seconds / 3600),
                  static_cast<unsigned long long>(seconds / 60 % 60));
  } else if (seconds >= 60) {
    std::snprintf(text, sizeof text, "%llu min %02llu s",
                  static_cast<unsigned long long>(seconds / 60),
                  static_cast<unsigned long long>(seconds % 60));
  } else {
    std::snprintf(text, sizeof text, "%.1f s", static_cast<double>(us) / 1e6);
  }
  return text;
}

// One header row; `id` names the value cell for tests and scripts.
std::string row(const char* label, const char* id, const std::string& value_html) {
  return std::string("<tr><th scope=\"row\">") + label + "</th><td id=\"" + id + "\">" +
         value_html + "</td></tr>\n";
}

constexpr const char* kStyle = R"css(
:root { color-scheme: light; --ink: #1d2733; --muted: #5b6673; --line: #d8dee6; --panel: #ffffff;
        --page: #f3f5f8; --warn: #8a4b00; --warn-bg: #fff4e0; }
* { box-sizing: border-box; }
body { margin: 0; padding: 24px 32px 48px; background: var(--page); color: var(--ink);
       font: 15px/1.45 system-ui, -apple-system, "Segoe UI", Roboto, "Helvetica Neue", Arial,
       sans-serif; }
h1 { font-size: 22px; margin: 0 0 4px; }
h2 { font-size: 16px; margin: 0 0 2px; }
code { font-family: ui-monospace, "DejaVu Sans Mono", Menlo, Consolas, monospace;
       font-size: 13px; word-break: break-all; }
.caution { margin: 8px 0 20px; padding: 8px 12px; border-left: 4px solid var(--warn);
           background: var(--warn-bg); color: var(--warn); max-width: 1100px; }
table.summary { border-collapse: collapse; background: var(--panel); margin-bottom: 24px;
                border: 1px solid var(--line); min-width: 480px; }
table.summary th, table.summary td { text-align: left; padding: 6px 14px;
                                     border-bottom: 1px solid var(--line); vertical-align: top; }
table.summary th { color: var(--muted); font-weight: 600; white-space: nowrap; }
table.summary td { font-variant-numeric: tabular-nums; }
.charts { display: grid; grid-template-columns: repeat(auto-fit, minmax(520px, 1fr)); gap: 20px;
          max-width: 1600px; }
section.chart { background: var(--panel); border: 1px solid var(--line); border-radius: 6px;
                padding: 14px 16px 16px; }
section.chart.wide { grid-column: 1 / -1; }
.note { color: var(--muted); font-size: 13px; margin: 0 0 10px; }
.frame { position: relative; height: 300px; }
.frame.tall { height: 460px; }
footer { margin-top: 28px; color: var(--muted); font-size: 12px; }
)css";

// The page's own script: reads the data block, draws the charts with Chart.js, then records in
// the DOM what it drew (data-charts-drawn on body, data-drawn on each canvas).
constexpr const char* kPageScript = R"js(
(function () {
  "use strict";
  var body = document.body;
  var drawn = 0;
  body.dataset.chartsDrawn = "0";
  function fail(text) { body.dataset.chartError = (body.dataset.chartError || "") + text + "; "; }
  var data;
  try {
    data = JSON.parse(document.getElementById("yoke-data").textContent);
  } catch (error) {
    fail("data: " + error.message);
    return;
  }
  if (typeof Chart === "undefined") {
    fail("Chart.js did not load");
    return;
  }
  Chart.defaults.animation = false;
  Chart.defaults.responsive = true;
  Chart.defaults.maintainAspectRatio = false;
  Chart.defaults.font.family = "system-ui, sans-serif";
  Chart.defaults.color = "#1d2733";

  var colours = { blue: "#1f5f8b", orange: "#d9822b", red: "#c0392b", green: "#2e8b57",
                  violet: "#6a4c93", grey: "#7f8c8d" };
  function points(values) {
    return data.x.map(function (x, i) { return { x: x, y: values[i] }; });
  }
  function line(label, values, colour, axis) {
    return { label: label, data: points(values), yAxisID: axis, borderColor: colour,
             backgroundColor: colour, borderWidth: 1.5, pointRadius: data.x.length > 60 ? 0 : 2,
             tension: 0 };
  }
  function title(text) { return { display: true, text: text }; }
  var perPoint = data.group > 1 ? " (per " + data.group + " commits)" : "";
  var xAxis = { type: "linear", bounds: "data", title: title(data.x_label),
                ticks: { precision: 0 } };
  var hover = { mode: "nearest", axis: "x", intersect: false };

  function make(id, config) {
    try {
      new Chart(document.getElementById(id), config);
      drawn += 1;
    } catch (error) {
      fail(id + ": " + error.message);
    }
  }

  make("chart-objective", {
    type: "line",
    data: { datasets: [line("weight", data.weight, colours.blue, "y"),
                       line("pairs", data.pairs, colours.orange, "y1")] },
    options: { interaction: hover, scales: {
      x: xAxis,
      y: { position: "left", title: title("weight") },
      y1: { position: "right", title: title("pairs"), grid: { drawOnChartArea: false } } } }
  });
  make("chart-changes", {
    type: "bar",
    data: { labels: data.x, datasets: [
      { label: "removed" + perPoint, data: data.removed, backgroundColor: colours.red },
      { label: "added" + perPoint, data: data.added, backgroundColor: colours.green }] },
    options: { interaction: hover, scales: {
      x: { stacked: true, title: title(data.x_label) },
      y: { stacked: true, beginAtZero: true, title: title("pairs changed"),
           ticks: { precision: 0 } } } }
  });
  make("chart-latency", {
    type: "bar",
    data: { labels: data.latency.labels, datasets: [
      { label: "commits", data: data.latency.counts, backgroundColor: colours.violet,
        barPercentage: 1.0, categoryPercentage: 0.95 }] },
    options: { plugins: { legend: { display: false } }, scales: {
      x: { title: title("repair time (\u00b5s), bins double in width") },
      y: { beginAtZero: true, title: title("commits"), ticks: { precision: 0 } } } }
  });
  var maxNote = data.group > 1 ? " (largest per " + data.group + " commits)" : "";
  make("chart-region", {
    type: "line",
    data: { datasets: [line("vertices touched" + maxNote, data.touched, colours.blue, "y"),
                       line("searches" + maxNote, data.searches, colours.orange, "y1"),
                       line("search roots" + maxNote, data.roots, colours.grey, "y1")] },
    options: { interaction: hover, scales: {
      x: xAxis,
      y: { position: "left", beginAtZero: true, title: title("vertices touched") },
      y1: { position: "right", beginAtZero: true, title: title("searches, search roots"),
            grid: { drawOnChartArea: false }, ticks: { precision: 0 } } } }
  });
  make("chart-busiest", {
    type: "bar",
    data: { labels: data.busiest.ids, datasets: [
      { label: "pair changes", data: data.busiest.changes, backgroundColor: colours.green }] },
    options: { indexAxis: "y", plugins: { legend: { display: false } }, scales: {
      x: { beginAtZero: true, title: title("times its pair changed"), ticks: { precision: 0 } },
      y: { title: title("vertex") } } }
  });
  body.dataset.chartsDrawn = String(drawn);

  // A canvas counts as drawn when some pixel is not fully transparent.
  function inspect() {
    var canvases = document.querySelectorAll("canvas");
    for (var c = 0; c < canvases.length; c += 1) {
      var canvas = canvases[c];
      var seen = false;
      try {
        if (canvas.width > 0 && canvas.height > 0) {
          var pixels = canvas.getContext("2d").getImageData(0, 0, canvas.width, canvas.height).data;
          for (var i = 3; i < pixels.length; i += 4) {
            if (pixels[i] !== 0) { seen = true; break; }
          }
        }
      } catch (error) {
        fail(canvas.id + ": " + error.message);
      }
      canvas.dataset.drawn = seen ? "yes" : "no";
    }
    body.dataset.inspected = String(canvases.length);
  }
  inspect();
  window.requestAnimationFrame(inspect);
  window.addEventListener("load", inspect);
})();
)js";

}  // namespace

std::vector<HistogramBin> doubling_histogram(const std::vector<std::uint64_t>& values) {
  if (values.empty()) return {};
  const auto [low, high] = std::minmax_element(values.begin(), values.end());
  const std::size_t first = bin_of(*low);
  const std::size_t last = bin_of(*high);
  std::vector<HistogramBin> bins;
  for (std::size_t bin = first; bin <= last; ++bin) bins.push_back({bin_low(bin), bin_high(bin), 0});
  for (const std::uint64_t value : values) ++bins[bin_of(value) - first].count;
  return bins;
}

std::string html_escape(std::string_view text) {
  std::string out;
  out.reserve(text.size());
  for (const char c : text) {
    switch (c) {
      case '&': out += "&amp;"; break;
      case '<': out += "&lt;"; break;
      case '>': out += "&gt;"; break;
      case '"': out += "&quot;"; break;
      case '\'': out += "&#39;"; break;
      default: out += c;
    }
  }
  return out;
}

std::string script_safe_json(std::string_view json) {
  std::string out;
  out.reserve(json.size());
  for (const char c : json) {
    switch (c) {
      case '<': out += "\\u003c"; break;
      case '>': out += "\\u003e"; break;
      case '&': out += "\\u0026"; break;
      default: out += c;
    }
  }
  return out;
}

std::string script_safe_code(std::string_view code) {
  std::string out;
  out.reserve(code.size());
  constexpr std::string_view kEnd = "</script";
  for (std::size_t i = 0; i < code.size(); ++i) {
    bool match = code.size() - i >= kEnd.size();
    for (std::size_t k = 0; match && k < kEnd.size(); ++k) {
      match = std::tolower(static_cast<unsigned char>(code[i + k])) == kEnd[k];
    }
    if (match) {
      out += "<\\/";
      ++i;  // the '/' is written; the loop goes on after it
      continue;
    }
    out += code[i];
  }
  return out;
}

std::string chart_js_path() {
  if (const char* chosen = std::getenv("YOKE_CHART_JS"); chosen != nullptr && *chosen != '\0') {
    if (!std::filesystem::is_regular_file(chosen)) {
      throw CliError(std::string("--report: Chart.js not found at ") + chosen +
                     " (YOKE_CHART_JS); install the Debian package libjs-chart.js");
    }
    return chosen;
  }
  for (const char* candidate : kChartJsCandidates) {
    if (std::filesystem::is_regular_file(candidate)) return candidate;
  }
  throw CliError(
      "--report: Chart.js not found in /usr/share/javascript/chart.js/; install the Debian "
      "package libjs-chart.js (apt-get install libjs-chart.js) or point YOKE_CHART_JS at "
      "chart.umd.js or chart.min.js");
}

void ReplayReport::record(const Pool& pool, const CommitResult& result, std::size_t events,
                          std::uint64_t repair_ns, std::optional<std::uint64_t> seq) {
  if (mode_.empty()) mode_ = mode_name(pool.mode());
  ReportCommit commit;
  commit.index = commits_.size() + 1;
  commit.seq = seq;
  commit.wall_us = next_wall_us_;
  next_wall_us_.reset();
  commit.weight = result.weight;
  commit.pairs = result.pairs;
  commit.removed = result.diff.removed.size();
  commit.added = result.diff.added.size();
  commit.events = events;
  commit.repair_us = repair_ns / 1000;
  commit.roots = result.stats.roots;
  commit.searches = result.stats.searches;
  commit.touched = result.stats.vertices_touched;
  commits_.push_back(commit);
  for (const auto* list : {&result.diff.removed, &result.diff.added}) {
    for (const MatchedPair& pair : *list) {
      ++changes_[pair.a];
      ++changes_[pair.b];
    }
  }
}

std::vector<std::pair<VertexKey, std::uint64_t>> ReplayReport::busiest() const {
  std::vector<std::pair<VertexKey, std::uint64_t>> all(changes_.begin(), changes_.end());
  const auto more_first = [](const auto& x, const auto& y) {
    return x.second != y.second ? x.second > y.second : x.first < y.first;
  };
  const std::size_t keep = std::min(kBusiest, all.size());
  std::partial_sort(all.begin(), all.begin() + static_cast<std::ptrdiff_t>(keep), all.end(),
                    more_first);
  all.resize(keep);
  return all;
}

std::string ReplayReport::data_json() const {
  const bool by_seq = !commits_.empty() && commits_.front().seq.has_value();
  const std::size_t group =
      std::max<std::size_t>(1, (commits_.size() + kMaxPoints - 1) / kMaxPoints);

  // The points: one per group of `group` consecutive commits.
  struct Point {
    std::uint64_t x = 0;
    Weight weight = 0;
    std::uint64_t pairs = 0, removed = 0, added = 0, touched = 0, searches = 0, roots = 0;
  };
  std::vector<Point> points;
  for (std::size_t begin = 0; begin < commits_.size(); begin += group) {
    const std::size_t end = std::min(commits_.size(), begin + group);
    Point point;
    const ReportCommit& last = commits_[end - 1];
    point.x = by_seq ? last.seq.value_or(0) : last.index;
    point.weight = last.weight;
    point.pairs = last.pairs;
    for (std::size_t i = begin; i < end; ++i) {
      point.removed += commits_[i].removed;
      point.added += commits_[i].added;
      point.touched = std::max(point.touched, commits_[i].touched);
      point.searches = std::max(point.searches, commits_[i].searches);
      point.roots = std::max(point.roots, commits_[i].roots);
    }
    points.push_back(point);
  }

  std::ostringstream out;
  JsonWriter json(out);
  json.begin_object();
  json.key("x_label");
  json.string(by_seq ? "seq" : "commit");
  json.key("group");
  json.unsigned_integer(group);
  json.key("commits");
  json.unsigned_integer(commits_.size());
  const auto series = [&](const char* name, auto field) {
    json.key(name);
    json.begin_array();
    for (const Point& point : points) field(point);
    json.end_array();
  };
  series("x", [&](const Point& p) { json.unsigned_integer(p.x); });
  series("weight", [&](const Point& p) { json.integer(p.weight); });
  series("pairs", [&](const Point& p) { json.unsigned_integer(p.pairs); });
  series("removed", [&](const Point& p) { json.unsigned_integer(p.removed); });
  series("added", [&](const Point& p) { json.unsigned_integer(p.added); });
  series("touched", [&](const Point& p) { json.unsigned_integer(p.touched); });
  series("searches", [&](const Point& p) { json.unsigned_integer(p.searches); });
  series("roots", [&](const Point& p) { json.unsigned_integer(p.roots); });

  std::vector<std::uint64_t> repair_us;
  repair_us.reserve(commits_.size());
  for (const ReportCommit& commit : commits_) repair_us.push_back(commit.repair_us);
  const std::vector<HistogramBin> bins = doubling_histogram(repair_us);
  json.key("latency");
  json.begin_object();
  json.key("labels");
  json.begin_array();
  for (const HistogramBin& bin : bins) json.string(bin_label(bin));
  json.end_array();
  json.key("counts");
  json.begin_array();
  for (const HistogramBin& bin : bins) json.unsigned_integer(bin.count);
  json.end_array();
  json.end_object();

  // Ids as strings: JavaScript numbers hold integers exactly only up to 2^53.
  const auto top = busiest();
  json.key("busiest");
  json.begin_object();
  json.key("ids");
  json.begin_array();
  for (const auto& [vertex, count] : top) json.string(std::to_string(vertex));
  json.end_array();
  json.key("changes");
  json.begin_array();
  for (const auto& [vertex, count] : top) json.unsigned_integer(count);
  json.end_array();
  json.end_object();
  json.end_object();
  json.finish();
  std::string text = out.str();
  while (!text.empty() && text.back() == '\n') text.pop_back();
  return text;
}

std::string ReplayReport::header_rows() const {
  std::string rows;
  if (source_.journal) {
    rows += row("Source", "summary-source",
                html_escape(source_.log_kind) + " <code>" + html_escape(source_.path) +
                    "</code>, pool <code>" + html_escape(source_.pool) + "</code>");
  } else {
    rows += row("Source", "summary-source",
                "event script <code>" + html_escape(source_.path) + "</code>");
  }
  rows += row("Mode", "summary-mode", html_escape(mode_.empty() ? "-" : mode_));
  std::uint64_t events = 0;
  std::uint64_t changes = 0;
  std::vector<std::uint64_t> repair_us;
  for (const ReportCommit& commit : commits_) {
    events += commit.events;
    changes += commit.removed + commit.added;
    repair_us.push_back(commit.repair_us);
  }
  std::sort(repair_us.begin(), repair_us.end());
  rows += row("Commits", "summary-commits", std::to_string(commits_.size()));
  rows += row("Events", "summary-events", std::to_string(events));
  const bool any = !commits_.empty();
  rows += row("Final weight", "summary-weight", any ? std::to_string(commits_.back().weight) : "-");
  rows += row("Final pairs", "summary-pairs", any ? std::to_string(commits_.back().pairs) : "-");
  rows += row("Pair changes", "summary-changes",
              std::to_string(changes) + " (pairs removed plus pairs added, all commits)");
  if (any && commits_.front().seq) {
    rows += row("Seqs", "summary-seqs",
                std::to_string(*commits_.front().seq) + " &ndash; " +
                    std::to_string(commits_.back().seq.value_or(0)));
  }
  if (any && commits_.front().wall_us && commits_.back().wall_us) {
    const std::uint64_t first = *commits_.front().wall_us;
    const std::uint64_t last = *commits_.back().wall_us;
    rows += row("Time", "summary-time",
                html_escape(utc_text(first)) + " &ndash; " + html_escape(utc_text(last)) + " (" +
                    duration_text(last >= first ? last - first : 0) + ")");
  }
  rows += row("Repair time", "summary-repair",
              "p50 " + std::to_string(percentile(repair_us, 50)) + " &micro;s &middot; p99 " +
                  std::to_string(percentile(repair_us, 99)) + " &micro;s &middot; max " +
                  std::to_string(percentile(repair_us, 100)) + " &micro;s");
  return rows;
}

std::string ReplayReport::html(std::string_view chart_js) const {
  const std::size_t group =
      std::max<std::size_t>(1, (commits_.size() + kMaxPoints - 1) / kMaxPoints);
  const std::string x_name = !commits_.empty() && commits_.front().seq ? "seq" : "commit";
  const std::string grouped =
      group > 1 ? " Each point stands for " + std::to_string(group) + " consecutive commits." : "";

  std::string page;
  page.reserve(chart_js.size() + 64 * 1024);
  page += "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n";
  page += "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n";
  page += "<title>yoke replay: " + html_escape(source_.path) + "</title>\n";
  page += "<style>" + std::string(kStyle) + "</style>\n</head>\n<body>\n";
  page += "<header>\n<h1>yoke replay report</h1>\n";
  page += "<p class=\"caution\" id=\"caution\">" + html_escape(kCaution) + "</p>\n</header>\n";
  page += "<table class=\"summary\">\n<tbody>\n" + header_rows() + "</tbody>\n</table>\n";

  const auto section = [&](const char* id, const char* heading, const std::string& note,
                           const char* classes, const char* frame) {
    page += std::string("<section class=\"chart") + classes + "\">\n<h2>" + heading + "</h2>\n";
    page += "<p class=\"note\">" + note + "</p>\n";
    page += std::string("<div class=\"frame") + frame + "\"><canvas id=\"" + id +
            "\" role=\"img\" aria-label=\"" + heading + "\"></canvas></div>\n</section>\n";
  };
  page += "<div class=\"charts\">\n";
  section("chart-objective", "Weight and pairs",
          "The matching's total weight (left axis) and its number of pairs (right axis) after "
          "each " + x_name + "." + grouped,
          " wide", "");
  section("chart-changes", "Pairs changed per commit",
          "Pairs each commit removed and added (a pair whose weight changed but stayed matched "
          "counts as neither)." + grouped,
          "", "");
  section("chart-latency", "Repair time",
          "How many commits took each repair time (Pool::commit alone, as <code>--stats</code> "
          "measures it). Timings vary between runs.",
          "", "");
  section("chart-region", "Repair region",
          "Vertex visits of each repair (scans and dual pushes), the alternating trees it grew "
          "and the exposed vertices that started them (a commit into an empty pool is a solve "
          "from scratch, usually the largest)." + grouped,
          " wide", "");
  section("chart-busiest", "Busiest vertices",
          "The " + std::to_string(kBusiest) +
              " vertices whose pair changed most often (a removed or added pair counts for both "
              "ends).",
          " wide", " tall");
  page += "</div>\n";
  page += "<footer>Made by <code>yoke replay --report</code>. Charts drawn with Chart.js "
          "(MIT License), included in this file.</footer>\n";

  page += "<script id=\"yoke-chart-js\">\n";
  page += script_safe_code(chart_js);
  page += "\n</script>\n";
  page += "<script id=\"yoke-data\" type=\"application/json\">";
  page += script_safe_json(data_json());
  page += "</script>\n<script>";
  page += kPageScript;
  page += "</script>\n</body>\n</html>\n";
  return page;
}

void ReplayReport::write(const std::string& path) const {
  const std::string library_path = chart_js_path();
  std::string library;
  try {
    library = read_whole_input(library_path);
  } catch (const CliError& error) {
    throw CliError(std::string("--report: ") + error.what() +
                   " (Chart.js, from the Debian package libjs-chart.js)");
  }
  const std::string page = html(library);
  std::ofstream out = open_output_file(path);
  out.write(page.data(), static_cast<std::streamsize>(page.size()));
  close_output_file(out, path);
}

}  // namespace yoke::cli
