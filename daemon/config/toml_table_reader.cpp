#include "toml_table_reader.h"

#include <algorithm>

#include "config_error.h"

namespace yoke::daemon {
namespace {

const char* type_name(toml::node_type type) {
  switch (type) {
    case toml::node_type::table: return "a table";
    case toml::node_type::array: return "an array";
    case toml::node_type::string: return "a string";
    case toml::node_type::integer: return "an integer";
    case toml::node_type::floating_point: return "a floating-point number";
    case toml::node_type::boolean: return "a boolean";
    case toml::node_type::date: return "a date";
    case toml::node_type::time: return "a time";
    case toml::node_type::date_time: return "a date-time";
    default: return "nothing";
  }
}

}  // namespace

TomlTableReader::TomlTableReader(const toml::table& table, std::string path, std::string source)
    : table_(&table), path_(std::move(path)), source_(std::move(source)) {}

std::string TomlTableReader::dotted(std::string_view key) const {
  if (path_.empty()) return std::string(key);
  if (key.empty()) return path_;
  return path_ + "." + std::string(key);
}

void TomlTableReader::fail(std::string_view key, const std::string& message) const {
  const toml::node* node = key.empty() ? table_ : table_->get(key);
  std::string where = source_;
  if (node != nullptr && node->source().begin.line != 0) {
    where += ":" + std::to_string(node->source().begin.line);
  }
  throw ConfigError(where + ": '" + dotted(key) + "' " + message);
}

const toml::node* TomlTableReader::find(std::string_view key) {
  seen_.emplace(key);
  return table_->get(key);
}

std::int64_t TomlTableReader::integer(std::string_view key, const toml::node& node,
                                      std::int64_t min, std::int64_t max) const {
  const auto* value = node.as_integer();
  if (value == nullptr) {
    fail(key, std::string("must be an integer, not ") + type_name(node.type()));
  }
  const std::int64_t number = value->get();
  if (number < min || number > max) {
    fail(key, "is " + std::to_string(number) + ", out of range " + std::to_string(min) + ".." +
                  std::to_string(max));
  }
  return number;
}

void TomlTableReader::read(std::string_view key, std::uint64_t min, std::uint64_t max,
                           std::uint64_t& out) {
  // TOML integers are signed 64-bit, so no setting can ask for more than INT64_MAX.
  const std::uint64_t top = std::min<std::uint64_t>(max, INT64_MAX);
  if (const toml::node* node = find(key)) {
    out = static_cast<std::uint64_t>(integer(key, *node, static_cast<std::int64_t>(min),
                                             static_cast<std::int64_t>(top)));
  }
}

void TomlTableReader::read(std::string_view key, std::int64_t min, std::int64_t max,
                           std::int64_t& out) {
  if (const toml::node* node = find(key)) out = integer(key, *node, min, max);
}

void TomlTableReader::read(std::string_view key, std::uint32_t min, std::uint32_t max,
                           std::uint32_t& out) {
  if (const toml::node* node = find(key)) {
    out = static_cast<std::uint32_t>(integer(key, *node, min, max));
  }
}

std::optional<std::string> TomlTableReader::read_string(std::string_view key) {
  const toml::node* node = find(key);
  if (node == nullptr) return std::nullopt;
  const auto* value = node->as_string();
  if (value == nullptr) fail(key, std::string("must be a string, not ") + type_name(node->type()));
  return value->get();
}

std::optional<std::vector<std::string>> TomlTableReader::read_string_list(std::string_view key) {
  const toml::node* node = find(key);
  if (node == nullptr) return std::nullopt;
  const auto* array = node->as_array();
  if (array == nullptr) {
    fail(key, std::string("must be an array of strings, not ") + type_name(node->type()));
  }
  std::vector<std::string> items;
  for (const toml::node& item : *array) {
    const auto* value = item.as_string();
    if (value == nullptr) {
      fail(key, "must be an array of strings, but item " + std::to_string(items.size() + 1) +
                    " is " + type_name(item.type()));
    }
    items.push_back(value->get());
  }
  return items;
}

std::optional<TomlTableReader> TomlTableReader::read_table(std::string_view key) {
  const toml::node* node = find(key);
  if (node == nullptr) return std::nullopt;
  const auto* table = node->as_table();
  if (table == nullptr) fail(key, std::string("must be a table, not ") + type_name(node->type()));
  return TomlTableReader(*table, dotted(key), source_);
}

std::vector<std::pair<std::string, TomlTableReader>> TomlTableReader::read_named_tables() {
  std::vector<std::pair<std::string, TomlTableReader>> tables;
  for (const auto& [key, node] : *table_) {
    const std::string name(key.str());
    if (auto table = read_table(name)) tables.emplace_back(name, std::move(*table));
  }
  return tables;
}

std::string_view TomlTableReader::last_given(std::initializer_list<std::string_view> keys) const {
  std::string_view last;
  std::uint32_t last_line = 0;
  for (std::string_view key : keys) {
    const toml::node* node = table_->get(key);
    if (node != nullptr && node->source().begin.line >= last_line) {
      last = key;
      last_line = node->source().begin.line;
    }
  }
  return last;
}

void TomlTableReader::finish() const {
  // The table is sorted by key; report the unknown key that comes first in the file.
  const toml::key* first = nullptr;
  for (const auto& [key, node] : *table_) {
    if (seen_.find(key.str()) != seen_.end()) continue;
    if (first == nullptr || key.source().begin.line < first->source().begin.line) first = &key;
  }
  if (first == nullptr) return;
  std::string where = source_;
  if (first->source().begin.line != 0) where += ":" + std::to_string(first->source().begin.line);
  throw ConfigError(where + ": unknown key '" + dotted(first->str()) + "'");
}

}  // namespace yoke::daemon
