#include "snapshot_directory.h"

#include <algorithm>
#include <charconv>
#include <cstdio>
#include <string>

#include "daemon/journal/journal_error.h"
#include "daemon/journal/posix_file.h"

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

// Runs a file step, rethrowing the journal's file errors (posix_file.h) as storage errors.
template <typename Step>
auto as_storage_errors(Step step) -> decltype(step()) {
  try {
    return step();
  } catch (const journal::Error& error) {
    throw storage::LogError(error.what());
  } catch (const std::filesystem::filesystem_error& error) {
    throw storage::LogError(error.what());
  }
}

}  // namespace

SnapshotDirectory::SnapshotDirectory(std::filesystem::path directory, std::size_t keep)
    : directory_(std::move(directory)), keep_(std::max<std::size_t>(keep, 1)) {
  // Durably: a power loss must not take the directory, and the snapshots in it, with it after
  // the journal was trimmed behind them.
  as_storage_errors([&] { journal::create_directories_durably(directory_); });
}

std::string SnapshotDirectory::describe() const { return "snapshots " + directory_.string(); }

std::filesystem::path SnapshotDirectory::path_for(std::uint64_t journal_position) const {
  char digits[kDigits + 1];
  std::snprintf(digits, sizeof digits, "%020llu",
                static_cast<unsigned long long>(journal_position));
  return directory_ / (std::string(kPrefix) + digits + std::string(kSuffix));
}

std::string SnapshotDirectory::write(storage::Position position,
                                     const std::vector<v1::SnapshotRecord>& pools) {
  return as_storage_errors([&] {
    const std::filesystem::path path = path_for(position);
    write_snapshot_file(path, position, pools);
    prune();
    return path.string();
  });
}

std::vector<storage::Position> SnapshotDirectory::positions() const {
  return as_storage_errors([&] {
    std::vector<storage::Position> found;
    for (const auto& entry : std::filesystem::directory_iterator(directory_)) {
      if (auto position = position_of(entry.path().filename().string())) found.push_back(*position);
    }
    std::sort(found.rbegin(), found.rend());
    return found;
  });
}

storage::SnapshotContents SnapshotDirectory::read(storage::Position position) const {
  const std::filesystem::path path = path_for(position);
  storage::SnapshotContents contents = as_storage_errors([&] { return read_snapshot_file(path); });
  // Recovery replays the journal from the name's position: a header that says otherwise (a
  // file copied under another name) would skip or repeat records.
  if (contents.position != position) {
    throw SnapshotDamage("snapshot " + path.string() + " holds journal position " +
                         std::to_string(contents.position) + ", not the one its name says");
  }
  return contents;
}

std::optional<storage::Position> SnapshotDirectory::oldest_needed() const {
  const std::vector<storage::Position> kept = positions();
  if (kept.empty()) return std::nullopt;
  return kept.back();
}

void SnapshotDirectory::prune() {
  const std::vector<storage::Position> kept = positions();
  for (std::size_t i = keep_; i < kept.size(); ++i) journal::remove_file(path_for(kept[i]));
  for (const auto& entry : std::filesystem::directory_iterator(directory_)) {
    if (entry.path().extension() == ".tmp") journal::remove_file(entry.path());
  }
}

}  // namespace yoke::daemon
