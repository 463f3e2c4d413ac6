// A progress bar on stderr for long runs of `yoke replay`: shown only when stderr is a terminal
// and stdout is not (when stdout is the terminal, the commit lines already show progress and
// would tear the bar), redrawn at most every 100 ms, and cleared at the end, so that nothing of
// it stays on the screen or reaches a file or a pipe.
#pragma once

#include <chrono>
#include <cstdint>
#include <ostream>
#include <string>

namespace yoke::cli {

class ProgressBar {
 public:
  using Clock = std::chrono::steady_clock;

  // Whether a bar belongs on this process's stderr (see above).
  static bool wanted();

  // `total` steps of `unit` (e.g. "commits"); nothing is drawn unless `enabled`. The first
  // draw comes one `interval` after construction, so short runs draw nothing.
  ProgressBar(std::uint64_t total, std::string unit, std::ostream& out, bool enabled,
              Clock::duration interval = std::chrono::milliseconds(100));
  ~ProgressBar() { finish(); }
  ProgressBar(const ProgressBar&) = delete;
  ProgressBar& operator=(const ProgressBar&) = delete;

  // One more step done; redraws when the interval has passed since the last draw.
  void step() {
    ++done_;
    if (enabled_) maybe_draw();
  }
  // Clears the bar's line if anything was drawn; later steps draw nothing.
  void finish();

  std::uint64_t done() const { return done_; }
  std::uint64_t draws() const { return draws_; }

  // The bar's text without control characters, e.g.
  // "replay [###########-------------------]  30% 300/1000 commits  eta 0:07"
  // (eta from the time so far; left out before the first step or when `elapsed` is zero).
  static std::string render(std::uint64_t done, std::uint64_t total, const std::string& unit,
                            Clock::duration elapsed);

 private:
  void maybe_draw();

  std::uint64_t total_;
  std::string unit_;
  std::ostream& out_;
  bool enabled_;
  Clock::duration interval_;
  Clock::time_point start_;
  Clock::time_point last_draw_;
  std::uint64_t done_ = 0;
  std::uint64_t draws_ = 0;
};

}  // namespace yoke::cli
