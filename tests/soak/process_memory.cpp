#include "process_memory.h"

#include <algorithm>
#include <fstream>
#include <sstream>

namespace yoke::soak {

std::optional<std::uint64_t> resident_kib(pid_t pid) {
  std::ifstream status("/proc/" + std::to_string(pid) + "/status");
  std::string line;
  while (std::getline(status, line)) {
    if (line.rfind("VmRSS:", 0) != 0) continue;
    std::istringstream fields(line.substr(6));
    std::uint64_t kib = 0;
    if (fields >> kib) return kib;
  }
  return std::nullopt;
}

MemoryTrend memory_trend(const std::vector<std::uint64_t>& samples_kib, double warmup,
                         double tolerance) {
  MemoryTrend trend;
  const auto skip = static_cast<std::size_t>(static_cast<double>(samples_kib.size()) *
                                             std::clamp(warmup, 0.0, 1.0));
  const std::size_t rest = samples_kib.size() - std::min(skip, samples_kib.size());
  if (rest < 3) {
    trend.problem = "only " + std::to_string(rest) +
                    " samples after warm-up (3 needed): sample more often or run longer";
    return trend;
  }
  const std::size_t third = rest / 3;
  const auto first = samples_kib.begin() + static_cast<std::ptrdiff_t>(skip);
  trend.early_kib = *std::max_element(first, first + static_cast<std::ptrdiff_t>(third));
  trend.late_kib = *std::max_element(samples_kib.end() - static_cast<std::ptrdiff_t>(third),
                                     samples_kib.end());
  trend.ratio = trend.early_kib > 0
                    ? static_cast<double>(trend.late_kib) / static_cast<double>(trend.early_kib)
                    : 0;
  trend.flat = trend.early_kib > 0 && trend.ratio <= 1.0 + tolerance;
  return trend;
}

}  // namespace yoke::soak
