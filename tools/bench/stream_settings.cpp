#include "tools/bench/stream_settings.h"

namespace yoke::bench {
namespace {

// 100000 -> "100k", 2500 -> "2500".
std::string size_name(std::size_t vertices) {
  if (vertices >= 1000 && vertices % 1000 == 0) return std::to_string(vertices / 1000) + "k";
  return std::to_string(vertices);
}

std::string batch_name(std::size_t batch) {
  std::string name = "b";  // not "b" + to_string(): GCC 12 warns falsely (-Wrestrict) on that
  return name += std::to_string(batch);
}

}  // namespace

std::vector<std::size_t> default_sizes() { return {100000, 300000}; }
std::vector<std::size_t> quick_sizes() { return {2000, 5000}; }

std::size_t default_events(std::size_t vertices, bool quick) {
  if (quick) return 1000;
  return vertices <= 150000 ? 20000 : 10000;
}

std::vector<StreamSetting> make_settings(const std::vector<std::size_t>& sizes,
                                         std::optional<std::size_t> events, bool quick) {
  std::vector<StreamSetting> settings;
  for (const std::size_t n : sizes) {
    for (const std::size_t batch : kCommitSizes) {
      StreamSetting s;
      s.graph = "city-" + size_name(n);
      s.name = s.graph + "/" + batch_name(batch);
      s.vertices = n;
      s.batch = batch;
      s.events = events.value_or(default_events(n, quick));
      settings.push_back(s);
    }
  }
  return settings;
}

bool setting_matches(const StreamSetting& setting, const std::string& pattern) {
  return pattern == setting.name || pattern == setting.graph ||
         pattern == batch_name(setting.batch);
}

}  // namespace yoke::bench
