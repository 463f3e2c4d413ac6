// Strict reading of one TOML table: every key must be one the caller asks for, with the
// expected type and range, or the read fails naming the key and its line. A typo in a config
// file must stop the daemon, not be ignored.
#pragma once

#include <cstdint>
#include <initializer_list>
#include <optional>
#include <set>
#include <string>
#include <string_view>
#include <vector>

#include <toml++/toml.h>

namespace yoke::daemon {

class TomlTableReader {
 public:
  // `path` is the table's dotted name ("" for the root); `source` names the file in messages.
  TomlTableReader(const toml::table& table, std::string path, std::string source);

  // Each reads `key` when present, leaving `out` alone when it is absent.
  void read(std::string_view key, std::uint64_t min, std::uint64_t max, std::uint64_t& out);
  void read(std::string_view key, std::int64_t min, std::int64_t max, std::int64_t& out);
  void read(std::string_view key, std::uint32_t min, std::uint32_t max, std::uint32_t& out);
  std::optional<std::string> read_string(std::string_view key);
  // An array whose items are all strings (an empty array is fine).
  std::optional<std::vector<std::string>> read_string_list(std::string_view key);
  // A sub-table; nothing when absent.
  std::optional<TomlTableReader> read_table(std::string_view key);
  // Every entry of a table whose keys are names chosen by the user (must all be tables).
  std::vector<std::pair<std::string, TomlTableReader>> read_named_tables();

  // Throws for the first key no read asked for.
  void finish() const;

  // Of `keys`, the one given in this table on the latest line; "" (the table itself) when the
  // table gives none of them. For a refusal of keys that are each in range but not together:
  // reading top down, the last of them is the one that broke the rule.
  std::string_view last_given(std::initializer_list<std::string_view> keys) const;
  bool given(std::string_view key) const { return table_->get(key) != nullptr; }

  // "source:line: message" for `key` (or for the table itself when key is empty).
  [[noreturn]] void fail(std::string_view key, const std::string& message) const;
  std::string dotted(std::string_view key) const;

 private:
  const toml::node* find(std::string_view key);
  std::int64_t integer(std::string_view key, const toml::node& node, std::int64_t min,
                       std::int64_t max) const;

  const toml::table* table_;
  std::string path_;
  std::string source_;
  std::set<std::string, std::less<>> seen_;
};

}  // namespace yoke::daemon
