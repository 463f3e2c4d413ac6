#include "progress_bar.h"

#include <unistd.h>

#include <algorithm>
#include <cstdio>
#include <utility>

namespace yoke::cli {
namespace {

constexpr std::size_t kBarWidth = 30;

}  // namespace

bool ProgressBar::wanted() { return isatty(STDERR_FILENO) == 1 && isatty(STDOUT_FILENO) != 1; }

ProgressBar::ProgressBar(std::uint64_t total, std::string unit, std::ostream& out, bool enabled,
                         Clock::duration interval)
    : total_(total),
      unit_(std::move(unit)),
      out_(out),
      enabled_(enabled),
      interval_(interval),
      start_(Clock::now()),
      last_draw_(start_) {}

void ProgressBar::maybe_draw() {
  const Clock::time_point now = Clock::now();
  if (now - last_draw_ < interval_) return;
  last_draw_ = now;
  ++draws_;
  // \r back to the line's start, \x1b[K erases what a longer earlier draw left.
  out_ << '\r' << render(done_, total_, unit_, now - start_) << "\x1b[K" << std::flush;
}

void ProgressBar::finish() {
  if (!enabled_) return;
  enabled_ = false;
  if (draws_ > 0) out_ << "\r\x1b[K" << std::flush;
}

std::string ProgressBar::render(std::uint64_t done, std::uint64_t total, const std::string& unit,
                                Clock::duration elapsed) {
  const std::uint64_t shown = total == 0 ? done : std::min(done, total);
  const double fraction =
      total == 0 ? 0.0 : static_cast<double>(shown) / static_cast<double>(total);
  const auto filled = static_cast<std::size_t>(fraction * kBarWidth);
  std::string text = "replay [";
  text.append(filled, '#');
  text.append(kBarWidth - filled, '-');
  char numbers[96];
  std::snprintf(numbers, sizeof numbers, "] %3d%% %llu/%llu %s",
                static_cast<int>(fraction * 100), static_cast<unsigned long long>(shown),
                static_cast<unsigned long long>(total), unit.c_str());
  text += numbers;
  const auto elapsed_ms = std::chrono::duration_cast<std::chrono::milliseconds>(elapsed).count();
  if (shown > 0 && elapsed_ms > 0 && total > shown) {
    const auto left_s = static_cast<unsigned long long>(
        static_cast<double>(elapsed_ms) / 1000.0 * static_cast<double>(total - shown) /
        static_cast<double>(shown) + 0.5);
    char eta[48];
    std::snprintf(eta, sizeof eta, "  eta %llu:%02llu", left_s / 60, left_s % 60);
    text += eta;
  }
  return text;
}

}  // namespace yoke::cli
