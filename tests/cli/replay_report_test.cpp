// The `yoke replay --report` page (tools/cli/replay_report.h): escaping, the chart data of a
// small hand-made replay (expected values derived in the comments), the doubling histogram, the
// page around it, and the built binary writing a page and refusing without Chart.js. The
// rendering itself is checked in a headless browser by tests/e2e/test_report.py.
#include <gtest/gtest.h>

#include <cstdlib>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "yoke/events.h"
#include "yoke/pool.h"
#include "run_yoke.h"
#include "tools/cli/cli_error.h"
#include "tools/cli/replay_report.h"

namespace yoke::cli {
namespace {

Event set(VertexKey u, VertexKey v, Weight w) { return {EventKind::set_edge, u, v, w}; }

std::size_t count_of(const std::string& text, const std::string& part) {
  std::size_t count = 0;
  for (std::size_t at = text.find(part); at != std::string::npos; at = text.find(part, at + 1)) {
    ++count;
  }
  return count;
}

// Two commits on a path: {1-2: 5, 2-3: 7} takes 2-3 (weight 7, one pair); then 3-4: 10 makes
// {1-2, 3-4} (weight 15) best: 2-3 removed, 1-2 and 3-4 added. Pair changes per vertex:
// 2 and 3 three times each (added, removed, added), 1 and 4 once.
ReplayReport two_commit_report(ReportSource source, bool with_seqs) {
  ReplayReport report(std::move(source));
  Pool pool(Mode::max_weight);
  const std::vector<std::vector<Event>> batches = {{set(1, 2, 5), set(2, 3, 7)}, {set(3, 4, 10)}};
  std::uint64_t seq = 40;
  for (const auto& batch : batches) {
    const CommitResult result = pool.commit(batch);
    seq += 3;
    if (with_seqs) report.note_wall_time(1'700'000'000'000'000 + seq * 1'000'000);
    report.record(pool, result, batch.size(), 2500, with_seqs ? std::optional(seq) : std::nullopt);
  }
  return report;
}

TEST(ReplayReport, HtmlEscapeCoversTextAndQuotedAttributes) {
  EXPECT_EQ(html_escape("<a href=\"x\">Tom & 'Jerry'</a>"),
            "&lt;a href=&quot;x&quot;&gt;Tom &amp; &#39;Jerry&#39;&lt;/a&gt;");
  EXPECT_EQ(html_escape("plain/path 7.txt"), "plain/path 7.txt");
}

TEST(ReplayReport, ScriptSafeJsonStaysTheSameJson) {
  const std::string json = R"({"s":"</script><!-- & -->"})";
  const std::string safe = script_safe_json(json);
  EXPECT_EQ(safe, R"({"s":"\u003c/script\u003e\u003c!-- \u0026 --\u003e"})");
  EXPECT_EQ(safe.find('<'), std::string::npos);
  EXPECT_EQ(nlohmann::json::parse(safe), nlohmann::json::parse(json));
}

TEST(ReplayReport, ScriptSafeCodeBreaksEveryClosingScriptTag) {
  EXPECT_EQ(script_safe_code("a</SCRIPT>b</script c</scrip"), "a<\\/SCRIPT>b<\\/script c</scrip");
  EXPECT_EQ(script_safe_code("x < y && y > z"), "x < y && y > z");
}

TEST(ReplayReport, DoublingHistogramBins) {
  EXPECT_TRUE(doubling_histogram({}).empty());

  // 0 -> [0,1); 1 -> [1,2); 3, 3 -> [2,4); 900 -> [512,1024); the bins between are empty.
  const auto bins = doubling_histogram({3, 900, 0, 1, 3});
  ASSERT_EQ(bins.size(), 11u);
  EXPECT_EQ(bins[0].low, 0u);
  EXPECT_EQ(bins[0].high, 1u);
  EXPECT_EQ(bins[0].count, 1u);
  EXPECT_EQ(bins[1].low, 1u);
  EXPECT_EQ(bins[1].count, 1u);
  EXPECT_EQ(bins[2].low, 2u);
  EXPECT_EQ(bins[2].high, 4u);
  EXPECT_EQ(bins[2].count, 2u);
  for (std::size_t i = 3; i < 10; ++i) EXPECT_EQ(bins[i].count, 0u) << i;
  EXPECT_EQ(bins[10].low, 512u);
  EXPECT_EQ(bins[10].high, 1024u);
  EXPECT_EQ(bins[10].count, 1u);

  // From the smallest value's bin only: 5 and 6 share [4,8); 8 starts [8,16).
  const auto narrow = doubling_histogram({5, 6, 8});
  ASSERT_EQ(narrow.size(), 2u);
  EXPECT_EQ(narrow[0].low, 4u);
  EXPECT_EQ(narrow[0].count, 2u);
  EXPECT_EQ(narrow[1].low, 8u);
  EXPECT_EQ(narrow[1].high, 16u);
  EXPECT_EQ(narrow[1].count, 1u);

  const auto top = doubling_histogram({UINT64_MAX});
  ASSERT_EQ(top.size(), 1u);
  EXPECT_EQ(top[0].low, std::uint64_t{1} << 63);
  EXPECT_EQ(top[0].high, UINT64_MAX);
}

TEST(ReplayReport, DataJsonOfTwoCommits) {
  const ReplayReport report = two_commit_report({"path.events", false, "", ""}, false);
  const auto data = nlohmann::json::parse(report.data_json());
  EXPECT_EQ(data["x_label"], "commit");
  EXPECT_EQ(data["group"], 1);
  EXPECT_EQ(data["commits"], 2);
  EXPECT_EQ(data["x"], nlohmann::json({1, 2}));
  EXPECT_EQ(data["weight"], nlohmann::json({7, 15}));
  EXPECT_EQ(data["pairs"], nlohmann::json({1, 2}));
  EXPECT_EQ(data["removed"], nlohmann::json({0, 1}));
  EXPECT_EQ(data["added"], nlohmann::json({1, 2}));
  EXPECT_EQ(data["touched"].size(), 2u);
  EXPECT_EQ(data["searches"].size(), 2u);
  EXPECT_EQ(data["roots"].size(), 2u);
  // Both repairs "took" 2500 ns = 2 us: one bin [2,4) holding both.
  EXPECT_EQ(data["latency"]["labels"], nlohmann::json({"2-4"}));
  EXPECT_EQ(data["latency"]["counts"], nlohmann::json({2}));
  // Ids as strings (exact beyond 2^53); ties by smaller id.
  EXPECT_EQ(data["busiest"]["ids"], nlohmann::json({"2", "3", "1", "4"}));
  EXPECT_EQ(data["busiest"]["changes"], nlohmann::json({3, 3, 1, 1}));
}

TEST(ReplayReport, JournalReplaysUseSeqsAndShowTheTimeRange) {
  const ReplayReport report =
      two_commit_report({"/data/yoked", true, "harbour", "yoked data directory"}, true);
  const auto data = nlohmann::json::parse(report.data_json());
  EXPECT_EQ(data["x_label"], "seq");
  EXPECT_EQ(data["x"], nlohmann::json({43, 46}));

  const std::string page = report.html("/* stand-in library */");
  EXPECT_NE(page.find("<td id=\"summary-seqs\">43 &ndash; 46</td>"), std::string::npos);
  // 1.7e15 us + 43 s = 2023-11-14 22:14:03 UTC; three seconds later the last commit.
  EXPECT_NE(page.find("2023-11-14 22:14:03 UTC &ndash; 2023-11-14 22:14:06 UTC (3.0 s)"),
            std::string::npos);
  EXPECT_NE(page.find("pool <code>harbour</code>"), std::string::npos);
}

TEST(ReplayReport, LongReplaysAreDrawnInGroups) {
  ReplayReport report({"long.events", false, "", ""});
  Pool pool(Mode::max_weight);
  const std::size_t commits = ReplayReport::kMaxPoints * 2 + 1;
  for (std::size_t i = 1; i <= commits; ++i) {
    const std::vector<Event> batch = {set(1, 2, static_cast<Weight>(i))};
    report.record(pool, pool.commit(batch), 1, 1000, std::nullopt);
  }
  const auto data = nlohmann::json::parse(report.data_json());
  // ceil(8001 / 4000) = 3 commits per point: 2667 points, at commits 3, 6, ..., 8001.
  EXPECT_EQ(data["group"], 3);
  ASSERT_EQ(data["x"].size(), 2667u);
  EXPECT_EQ(data["x"][0], 3);
  EXPECT_EQ(data["x"].back(), commits);
  EXPECT_EQ(data["weight"][0], 3);
  EXPECT_EQ(data["weight"].back(), commits);
  // Only the first commit changes pairs (1-2 added; later it only changes weight).
  EXPECT_EQ(data["added"][0], 1);
  EXPECT_EQ(data["added"][1], 0);
  EXPECT_EQ(data["latency"]["counts"], nlohmann::json({commits}));
}

TEST(ReplayReport, PageHoldsHeaderDataAndLibraryAndNoExternalReference) {
  const ReplayReport report = two_commit_report({"odd <&> name.events", false, "", ""}, false);
  const std::string page = report.html("var fake = '</script>';");
  EXPECT_EQ(page.rfind("<!DOCTYPE html>", 0), 0u);
  EXPECT_NE(page.find("<title>yoke replay: odd &lt;&amp;&gt; name.events</title>"),
            std::string::npos);
  EXPECT_NE(page.find("<td id=\"summary-commits\">2</td>"), std::string::npos);
  EXPECT_NE(page.find("<td id=\"summary-events\">3</td>"), std::string::npos);
  EXPECT_NE(page.find("<td id=\"summary-weight\">15</td>"), std::string::npos);
  EXPECT_NE(page.find("<td id=\"summary-pairs\">2</td>"), std::string::npos);
  EXPECT_NE(page.find("<td id=\"summary-mode\">max-weight</td>"), std::string::npos);
  EXPECT_NE(page.find("yoke&#39;s pairs are advisory; working-time, safety and labour rules "
                      "decide."),
            std::string::npos);
  EXPECT_NE(page.find("var fake = '<\\/script>';"), std::string::npos);
  // Three script elements: the library, the data, the page's own.
  EXPECT_EQ(count_of(page, "</script>"), 3u);
  for (const char* id : {"chart-objective", "chart-changes", "chart-latency", "chart-region",
                         "chart-busiest"}) {
    EXPECT_EQ(count_of(page, std::string("<canvas id=\"") + id + "\""), 1u) << id;
  }
  EXPECT_EQ(page.find("http://"), std::string::npos);
  EXPECT_EQ(page.find("https://"), std::string::npos);
  EXPECT_EQ(page.find("<link"), std::string::npos);
  EXPECT_EQ(page.find(" src="), std::string::npos);
}

TEST(ReplayReport, MissingChartJsIsAnErrorNamingThePackage) {
  ::setenv("YOKE_CHART_JS", "/nonexistent/chart.min.js", 1);
  const ReplayReport report = two_commit_report({"x.events", false, "", ""}, false);
  try {
    report.write("/nonexistent-dir/out.html");
    ADD_FAILURE() << "no error";
  } catch (const CliError& error) {
    EXPECT_NE(std::string(error.what()).find("libjs-chart.js"), std::string::npos)
        << error.what();
  }
  ::unsetenv("YOKE_CHART_JS");
}

// The built binary: a page next to the plain output, and exit 2 without Chart.js.
TEST(ReplayReport, YokeReplayWritesThePage) {
  const testing::TempDir dir;
  const std::string script = dir.write("path.events",
                                       "set 1 2 5\nset 2 3 7\ncommit\nset 3 4 10\ncommit\n");
  const std::string page_path = dir.file("out.html");
  const auto run = testing::run_yoke(dir, {"replay", script, "--report", page_path});
  ASSERT_EQ(run.exit_code, 0) << run.err;
  EXPECT_EQ(run.err, "");  // no progress bar: stderr is a file
  const std::string page = dir.read("out.html");
  EXPECT_NE(page.find("<td id=\"summary-weight\">15</td>"), std::string::npos);
  EXPECT_NE(page.find("<td id=\"summary-commits\">2</td>"), std::string::npos);
  EXPECT_NE(page.find("Chart.js v"), std::string::npos);  // the library's own banner

  ::setenv("YOKE_CHART_JS", "/nonexistent/chart.min.js", 1);
  const auto refused = testing::run_yoke(dir, {"replay", script, "--report", dir.file("2.html")});
  ::unsetenv("YOKE_CHART_JS");
  EXPECT_EQ(refused.exit_code, 2);
  EXPECT_NE(refused.err.find("libjs-chart.js"), std::string::npos) << refused.err;
}

}  // namespace
}  // namespace yoke::cli
