#include "journal_test_util.h"

#include <fstream>
#include <iterator>
#include <stdexcept>

#include "daemon/journal/segment_names.h"

namespace yoke::journal::testing {

std::string payload_for(std::uint64_t position, std::size_t max_bytes) {
  const std::size_t length = max_bytes == 0 ? 0 : (position * 2654435761u) % (max_bytes + 1);
  std::string payload(length, '\0');
  for (std::size_t i = 0; i < length; ++i) {
    payload[i] = static_cast<char>((position * 31 + i * 7) & 0xFF);
  }
  return payload;
}

void append_range(Journal& journal, std::uint64_t first, std::uint64_t last,
                  std::size_t max_bytes) {
  for (std::uint64_t position = first; position <= last; ++position) {
    journal.append(position, payload_for(position, max_bytes));
  }
  journal.sync();
}

Records read_all(const std::filesystem::path& dir) {
  Records records;
  Reader reader = Reader::from_start(dir);
  while (auto record = reader.next()) records.emplace_back(record->position, record->payload);
  return records;
}

Records expected_range(std::uint64_t first, std::uint64_t last, std::size_t max_bytes) {
  Records records;
  for (std::uint64_t position = first; position <= last; ++position) {
    records.emplace_back(position, payload_for(position, max_bytes));
  }
  return records;
}

std::string read_file(const std::filesystem::path& file) {
  std::ifstream in(file, std::ios::binary);
  if (!in) throw std::runtime_error("cannot read " + file.string());
  return std::string(std::istreambuf_iterator<char>(in), std::istreambuf_iterator<char>());
}

void write_file(const std::filesystem::path& file, std::string_view bytes) {
  std::ofstream out(file, std::ios::binary | std::ios::trunc);
  out.write(bytes.data(), static_cast<std::streamsize>(bytes.size()));
  if (!out) throw std::runtime_error("cannot write " + file.string());
}

void flip_bit(const std::filesystem::path& file, std::uint64_t offset, int bit) {
  std::fstream io(file, std::ios::binary | std::ios::in | std::ios::out);
  char byte = 0;
  io.seekg(static_cast<std::streamoff>(offset));
  io.get(byte);
  byte = static_cast<char>(byte ^ (1 << bit));
  io.seekp(static_cast<std::streamoff>(offset));
  io.put(byte);
  if (!io) throw std::runtime_error("cannot flip a bit of " + file.string());
}

std::vector<std::filesystem::path> segment_files(const std::filesystem::path& dir) {
  std::vector<std::filesystem::path> files;
  for (const std::uint64_t first : list_segments(dir)) files.push_back(segment_path(dir, first));
  return files;
}

void copy_directory(const std::filesystem::path& from, const std::filesystem::path& to) {
  std::filesystem::create_directories(to);
  for (const auto& entry : std::filesystem::directory_iterator(from)) {
    std::filesystem::copy_file(entry.path(), to / entry.path().filename());
  }
}

Options small_segments(std::uint64_t segment_bytes, Durability durability) {
  Options options;
  options.segment_bytes = segment_bytes;
  options.durability = durability;
  return options;
}

}  // namespace yoke::journal::testing
