// The progress bar of `yoke replay` (tools/cli/progress_bar.h): its text, silence when disabled
// or before the first interval, and the clearing at the end. Whether it shows on a terminal and
// stays off a pipe is checked against the built binary under a pseudo-terminal in
// tests/e2e/test_report.py.
#include <gtest/gtest.h>

#include <chrono>
#include <sstream>
#include <string>

#include "tools/cli/progress_bar.h"

namespace yoke::cli {
namespace {

using namespace std::chrono_literals;

TEST(ProgressBar, RenderShowsBarPercentCountAndEta) {
  // 300 of 1000 in 7 s: 9 of 30 marks, 30%, and 700 more at the same pace take 16.3 s.
  EXPECT_EQ(ProgressBar::render(300, 1000, "commits", 7s),
            "replay [#########---------------------]  30% 300/1000 commits  eta 0:16");
  EXPECT_EQ(ProgressBar::render(0, 50, "commits", 1s),
            "replay [------------------------------]   0% 0/50 commits");
  EXPECT_EQ(ProgressBar::render(50, 50, "commits", 1s),
            "replay [##############################] 100% 50/50 commits");
  // More steps than the total (a journal replay stopped by --until never overshoots, but be
  // safe): shown as complete. A total of 0 shows an empty bar.
  EXPECT_EQ(ProgressBar::render(60, 50, "commits", 1s),
            "replay [##############################] 100% 50/50 commits");
  EXPECT_EQ(ProgressBar::render(3, 0, "commits", 1s),
            "replay [------------------------------]   0% 3/0 commits");
  // 1 of 1000 in 2 s: 1998 s left = 33:18.
  EXPECT_EQ(ProgressBar::render(1, 1000, "commits", 2s),
            "replay [------------------------------]   0% 1/1000 commits  eta 33:18");
}

TEST(ProgressBar, DisabledDrawsNothing) {
  std::ostringstream out;
  {
    ProgressBar bar(10, "commits", out, false, 0s);
    for (int i = 0; i < 10; ++i) bar.step();
    EXPECT_EQ(bar.done(), 10u);
    EXPECT_EQ(bar.draws(), 0u);
  }
  EXPECT_EQ(out.str(), "");
}

TEST(ProgressBar, NothingBeforeTheFirstInterval) {
  std::ostringstream out;
  {
    ProgressBar bar(10, "commits", out, true, 1h);
    for (int i = 0; i < 10; ++i) bar.step();
    EXPECT_EQ(bar.draws(), 0u);
  }
  EXPECT_EQ(out.str(), "");  // nothing drawn, nothing to clear
}

TEST(ProgressBar, RedrawsInPlaceAndClearsAtTheEnd) {
  std::ostringstream out;
  ProgressBar bar(4, "commits", out, true, 0s);
  for (int i = 0; i < 4; ++i) bar.step();
  EXPECT_EQ(bar.draws(), 4u);
  bar.finish();
  const std::string text = out.str();
  EXPECT_EQ(text.find('\n'), std::string::npos);  // one line, rewritten
  EXPECT_EQ(text.rfind("\r", 0), 0u);
  EXPECT_NE(text.find("1/4 commits"), std::string::npos);
  EXPECT_NE(text.find("4/4 commits\x1b[K"), std::string::npos);
  EXPECT_EQ(text.substr(text.size() - 4), "\r\x1b[K");
  // Finished: later steps and a second finish add nothing.
  bar.step();
  bar.finish();
  EXPECT_EQ(out.str(), text);
}

}  // namespace
}  // namespace yoke::cli
