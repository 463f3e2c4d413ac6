#include "snapshot_store.h"

#include <algorithm>
#include <charconv>
#include <cstdio>
#include <string>

#include "daemon/journal/journal_error.h"

namespace yoke::daemon {
namespace {

constexpr std::string_view kPrefix = "snapshot-";
constexpr std::string_view kSuffix = ".yks";
constexpr std::size_t kDigits = 20;

// The journal position a file name holds, or nothing for any other file.
std::optional<std::uint64_t> position_of(const std::string& name) {
  if (name.size() != kPrefix.size() + kDigits + kSuffix.size() || !name.starts_with(kPrefix) ||
      !name.ends_with(kSuffix)) {
    return std::nullopt;
  }
  std::uint64_t position = 0;
  const char* first = name.data() + kPrefix.size();
  const auto [end, error] = std::from_chars(first, first + kDigits, position);
  if (error != std::errc() || end != first + kDigits) return std::nullopt;
  return position;
}

}  // namespace

SnapshotStore::SnapshotStore(std::filesystem::path directory, std::size_t keep)
    : directory_(std::move(directory)), keep_(std::max<std::size_t>(keep, 1)) {
  std::error_code error;
  std::filesystem::create_directories(directory_, error);
  if (error) {
    throw journal::Error("cannot create " + directory_.string() + ": " + error.message());
  }
}

std::filesystem::path SnapshotStore::path_for(std::uint64_t journal_position) const {
  char digits[kDigits + 1];
  std::snprintf(digits, sizeof digits, "%020llu",
                static_cast<unsigned long long>(journal_position));
  return directory_ / (std::string(kPrefix) + digits + std::string(kSuffix));
}

std::filesystem::path SnapshotStore::write(std::uint64_t journal_position,
                                           const std::vector<v1::SnapshotRecord>& pools) {
  const std::filesystem::path path = path_for(journal_position);
  write_snapshot_file(path, journal_position, pools);
  prune();
  return path;
}

std::vector<std::uint64_t> SnapshotStore::positions() const {
  std::vector<std::uint64_t> found;
  for (const auto& entry : std::filesystem::directory_iterator(directory_)) {
    if (auto position = position_of(entry.path().filename().string())) found.push_back(*position);
  }
  std::sort(found.rbegin(), found.rend());
  return found;
}

std::optional<std::uint64_t> SnapshotStore::oldest_kept() const {
  const std::vector<std::uint64_t> kept = positions();
  if (kept.empty()) return std::nullopt;
  return kept.back();
}

void SnapshotStore::prune() {
  const std::vector<std::uint64_t> kept = positions();
  for (std::size_t i = keep_; i < kept.size(); ++i) std::filesystem::remove(path_for(kept[i]));
  for (const auto& entry : std::filesystem::directory_iterator(directory_)) {
    if (entry.path().extension() == ".tmp") std::filesystem::remove(entry.path());
  }
}

}  // namespace yoke::daemon
