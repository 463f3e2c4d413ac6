#include "config_names.h"

namespace yoke::daemon {

const char* durability_name(journal::Durability durability) {
  switch (durability) {
    case journal::Durability::every_batch: return "every-batch";
    case journal::Durability::group: return "group";
    case journal::Durability::none: return "none";
  }
  return "group";
}

std::optional<journal::Durability> parse_durability(std::string_view name) {
  if (name == "every-batch") return journal::Durability::every_batch;
  if (name == "group") return journal::Durability::group;
  if (name == "none") return journal::Durability::none;
  return std::nullopt;
}

std::optional<Mode> parse_mode_name(std::string_view name) {
  for (const Mode mode : {Mode::max_weight, Mode::max_cardinality, Mode::perfect}) {
    if (name == mode_name(mode)) return mode;
  }
  return std::nullopt;
}

}  // namespace yoke::daemon
