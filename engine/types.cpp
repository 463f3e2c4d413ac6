#include "types.h"

namespace yoke {

const char* mode_name(Mode mode) {
  switch (mode) {
    case Mode::max_weight: return "max-weight";
    case Mode::max_cardinality: return "max-cardinality";
    case Mode::perfect: return "perfect";
  }
  return "unknown";
}

Mode parse_mode(const std::string& text) {
  if (text == "max-weight") return Mode::max_weight;
  if (text == "max-cardinality") return Mode::max_cardinality;
  if (text == "perfect") return Mode::perfect;
  throw InputError("unknown mode '" + text + "' (expected max-weight, max-cardinality or perfect)");
}

}  // namespace yoke
