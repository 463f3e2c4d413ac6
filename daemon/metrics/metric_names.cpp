#include "metric_names.h"

#include <stdexcept>

namespace yoke::daemon::metrics {
namespace {

bool is_letter_or_underscore(char c) {
  return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || c == '_';
}

bool is_digit(char c) { return c >= '0' && c <= '9'; }

}  // namespace

bool is_metric_name(std::string_view name) {
  if (name.empty()) return false;
  if (!is_letter_or_underscore(name[0]) && name[0] != ':') return false;
  for (const char c : name) {
    if (!is_letter_or_underscore(c) && !is_digit(c) && c != ':') return false;
  }
  return true;
}

bool is_label_name(std::string_view name) {
  if (name.empty() || !is_letter_or_underscore(name[0]) || name.starts_with("__")) return false;
  for (const char c : name) {
    if (!is_letter_or_underscore(c) && !is_digit(c)) return false;
  }
  return true;
}

void require_metric_name(std::string_view name) {
  if (!is_metric_name(name)) {
    throw std::invalid_argument("metrics: bad metric name \"" + std::string(name) + "\"");
  }
}

void require_label_names(std::string_view metric, const Labels& labels) {
  for (const auto& [name, value] : labels) {
    if (!is_label_name(name)) {
      throw std::invalid_argument("metrics: bad label name \"" + name + "\" on " +
                                  std::string(metric));
    }
  }
}

}  // namespace yoke::daemon::metrics
